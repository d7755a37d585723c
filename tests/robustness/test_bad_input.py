"""A catalogue of bad inputs, each with its exact outcome.

For every case the command line must answer exit status 2 with exactly one line on stderr,
``Error: `` followed by the file, the key (or the file's line), the value and what was
expected; no traceback; and no output (nothing on stdout for ``screen --json``, no file for
``map --out`` and ``report --out``). The messages are the reader's own words, so a case
fails if a message loses the key, the value or the expectation.

The commands run in this process (``siteexposure.cli.app.main``); a few run in a real
subprocess to show that no traceback reaches a terminal. The site is the invented deck of
``sitegen`` (three antennas on the far-field model, one pattern file).
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
import sitegen

NAN, INF = float("nan"), float("inf")
DEL = object()  # the key is deleted

# (id, key path in the document, new value or DEL, the message after "Error: <site file>: ";
# a message ending in "..." is compared up to there; {folder} is the site file's folder)
SITE_KEY_CASES = [
    ('site.name-missing', ('site', 'name'), DEL,
     'site > name: required key is missing; expected site name for reports'),
    ('site.name-wrong-type', ('site', 'name'), 5,
     'site > name = 5: expected a text string in quotes'),
    ('site.name-empty', ('site', 'name'), '',
     'site > name = "": expected a non-empty text'),
    ('site.origin-missing', ('site', 'origin'), DEL,
     'site > origin: required key is missing; expected WGS84 origin of the local east/north frame, e.g. { lat = 44.98, lon = -93.27 }'),
    ('site.origin-wrong-type', ('site', 'origin'), '40,-100',
     'site > origin = "40,-100": expected a table { ... }'),
    ('site.origin.lat-missing', ('site', 'origin', 'lat'), DEL,
     'site > origin > lat: required key is missing; expected WGS84 latitude of the origin [deg]'),
    ('site.origin.lat-wrong-type', ('site', 'origin', 'lat'), '40',
     'site > origin > lat = "40": expected a number'),
    ('site.origin.lat-nan', ('site', 'origin', 'lat'), NAN,
     'site > origin > lat = nan: expected a finite number (nan and inf are not allowed)'),
    ('site.origin.lat-above-90', ('site', 'origin', 'lat'), 91.0,
     'site > origin > lat = 91.0: expected a number <= 90'),
    ('site.origin.lon-missing', ('site', 'origin', 'lon'), DEL,
     'site > origin > lon: required key is missing; expected WGS84 longitude of the origin [deg]'),
    ('site.origin.lon-inf', ('site', 'origin', 'lon'), INF,
     'site > origin > lon = inf: expected a finite number (nan and inf are not allowed)'),
    ('site.origin.lon-below-180', ('site', 'origin', 'lon'), -181.0,
     'site > origin > lon = -181.0: expected a number >= -180'),
    ('site.origin.lon-bool', ('site', 'origin', 'lon'), True,
     'site > origin > lon = true: expected a number'),
    ('site.limits-missing', ('site', 'limits'), DEL,
     'site > limits: required key is missing; expected limit-set ids to evaluate side by side, e.g. ["fcc-1310", "icnirp-2020"]'),
    ('site.limits-not-a-list', ('site', 'limits'), 'fcc-1310',
     'site > limits = "fcc-1310": expected a list [ ... ]'),
    ('site.limits-empty', ('site', 'limits'), [],
     'site > limits = []: expected at least 1 item'),
    ('site.limits-unknown-set', ('site', 'limits'), ['fcc'],
     'site > limits #1 = "fcc": unknown limit-set id; expected one of fcc-1310, hc-sc6-2015, icnirp-1998, icnirp-2020, ieee-c95.1-2019'),
    ('site.limits-number', ('site', 'limits'), [1310],
     'site > limits #1 = 1310: expected a text string in quotes'),
    ('site.averaging-not-a-table', ('site', 'averaging'), 'peak',
     'site > averaging = "peak": expected a table { ... }'),
    ('site.averaging.method-unknown-word', ('site', 'averaging', 'method'), 'mean',
     'site > averaging > method = "mean": expected one of "vertical-line" or "peak"'),
    ('site.averaging.method-number', ('site', 'averaging', 'method'), 1,
     'site > averaging > method = 1: expected one of "vertical-line" or "peak"'),
    ('site.averaging.bottom_m-negative', ('site', 'averaging', 'bottom_m'), -1.0,
     'site > averaging > bottom_m = -1.0: expected a number >= 0'),
    ('site.averaging.bottom_m-nan', ('site', 'averaging', 'bottom_m'), NAN,
     'site > averaging > bottom_m = nan: expected a finite number (nan and inf are not allowed)'),
    ('site.averaging.bottom_m-text', ('site', 'averaging', 'bottom_m'), '0',
     'site > averaging > bottom_m = "0": expected a number'),
    ('site.averaging.top_m-zero', ('site', 'averaging', 'top_m'), 0.0,
     'site > averaging > top_m = 0.0: expected a number greater than 0'),
    ('site.averaging.top_m-minus-inf', ('site', 'averaging', 'top_m'), -INF,
     'site > averaging > top_m = -inf: expected a finite number (nan and inf are not allowed)'),
    ('site.averaging.top_m-above-100', ('site', 'averaging', 'top_m'), 500.0,
     'site > averaging > top_m = 500.0: expected a number <= 100'),
    ('site.averaging.points-zero', ('site', 'averaging', 'points'), 0,
     'site > averaging > points = 0: expected a number >= 1'),
    ('site.averaging.points-fraction', ('site', 'averaging', 'points'), 2.5,
     'site > averaging > points = 2.5: expected a whole number'),
    ('site.averaging.points-above-1000', ('site', 'averaging', 'points'), 1001,
     'site > averaging > points = 1001: expected a number <= 1000'),
    ('site.averaging.points-one-for-line', ('site', 'averaging', 'points'), 1,
     'site > averaging > points = 1: expected at least 2 points for method "vertical-line"'),
    ('site.averaging.points-text', ('site', 'averaging', 'points'), '10',
     'site > averaging > points = "10": expected a whole number'),
    ('site.resolution_m-zero', ('site', 'resolution_m'), 0.0,
     'site > resolution_m = 0.0: expected a number greater than 0'),
    ('site.resolution_m-negative', ('site', 'resolution_m'), -1.0,
     'site > resolution_m = -1.0: expected a number greater than 0'),
    ('site.resolution_m-nan', ('site', 'resolution_m'), NAN,
     'site > resolution_m = nan: expected a finite number (nan and inf are not allowed)'),
    ('site.resolution_m-above-100', ('site', 'resolution_m'), 1000.0,
     'site > resolution_m = 1000.0: expected a number <= 100'),
    ('site.resolution_m-text', ('site', 'resolution_m'), '1 m',
     'site > resolution_m = "1 m": expected a number'),
    ('site.zone_levels-not-a-list', ('site', 'zone_levels'), 0.5,
     'site > zone_levels = 0.5: expected a list [ ... ]'),
    ('site.zone_levels-zero', ('site', 'zone_levels'), [0.0],
     'site > zone_levels #1 = 0.0: expected a number greater than 0'),
    ('site.zone_levels-negative', ('site', 'zone_levels'), [-1.0],
     'site > zone_levels #1 = -1.0: expected a number greater than 0'),
    ('site.zone_levels-inf', ('site', 'zone_levels'), [INF],
     'site > zone_levels #1 = inf: expected a finite number (nan and inf are not allowed)'),
    ('site.zone_levels-text', ('site', 'zone_levels'), ['half'],
     'site > zone_levels #1 = "half": expected a number'),
    ('site.reflection_factor-below-1', ('site', 'reflection_factor'), 0.5,
     'site > reflection_factor = 0.5: expected a number >= 1'),
    ('site.reflection_factor-above-4', ('site', 'reflection_factor'), 5.0,
     'site > reflection_factor = 5.0: expected a number <= 4'),
    ('site.reflection_factor-nan', ('site', 'reflection_factor'), NAN,
     'site > reflection_factor = nan: expected a finite number (nan and inf are not allowed)'),
    ('site.address-number', ('site', 'address'), 12,
     'site > address = 12: expected a text string in quotes'),
    ('site.preparer-list', ('site', 'preparer'), ['a', 'b'],
     'site > preparer = ["a", "b"]: expected a text string in quotes'),
    ('site.unknown-key', ('site', 'colour'), 'red',
     'site > colour: unknown key; allowed keys here: name, origin, limits, averaging, resolution_m, address, preparer, zone_levels, reflection_factor'),
    ('site.misspelt-key', ('site', 'resolution'), 1.0,
     "site > resolution: unknown key (did you mean 'resolution_m'?); allowed keys here: name, origin, limits, averaging, resol..."),
    ('area.name-missing', ('area', 0, 'name'), DEL,
     'area #1 > name: required key is missing; expected area name, unique in the file'),
    ('area.name-number', ('area', 0, 'name'), 3,
     'area #1 > name = 3: expected a text string in quotes'),
    ('area.access-missing', ('area', 0, 'access'), DEL,
     'area "Deck" > access: required key is missing; expected who can stand here: public | worker | none'),
    ('area.access-unknown-word', ('area', 0, 'access'), 'everyone',
     'area "Deck" > access = "everyone": expected one of "public", "worker" or "none"'),
    ('area.access-bool', ('area', 0, 'access'), True,
     'area "Deck" > access = true: expected one of "public", "worker" or "none"'),
    ('area.floor_m-missing', ('area', 0, 'floor_m'), DEL,
     'area "Deck" > floor_m: required key is missing; expected standing surface height above site ground [m]'),
    ('area.floor_m-text', ('area', 0, 'floor_m'), '0',
     'area "Deck" > floor_m = "0": expected a number'),
    ('area.floor_m-nan', ('area', 0, 'floor_m'), NAN,
     'area "Deck" > floor_m = nan: expected a finite number (nan and inf are not allowed)'),
    ('area.floor_m-beyond-10km', ('area', 0, 'floor_m'), 1000000.0,
     'area "Deck" > floor_m = 1000000.0: expected a number <= 10000'),
    ('area.outline-missing', ('area', 0, 'outline'), DEL,
     'area "Deck": neither of outline and outline_lonlat given; expected exactly one of them'),
    ('area.outline-two-vertices', ('area', 0, 'outline'), [[0, 0], [1, 1]],
     'area "Deck" > outline = [[0, 0], [1, 1]]: expected at least 3 items'),
    ('area.outline-collinear', ('area', 0, 'outline'), [[0, 0], [1, 1], [2, 2]],
     'area "Deck" > outline = [[0.0, 0.0], [1.0, 1.0], [2.0, 2.0]]: the polygon has no area (0 m^2); expected vertices that en...'),
    ('area.outline-self-intersecting', ('area', 0, 'outline'), [[0, 0], [1, 1], [1, 0], [0, 1]],
     'area "Deck" > outline = [[0.0, 0.0], [1.0, 1.0], [1.0, 0.0], [0.0, 1.0]]: the polygon crosses itself (Self-intersection[...'),
    ('area.outline-one-point-repeated', ('area', 0, 'outline'), [[0, 0], [0, 0], [0, 0]],
     'area "Deck" > outline = [[0.0, 0.0], [0.0, 0.0], [0.0, 0.0]]: expected at least 3 distinct vertices'),
    ('area.outline-vertex-of-three', ('area', 0, 'outline'), [[0, 0], [1, 0, 0], [1, 1]],
     'area "Deck" > outline #2 = [1, 0, 0]: expected at most 2 items'),
    ('area.outline-vertex-text', ('area', 0, 'outline'), [[0, 0], [1, 'a'], [1, 1]],
     'area "Deck" > outline #2 > north = "a": expected a number'),
    ('area.outline-vertex-nan', ('area', 0, 'outline'), [[0, 0], [1, NAN], [1, 1]],
     'area "Deck" > outline #2 > north = nan: expected a finite number (nan and inf are not allowed)'),
    ('area.outline-vertex-beyond-10km', ('area', 0, 'outline'), [[0, 0], [20000, 0], [1, 1]],
     'area "Deck" > outline #2 > east = 20000: expected a number <= 10000'),
    ('area.outline-text', ('area', 0, 'outline'), 'square',
     'area "Deck" > outline = "square": expected a list [ ... ]'),
    ('area.outline-and-outline_lonlat', ('area', 0, 'outline_lonlat'), [[-100, 40], [-100, 40.001], [-99.999, 40]],
     'area "Deck": both of outline and outline_lonlat given; expected exactly one of them'),
    ('area.outline_lonlat-lat-lon-swapped', ('area', 1, 'outline_lonlat'), [[40, -100], [40.0001, -100], [40, -99.9999]],
     'area "Plant" > outline_lonlat #1 > lat = -100.0: expected a latitude from -90 to 90 degrees ([lon, lat] order)'),
    ('area.outline_lonlat-lat-above-90', ('area', 1, 'outline_lonlat'), [[-100, 95], [-100, 40.001], [-99.999, 40]],
     'area "Plant" > outline_lonlat #1 > lat = 95.0: expected a latitude from -90 to 90 degrees ([lon, lat] order)'),
    ('area.outline_lonlat-vertex-far-away', ('area', 1, 'outline_lonlat'), [[-100.5, 40], [-100, 40.001], [-99.999, 40]],
     'area "Plant" > outline_lonlat #1 = [-100.5, 40.0]: this vertex is 42.7 km from the site origin; expected [lon, lat] pair...'),
    ('area.outline_lonlat-one-point-repeated', ('area', 1, 'outline_lonlat'), [[-100, 40], [-100, 40], [-100, 40]],
     'area "Plant" > outline_lonlat = [[-100.0, 40.0], [-100.0, 40.0], [-100.0, 40.0]]: expected at least 3 distinct vertices'),
    ('point.name-missing', ('point', 0, 'name'), DEL,
     'point #1 > name: required key is missing; expected receptor name, unique in the file'),
    ('point.at-missing', ('point', 0, 'at'), DEL,
     'point "Window" > at: required key is missing; expected [east, north, height above site ground] [m]'),
    ('point.at-two-numbers', ('point', 0, 'at'), [1.0, 2.0],
     'point "Window" > at = [1.0, 2.0]: expected at least 3 items'),
    ('point.at-inf', ('point', 0, 'at'), [1.0, 2.0, INF],
     'point "Window" > at > height = inf: expected a finite number (nan and inf are not allowed)'),
    ('point.at-text', ('point', 0, 'at'), [1.0, '2', 3.0],
     'point "Window" > at > north = "2": expected a number'),
    ('point.at-beyond-10km', ('point', 0, 'at'), [1.0, 2.0, -20000.0],
     'point "Window" > at > height = -20000.0: expected a number >= -10000'),
    ('point.access-unknown-word', ('point', 0, 'access'), 'visitors',
     'point "Window" > access = "visitors": expected one of "public", "worker" or "none"'),
    ('antenna.id-missing', ('antenna', 0, 'id'), DEL,
     'antenna #1 > id: required key is missing; expected antenna id, unique in the file'),
    ('antenna.id-number', ('antenna', 0, 'id'), 1,
     'antenna #1 > id = 1: expected a text string in quotes'),
    ('antenna.operator-missing', ('antenna', 0, 'operator'), DEL,
     'antenna "T1" > operator: required key is missing; expected tenant, for apportioning contributions'),
    ('antenna.operator-empty', ('antenna', 0, 'operator'), '',
     'antenna "T1" > operator = "": expected a non-empty text'),
    ('antenna.position-missing', ('antenna', 0, 'position'), DEL,
     'antenna "T1" > position: required key is missing; expected [east, north, height] of the radiation centre above site ground [m]'),
    ('antenna.position-two-numbers', ('antenna', 0, 'position'), [0.0, 0.0],
     'antenna "T1" > position = [0.0, 0.0]: expected at least 3 items'),
    ('antenna.position-nan', ('antenna', 0, 'position'), [0.0, NAN, 12.0],
     'antenna "T1" > position > north = nan: expected a finite number (nan and inf are not allowed)'),
    ('antenna.position-beyond-10km', ('antenna', 0, 'position'), [0.0, 0.0, 100000.0],
     'antenna "T1" > position > height = 100000.0: expected a number <= 10000'),
    ('antenna.position-text', ('antenna', 0, 'position'), '0,0,12',
     'antenna "T1" > position = "0,0,12": expected a list [ ... ]'),
    ('antenna.position-inside-floor', ('antenna', 0, 'position'), [0.0, 0.0, 0.0],
     'antenna "T1" > position = [0.0, 0.0, 0.0]: the radiation centre lies in the floor of area "Deck" (floor_m = 0); expected...'),
    ('antenna.azimuth_deg-text', ('antenna', 0, 'azimuth_deg'), 'north',
     'antenna "T1" > azimuth_deg = "north": expected a number'),
    ('antenna.azimuth_deg-above-360', ('antenna', 0, 'azimuth_deg'), 361.0,
     'antenna "T1" > azimuth_deg = 361.0: expected a number <= 360'),
    ('antenna.azimuth_deg-nan', ('antenna', 0, 'azimuth_deg'), NAN,
     'antenna "T1" > azimuth_deg = nan: expected a finite number (nan and inf are not allowed)'),
    ('antenna.mechanical_tilt_deg-above-90', ('antenna', 0, 'mechanical_tilt_deg'), 91.0,
     'antenna "T1" > mechanical_tilt_deg = 91.0: expected a number <= 90'),
    ('antenna.mechanical_tilt_deg-text', ('antenna', 0, 'mechanical_tilt_deg'), 'down',
     'antenna "T1" > mechanical_tilt_deg = "down": expected a number'),
    ('antenna.electrical_tilt_deg-below-90', ('antenna', 1, 'electrical_tilt_deg'), -91.0,
     'antenna "P2" > electrical_tilt_deg = -91.0: expected a number >= -90'),
    ('antenna.electrical_tilt_deg-beyond-model', ('antenna', 1, 'electrical_tilt_deg'), 60.0,
     'antenna "P2" > pattern: key \'electrical_tilt_deg\' = 60.0; expected a downtilt in degrees within -45..45'),
    ('antenna.electrical_tilt_deg-untiltable-model', ('antenna', 0, 'electrical_tilt_deg'), 3.0,
     'antenna "T1" > pattern: electrical_tilt_deg = 3.0 but model \'isotropic\' has no electrical tilt; expected 0 (use mechanical_tilt_deg to point it)'),
    ('antenna.frequency_mhz-missing', ('antenna', 0, 'frequency_mhz'), DEL,
     'antenna "T1" > frequency_mhz: required key is missing; expected carrier frequency [MHz]'),
    ('antenna.frequency_mhz-zero', ('antenna', 0, 'frequency_mhz'), 0.0,
     'antenna "T1" > frequency_mhz = 0.0: expected a number greater than 0'),
    ('antenna.frequency_mhz-negative', ('antenna', 0, 'frequency_mhz'), -5.0,
     'antenna "T1" > frequency_mhz = -5.0: expected a number greater than 0'),
    ('antenna.frequency_mhz-outside-limit-table', ('antenna', 0, 'frequency_mhz'), 1000000.0,
     'antenna "T1" > frequency_mhz = 1000000.0: outside limit set "fcc-1310" (general), which covers 0.3 to 100000 MHz; expect...'),
    ('antenna.frequency_mhz-inf', ('antenna', 0, 'frequency_mhz'), INF,
     'antenna "T1" > frequency_mhz = inf: expected a finite number (nan and inf are not allowed)'),
    ('antenna.frequency_mhz-text', ('antenna', 0, 'frequency_mhz'), '1950',
     'antenna "T1" > frequency_mhz = "1950": expected a number'),
    ('antenna.tx_power_w-missing', ('antenna', 0, 'tx_power_w'), DEL,
     'antenna "T1": neither of tx_power_w and tx_power_dbm given; expected exactly one of them'),
    ('antenna.tx_power_w-zero', ('antenna', 0, 'tx_power_w'), 0.0,
     'antenna "T1" > tx_power_w = 0.0: expected a number greater than 0'),
    ('antenna.tx_power_w-negative', ('antenna', 0, 'tx_power_w'), -20.0,
     'antenna "T1" > tx_power_w = -20.0: expected a number greater than 0'),
    ('antenna.tx_power_w-above-10MW', ('antenna', 0, 'tx_power_w'), 100000000.0,
     'antenna "T1" > tx_power_w = 100000000.0: expected a number <= 1e+07'),
    ('antenna.tx_power_w-nan', ('antenna', 0, 'tx_power_w'), NAN,
     'antenna "T1" > tx_power_w = nan: expected a finite number (nan and inf are not allowed)'),
    ('antenna.tx_power_w-text', ('antenna', 0, 'tx_power_w'), '20 W',
     'antenna "T1" > tx_power_w = "20 W": expected a number'),
    ('antenna.tx_power_dbm-with-tx_power_w', ('antenna', 0, 'tx_power_dbm'), 43.0,
     'antenna "T1": both of tx_power_w and tx_power_dbm given; expected exactly one of them'),
    ('antenna.tx_power_dbm-above-100', ('antenna', 1, 'tx_power_dbm'), 101.0,
     'antenna "P2" > tx_power_dbm = 101.0: expected a number <= 100'),
    ('antenna.tx_power_dbm-below-minus-100', ('antenna', 1, 'tx_power_dbm'), -101.0,
     'antenna "P2" > tx_power_dbm = -101.0: expected a number >= -100'),
    ('antenna.tx_power_dbm-minus-inf', ('antenna', 1, 'tx_power_dbm'), -INF,
     'antenna "P2" > tx_power_dbm = -inf: expected a finite number (nan and inf are not allowed)'),
    ('antenna.carriers-zero', ('antenna', 0, 'carriers'), 0,
     'antenna "T1" > carriers = 0: expected a number >= 1'),
    ('antenna.carriers-fraction', ('antenna', 0, 'carriers'), 1.5,
     'antenna "T1" > carriers = 1.5: expected a whole number'),
    ('antenna.carriers-above-10000', ('antenna', 0, 'carriers'), 10001,
     'antenna "T1" > carriers = 10001: expected a number <= 10000'),
    ('antenna.carriers-text', ('antenna', 0, 'carriers'), '2',
     'antenna "T1" > carriers = "2": expected a whole number'),
    ('antenna.line_loss_db-negative', ('antenna', 0, 'line_loss_db'), -1.0,
     'antenna "T1" > line_loss_db = -1.0: expected a number >= 0'),
    ('antenna.line_loss_db-above-60', ('antenna', 0, 'line_loss_db'), 61.0,
     'antenna "T1" > line_loss_db = 61.0: expected a number <= 60'),
    ('antenna.line_loss_db-nan', ('antenna', 0, 'line_loss_db'), NAN,
     'antenna "T1" > line_loss_db = nan: expected a finite number (nan and inf are not allowed)'),
    ('antenna.activity-zero', ('antenna', 0, 'activity'), 0.0,
     'antenna "T1" > activity = 0.0: expected a number greater than 0'),
    ('antenna.activity-above-1', ('antenna', 0, 'activity'), 1.5,
     'antenna "T1" > activity = 1.5: expected a number <= 1'),
    ('antenna.activity-inf', ('antenna', 0, 'activity'), INF,
     'antenna "T1" > activity = inf: expected a finite number (nan and inf are not allowed)'),
    ('antenna.activity-text', ('antenna', 0, 'activity'), 'full',
     'antenna "T1" > activity = "full": expected a number'),
    ('antenna.pattern-missing', ('antenna', 0, 'pattern'), DEL,
     'antenna "T1" > pattern: required key is missing'),
    ('antenna.pattern-number', ('antenna', 0, 'pattern'), 5,
     'antenna "T1" > pattern = 5: expected a pattern file path in quotes or an inline table { model = ..., ... }'),
    ('antenna.pattern-empty-text', ('antenna', 0, 'pattern'), '',
     'antenna "T1" > pattern = "": expected a pattern file path in quotes or an inline table { model = ..., ... }'),
    ('antenna.pattern-file-not-found', ('antenna', 0, 'pattern'), 'missing.csv',
     'antenna "T1" > pattern = "missing.csv": pattern file not found at {folder}/missing.csv; expected a pattern CSV v1 file (...'),
    ('antenna.pattern-folder', ('antenna', 0, 'pattern'), '.',
     'antenna "T1" > pattern = ".": {folder} is a folder; expected a pattern CSV v1 file (relative paths start at the site file\'s folder)'),
    ('antenna.pattern-no-model', ('antenna', 0, 'pattern'), {'gain_dbi': 3.0},
     'antenna "T1" > pattern: key \'model\' is missing; expected one of isotropic, half-wave-dipole, 3gpp-panel, itu-f1336-omni, itu-f1336-sector, parabolic'),
    ('antenna.pattern-unknown-model', ('antenna', 0, 'pattern'), {'model': 'yagi'},
     'antenna "T1" > pattern: key \'model\' is \'yagi\'; expected one of isotropic, half-wave-dipole, 3gpp-panel, itu-f1336-omni, itu-f1336-sector, parabolic'),
    ('antenna.pattern-model-list', ('antenna', 0, 'pattern'), {'model': ['isotropic']},
     'antenna "T1" > pattern > model = ["isotropic"]: expected the name of a parametric model in quotes, e.g. "3gpp-panel"'),
    ('antenna.pattern.gain_dbi-above-70', ('antenna', 1, 'pattern', 'gain_dbi'), 99.0,
     'antenna "P2" > pattern: key \'gain_dbi\' = 99.0; expected a peak gain as a number within -30..70'),
    ('antenna.pattern.gain_dbi-nan', ('antenna', 1, 'pattern', 'gain_dbi'), NAN,
     'antenna "P2" > pattern > gain_dbi = nan: expected a finite number (nan and inf are not allowed)'),
    ('antenna.pattern.hpbw_h_deg-zero', ('antenna', 1, 'pattern', 'hpbw_h_deg'), 0.0,
     'antenna "P2" > pattern: key \'hpbw_h_deg\' = 0.0; expected an angle in degrees within (0, 360]'),
    ('antenna.pattern.hpbw_h_deg-missing', ('antenna', 1, 'pattern', 'hpbw_h_deg'), DEL,
     'antenna "P2" > pattern: model \'3gpp-panel\' needs key \'hpbw_h_deg\' (an angle in degrees); it is missing'),
    ('antenna.pattern.hpbw_v_deg-text', ('antenna', 1, 'pattern', 'hpbw_v_deg'), 'wide',
     'antenna "P2" > pattern: key \'hpbw_v_deg\' = \'wide\'; expected an angle in degrees within (0, 180]'),
    ('antenna.pattern-unknown-key', ('antenna', 1, 'pattern', 'beam'), 3.0,
     'antenna "P2" > pattern: key \'beam\' = 3.0 is not a key of model \'3gpp-panel\'; expected front_to_back_db, gain_dbd, gain_d...'),
    ('antenna.pattern-both-gains', ('antenna', 1, 'pattern', 'gain_dbd'), 12.0,
     'antenna "P2" > pattern: both \'gain_dbi\' = 15.0 and \'gain_dbd\' = 12.0 are given; expected exactly one of the two (dBi = dBd + 2.15)'),
    ('antenna.gain_dbi-above-70', ('antenna', 2, 'gain_dbi'), 99.0,
     'antenna "F3" > gain_dbi = 99.0: expected a number <= 70'),
    ('antenna.gain_dbd-with-gain_dbi', ('antenna', 2, 'gain_dbd'), 7.0,
     'antenna "F3": both gain_dbi and gain_dbd given; expected at most one of them'),
    ('antenna.gain_dbi-with-inline-pattern', ('antenna', 0, 'gain_dbi'), 3.0,
     'antenna "T1" > gain_dbi = 3.0: expected the gain inside the inline pattern table (pattern = { model = ..., gain_dbi = ... })'),
    ('antenna.aperture-text', ('antenna', 1, 'aperture'), '1.2 m',
     'antenna "P2" > aperture = "1.2 m": expected a table { ... }'),
    ('antenna.aperture.height_m-zero', ('antenna', 1, 'aperture', 'height_m'), 0.0,
     'antenna "P2" > aperture > height_m = 0.0: expected a number >= 0.001'),
    ('antenna.aperture.height_m-above-100', ('antenna', 1, 'aperture', 'height_m'), 1000.0,
     'antenna "P2" > aperture > height_m = 1000.0: expected a number <= 100'),
    ('antenna.aperture.width_m-nan', ('antenna', 1, 'aperture', 'width_m'), NAN,
     'antenna "P2" > aperture > width_m = nan: expected a finite number (nan and inf are not allowed)'),
    ('antenna.aperture.diameter_m-with-height', ('antenna', 1, 'aperture', 'diameter_m'), 1.0,
     'antenna "P2" > aperture: diameter_m given with height_m/width_m; expected { height_m, width_m, depth_m } (a box) or { diameter_m, depth_m } (a dish)'),
    ('antenna.aperture-unknown-key', ('antenna', 1, 'aperture', 'length_m'), 1.0,
     'antenna "P2" > aperture > length_m: unknown key (did you mean \'depth_m\'?); allowed keys here: height_m, width_m, depth_m, diameter_m, offset_m'),
    ('antenna.aperture-no-size', ('antenna', 1, 'aperture'), {'offset_m': [0.0, 0.0, 0.1]},
     'antenna "P2" > aperture: no size given; expected { height_m, width_m, depth_m } (a box) or { diameter_m } (a dish)'),
    ('antenna.aperture.depth_m-negative', ('antenna', 1, 'aperture', 'depth_m'), -0.2,
     'antenna "P2" > aperture > depth_m = -0.2: expected a number >= 0.001'),
    ('antenna.aperture.depth_m-nan', ('antenna', 1, 'aperture', 'depth_m'), NAN,
     'antenna "P2" > aperture > depth_m = nan: expected a finite number (nan and inf are not allowed)'),
    ('antenna.aperture.offset_m-two', ('antenna', 1, 'aperture', 'offset_m'), [0.0, 0.1],
     'antenna "P2" > aperture > offset_m = [0.0, 0.1]: expected at least 3 items'),
    ('antenna.aperture.offset_m-far', ('antenna', 1, 'aperture', 'offset_m'), [0.0, 0.0, 500.0],
     'antenna "P2" > aperture > offset_m #3 = 500.0: expected a number <= 100'),
    ('antenna.polarization-unknown', ('antenna', 0, 'polarization'), 'diagonal',
     'antenna "T1" > polarization = "diagonal": expected one of "vertical", "horizontal", "slant" or "circular"'),
    ('antenna.polarization-number', ('antenna', 0, 'polarization'), 45,
     'antenna "T1" > polarization = 45: expected one of "vertical", "horizontal", "slant" or "circular"'),
    ('antenna.ground_plane-text', ('antenna', 0, 'ground_plane'), 'yes',
     'antenna "T1" > ground_plane = "yes": expected true or false'),
    ('antenna.ground_plane-without-height', ('antenna', 0, 'ground_plane'), True,
     'antenna "T1" > ground_plane = true: a monopole on a ground plane needs the height of its body; expected aperture = { height_m = ... } on this antenna'),
    ('antenna.model-cylindrical-without-aperture', ('antenna', 0, 'model'), 'cylindrical',
     'antenna "T1" > model = "cylindrical": this model needs the aperture length; expected aperture = { height_m = ..., width_m = ... } on this antenna'),
    ('antenna.model-aperture-without-size', ('antenna', 0, 'model'), 'aperture',
     'antenna "T1" > model = "aperture": this model needs the aperture size; expected aperture = { diameter_m = ... } or { height_m = ..., width_m = ... }'),
    ('antenna.reflection_factor-zero', ('antenna', 0, 'reflection_factor'), 0.0,
     'antenna "T1" > reflection_factor = 0.0: expected a number >= 1'),
    ('antenna.reflection_factor-above-4', ('antenna', 0, 'reflection_factor'), 4.5,
     'antenna "T1" > reflection_factor = 4.5: expected a number <= 4'),
    ('antenna.reflection_factor-minus-inf', ('antenna', 0, 'reflection_factor'), -INF,
     'antenna "T1" > reflection_factor = -inf: expected a finite number (nan and inf are not allowed)'),
    ('antenna.reflection_factor-text', ('antenna', 0, 'reflection_factor'), '2.56',
     'antenna "T1" > reflection_factor = "2.56": expected a number'),
    ('antenna.misspelt-key', ('antenna', 0, 'azimuth'), 0.0,
     'antenna "T1" > azimuth: unknown key (did you mean \'azimuth_deg\'?); allowed keys here: id, operator, position, azimuth_de...'),
]


def _edit(doc: dict, path: tuple, value) -> None:
    target = doc
    for key in path[:-1]:
        target = target[key]
    if value is DEL:
        del target[path[-1]]
    else:
        target[path[-1]] = value


def _check_message(line: str, expected: str) -> None:
    if expected.endswith("..."):
        assert line.startswith(expected[:-3]), f"\n{line}\n{expected}"
    else:
        assert line == expected


@pytest.mark.parametrize(("path", "value", "message"), [c[1:] for c in SITE_KEY_CASES],
                         ids=[c[0] for c in SITE_KEY_CASES])
def test_bad_key_of_the_site_file(tmp_path, path, value, message):
    doc = sitegen.base_site()
    _edit(doc, path, value)
    site = sitegen.write_site(tmp_path, doc)
    run = sitegen.run_cli(["screen", site, "--json", "--no-progress"])
    line = sitegen.assert_one_line_error(run)
    assert run.stdout == ""
    _check_message(line, f"Error: {site}: " + message.replace("{folder}", str(tmp_path)))


def test_catalogue_covers_every_key_of_the_site_file():
    """Every key the site file knows has at least one case above (so a new key needs one)."""
    from siteexposure.readers.site_model import (
        AntennaTable,
        ApertureTable,
        AreaTable,
        AveragingTable,
        OriginTable,
        PointTable,
        SiteTable,
    )

    tables = {("site",): SiteTable, ("site", "origin"): OriginTable,
              ("site", "averaging"): AveragingTable, ("area",): AreaTable,
              ("point",): PointTable, ("antenna",): AntennaTable,
              ("antenna", "aperture"): ApertureTable}
    covered = {tuple(k for k in c[1] if not isinstance(k, int)) for c in SITE_KEY_CASES}
    missing = [(*prefix, key) for prefix, model in tables.items() for key in model.model_fields
               if (*prefix, key) not in covered]
    assert missing == []


def test_the_valid_site_itself_passes(tmp_path):
    """The catalogue's base is valid: every failure above comes from its one edit."""
    site = sitegen.write_site(tmp_path, sitegen.base_site())
    run = sitegen.run_cli(["screen", site, "--json", "--no-progress"])
    assert run.code == 0, run.stderr
    assert run.stdout.startswith("{")


# --------------------------------------------------------------------------------------
# broken pattern files (the F3 antenna's file); {pattern} is the file's path
# --------------------------------------------------------------------------------------

_GOOD = sitegen.pattern_text()
_LINES = _GOOD.splitlines()
_ROW = _LINES.index("cut,side,angle_deg,gain_dbi") + 1  # 0-based index of the first row


def _with_line(i: int, text: str) -> str:
    return "\n".join(text if j == i else line for j, line in enumerate(_LINES)) + "\n"


def _without(*starts: str) -> str:
    return "\n".join(line for line in _LINES if not line.startswith(starts)) + "\n"


_F3 = 'antenna "F3" > pattern: pattern file \'{pattern}\''
PATTERN_CASES = [
    ("duplicate-angle", _GOOD + "horizontal,,5.0,9.9\n",
     _F3 + ", line 153: horizontal angle 5 deg already given on line 8; expected each angle once"),
    ("gap-wider-than-15-deg",
     _without("horizontal,,20.0", "horizontal,,25.0", "horizontal,,30.0", "horizontal,,35.0"),
     _F3 + ", line 11: horizontal cut jumps from 15 deg (line 10) to 40 deg; expected steps of at "
     "most 15 deg"),
    ("gain-not-a-number", _with_line(_ROW + 3, "horizontal,,15.0,high"),
     _F3 + ", line 10: gain_dbi = 'high'; expected a finite gain in dBi within -150..80"),
    ("angle-not-a-number", _with_line(_ROW + 3, "horizontal,,fifteen,9.9"),
     _F3 + ", line 10: angle_deg = 'fifteen'; expected a finite number, an azimuth within 0..360 deg"),
    ("gain-nan", _with_line(_ROW + 3, "horizontal,,15.0,nan"),
     _F3 + ", line 10: gain_dbi = 'nan'; expected a finite gain in dBi within -150..80"),
    ("angle-out-of-range", _with_line(_ROW + 3, "horizontal,,400.0,9.9"),
     _F3 + ", line 10: angle_deg = 400.0 is out of range; expected an azimuth within 0..360 deg"),
    ("three-fields", _with_line(_ROW + 3, "horizontal,,15.0"),
     _F3 + ", line 10: row 'horizontal,,15.0' has 3 fields; expected 4 "
     "(cut,side,angle_deg,gain_dbi)"),
    ("field-too-long-for-csv", _GOOD + "horizontal,," + "1" * 200_000 + ",0\n",
     _F3 + ", line 153: row 'horizontal,,111111111111111111111111111111111111111111111...' cannot "
     "be split into fields (field larger than field limit (131072)); expected four "
     "comma-separated fields (cut,side,angle_deg,gain_dbi)"),
    ("unknown-cut-word", _with_line(_ROW + 3, "diagonal,,15.0,9.9"),
     _F3 + ", line 10: cut = 'diagonal'; expected horizontal or vertical"),
    ("unknown-side-word", _with_line(len(_LINES) - 3, "vertical,left,80.0,4.0"),
     _F3 + ", line 150: side = 'left' on a vertical row; expected front or back"),
    ("missing-table-header", _without("cut,"),
     _F3 + ", line 6: table header is 'horizontal,,0.0,10.000000'; expected "
     "'cut,side,angle_deg,gain_dbi' after the '#' header lines"),
    ("missing-peak_gain_dbi", _without("# peak_gain_dbi"),
     _F3 + ", line 5: header key 'peak_gain_dbi' is missing; expected a line "
     "'# peak_gain_dbi = <gain in dBi>' before the table"),
    ("peak_gain_dbi-not-a-number", _GOOD.replace("# peak_gain_dbi = 10.0", "# peak_gain_dbi = ten"),
     _F3 + ", line 2: header key 'peak_gain_dbi' = 'ten'; expected a gain in dBi"),
    ("peak_gain_dbi-disagrees", _GOOD.replace("# peak_gain_dbi = 10.0", "# peak_gain_dbi = 14.0"),
     _F3 + ", line 2: peak_gain_dbi = 14 but the largest gain in the table is 10 dBi (line 7); "
     "expected agreement within 0.5 dB"),
    ("missing-vertical-back-cut", _without("vertical,back"),
     _F3 + ", line 115: the vertical back cut is missing; expected rows with cut=vertical, "
     "side=back"),
    ("missing-nadir", _without("vertical,front,-90.0"),
     _F3 + ", line 79: vertical front cut starts at -85 deg; expected a sample at -90 (nadir)"),
    ("cuts-disagree-at-zenith",
     _GOOD.replace("vertical,back,90.0,-2.000000", "vertical,back,90.0,-8.000000"),
     _F3 + ", line 152: at the zenith the cuts disagree: -2.00 dBi (near line 115) against "
     "-8.00 dBi; expected agreement within 1 dB (the same direction)"),
    ("empty-file", "",
     _F3 + ": no table header 'cut,side,angle_deg,gain_dbi' found; expected '#' header lines "
     "followed by the table"),
    ("comments-only", "# pattern CSV v1\n# nothing here\n",
     _F3 + ", line 2: no table header 'cut,side,angle_deg,gain_dbi' found; expected '#' header "
     "lines followed by the table"),
    ("binary", b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(range(256)),
     _F3 + ", line 3: holds NUL bytes (binary data); expected a UTF-8 text file in pattern CSV v1 "
     "layout"),
    ("not-utf8", _GOOD.replace("invented deck panel", "panneau d\xe9cor").encode("latin-1"),
     _F3 + ", line 5: byte 107 is not UTF-8 text; expected a UTF-8 text file in pattern CSV v1 "
     "layout"),
    ("a-folder-in-its-place", None,
     'antenna "F3" > pattern = "deck_panel.csv": {pattern} is a folder; expected a pattern CSV '
     "v1 file (relative paths start at the site file's folder)"),
]

# the same file with a full-sphere 3-D table after its cuts (15 deg grid: 24 x 13 cells)
_SPHERE = sitegen.pattern_text(sphere_step=15.0)
_SLINES = _SPHERE.splitlines()
_SH = _SLINES.index("azimuth_deg,elevation_deg,gain_dbi") + 1  # its header's line (153)


def _cell(a: float, e: float) -> int:
    """Line of the 3-D row at azimuth ``a``, elevation ``e`` [deg] (rows az-major)."""
    return _SH + 1 + int(a // 15) * 13 + int((e + 90) // 15)


def _sphere_with(n: int, text: str | None) -> str:
    """The 3-D file with line ``n`` replaced by ``text`` (deleted if None)."""
    return "\n".join(line if j != n else text for j, line in enumerate(_SLINES, 1)
                     if j != n or text is not None) + "\n"


PATTERN_CASES += [
    ("3d-missing-cell", _sphere_with(_cell(30, 45), None),
     _F3 + f", line {_cell(30, 30)}: no 3-D cell at azimuth 30 deg, elevation 45 deg (this line "
     "holds that azimuth at elevation 30 deg); expected each of the table's 24 azimuths at each "
     "of its 13 elevations (312 rows, 311 given)"),
    ("3d-poles-disagree", _sphere_with(_cell(90, 90), "90.0,90.0,-6.0"),
     _F3 + f", line {_cell(90, 90)}: at the zenith the 3-D table gives -6 dBi (azimuth 90 deg) and "
     f"-2 dBi (azimuth 0 deg, line {_cell(0, 90)}); expected agreement within 1 dB across "
     "azimuths (a pole is one direction)"),
    ("3d-disagrees-with-the-front-cut", _sphere_with(_cell(0, 60), "0.0,60.0,6.666667"),
     _F3 + f", line {_cell(0, 60)}: the 3-D table gives 6.66667 dBi at azimuth 0 deg, elevation "
     f"60 deg and the vertical front cut 4.66667 dBi at 60 deg (line "
     f"{_SLINES.index('vertical,front,60.0,4.666667') + 1}); expected agreement within 1 dB on "
     "the cut planes (the same direction)"),
    ("3d-gain-nan", _sphere_with(_cell(30, 45), "30.0,45.0,nan"),
     _F3 + f", line {_cell(30, 45)}: gain_dbi = 'nan'; expected a finite gain in dBi within "
     "-150..80"),
    ("3d-cuts-row-after-the-table", _SPHERE + "horizontal,,2.5,9.9\n",
     _F3 + f", line {len(_SLINES) + 1}: row 'horizontal,,2.5,9.9' of the cuts table comes after "
     f"the 3-D table header on line {_SH}; expected all cuts rows before the 3-D table"),
    ("3d-header-without-rows", "\n".join(_SLINES[:_SH]) + "\n",
     _F3 + f", line {_SH}: the 3-D table header has no rows after it; expected rows "
     "'azimuth_deg,elevation_deg,gain_dbi' covering the sphere"),
]


@pytest.mark.parametrize(("content", "message"), [c[1:] for c in PATTERN_CASES],
                         ids=[c[0] for c in PATTERN_CASES])
def test_broken_pattern_file(tmp_path, content, message):
    """Format rules: SPEC 3.2 "pattern CSV v1" (the project's own format)."""
    site = sitegen.write_site(tmp_path, sitegen.base_site())
    pattern = tmp_path / sitegen.PATTERN_NAME
    if content is None:
        pattern.unlink()
        pattern.mkdir()
    elif isinstance(content, bytes):
        pattern.write_bytes(content)
    else:
        pattern.write_text(content)
    run = sitegen.run_cli(["screen", site, "--json", "--no-progress"])
    line = sitegen.assert_one_line_error(run)
    assert run.stdout == ""
    _check_message(line, f"Error: {site}: " + message.replace("{pattern}", str(pattern)))


def test_a_pattern_file_with_a_valid_3d_table_passes(tmp_path):
    """The base of the 3-D cases is valid: each failure above comes from its one edit."""
    site = sitegen.write_site(tmp_path, sitegen.base_site(), pattern=_SPHERE)
    run = sitegen.run_cli(["screen", site, "--json", "--no-progress"])
    assert run.code == 0, run.stderr
    assert run.stdout.startswith("{")


# --------------------------------------------------------------------------------------
# the site file as a whole: unreadable, binary, not TOML, wrong shape
# --------------------------------------------------------------------------------------

_VALID = sitegen.dump_toml(sitegen.base_site())

FILE_CASES = [
    ("not-found", "absent", "{site}: site file not found"),
    ("a-folder", "folder", "{site}: is a folder; expected a site file"),
    ("binary", b"SQLite format 3\x00" + bytes(range(200)),
     "{site}: looks like a binary file; expected a UTF-8 TOML text file"),
    ("not-utf8", _VALID.replace("Robustness deck", "Terrasse \xe9t\xe9").encode("cp1252"),
     "{site}: line 2: byte 0xe9 is not UTF-8; expected a UTF-8 TOML text file (save it as UTF-8)"),
    ("empty", "", "{site}: site: required key is missing; expected the [site] table (and 1 more "
     "problem)"),
    ("toml-syntax", _VALID.replace('name = "Robustness deck"', 'name = "Robustness deck'),
     "{site}: line 2, column 24: invalid TOML: Illegal character '\\n'"),
    ("table-declared-twice", _VALID + "[site]\nname = \"again\"\n",
     "{site}: line 61, column 6: invalid TOML: Cannot declare ('site',) twice: 'site' is given twice; "
     "expected each key once per table"),
    ("truncated", _VALID[: _VALID.index("[[antenna]]") + 6],
     "{site}: line 25 (end of file): invalid TOML: Expected ']]' at the end of an array "
     "declaration; is the file complete?"),
    ("antenna-single-brackets", _VALID.split("[[antenna]]")[0] + "[antenna]\nid = \"X\"\n",
     "{site}: antenna: expected [[antenna]] tables (double brackets), one per antenna"),
    ("no-antenna", _VALID.split("[[antenna]]")[0],
     "{site}: antenna: required key is missing; expected [[antenna]] tables"),
    ("toml-date-as-power", _VALID.replace("tx_power_w = 20.0", "tx_power_w = 1979-05-27"),
     '{site}: antenna "T1" > tx_power_w = 1979-05-27: expected a number'),
    ("toml-nan-literal", _VALID.replace("tx_power_w = 20.0", "tx_power_w = -nan"),
     '{site}: antenna "T1" > tx_power_w = nan: expected a finite number (nan and inf are not '
     "allowed)"),
    ("unknown-top-level-key", "units = \"metric\"\n" + _VALID,
     "{site}: units: unknown key; allowed keys here: site, area, point, antenna"),
    ("duplicate-antenna-id", _VALID.replace('id = "P2"', 'id = "T1"'),
     '{site}: antenna #2 > id = "T1": expected an id not used by antenna #1'),
    ("duplicate-area-name", _VALID.replace('name = "Plant"', 'name = "Deck"'),
     '{site}: area #2 > name = "Deck": expected a name not used by area #1'),
]


@pytest.mark.parametrize(("content", "message"), [c[1:] for c in FILE_CASES],
                         ids=[c[0] for c in FILE_CASES])
def test_bad_site_file(tmp_path, content, message):
    sitegen.write_site(tmp_path, sitegen.base_site())
    site = tmp_path / "bad.toml"
    if content == "folder":
        site.mkdir()
    elif isinstance(content, bytes):
        site.write_bytes(content)
    elif content != "absent":
        site.write_text(content, encoding="utf-8")
    run = sitegen.run_cli(["screen", site, "--json", "--no-progress"])
    line = sitegen.assert_one_line_error(run)
    assert run.stdout == ""
    _check_message(line, "Error: " + message.replace("{site}", str(site)))


# --------------------------------------------------------------------------------------
# outputs: a path equal to an input, a folder that cannot be written
# --------------------------------------------------------------------------------------


def _tree(folder: Path) -> set[str]:
    return {str(p.relative_to(folder)) for p in folder.rglob("*")}


@pytest.fixture
def deck(tmp_path):
    site = sitegen.write_site(tmp_path, sitegen.base_site())
    (tmp_path / "a_file").write_text("not a folder\n")
    (tmp_path / "folder.pdf").mkdir()
    sitegen.write_site(tmp_path, sitegen.base_site(), name="inputs.pdf")  # TOML, named .pdf
    return tmp_path, site


OUTPUT_CASES = [
    ("report-out-is-the-site-file", ["report", "{site}", "--out", "{site}"],
     "Error: --out '{site}': expected a file name ending in .pdf"),
    ("report-out-is-the-site-file-named-pdf", ["report", "{dir}/inputs.pdf", "--out", "{dir}/inputs.pdf"],
     "Error: --out '{dir}/inputs.pdf': is an input file of the site ({dir}/inputs.pdf); expected "
     "a new file name for the report"),
    ("report-out-is-a-folder", ["report", "{site}", "--out", "{dir}/folder.pdf"],
     "Error: --out '{dir}/folder.pdf': is a folder; expected a file name ending in .pdf"),
    ("map-out-is-the-site-file", ["map", "{site}", "--out", "{site}"],
     "Error: --out '{site}': is an input file of the site; expected a folder for the maps"),
    ("map-out-is-the-pattern-file", ["map", "{site}", "--out", "{dir}/deck_panel.csv"],
     "Error: --out '{dir}/deck_panel.csv': is an input file of the site; expected a folder for "
     "the maps"),
    ("map-out-is-a-file", ["map", "{site}", "--out", "{dir}/a_file"],
     "Error: --out '{dir}/a_file': is a file; expected a folder for the maps"),
    ("map-out-under-dev-null", ["map", "{site}", "--out", "/dev/null/maps"],
     "Error: output folder '/dev/null/maps': '/dev/null' is a file, not a folder; expected a "
     "writable folder"),
    ("map-out-under-a-file", ["map", "{site}", "--out", "{dir}/a_file/maps"],
     "Error: output folder '{dir}/a_file/maps': '{dir}/a_file' is a file, not a folder; "
     "expected a writable folder"),
    ("schema-out-is-a-folder", ["schema", "--out", "{dir}/folder.pdf"],
     "Error: --out '{dir}/folder.pdf': is a folder; expected a file name for the schema"),
    ("schema-out-under-dev-null", ["schema", "--out", "/dev/null/schema.json"],
     "Error: output folder '/dev/null': ..."),
    ("point-at-nan", ["point", "{site}", "--at", "nan", "0", "0"],
     "Error: --at: value [nan, 0.0, 0.0] is not finite; expected three numbers E N Z in metres"),
    ("point-at-far-away", ["point", "{site}", "--at", "0", "0", "1e300"],
     "Error: --at: value [0.0, 0.0, 1e+300] is too far from the site origin; expected three "
     "numbers E N Z in metres within 10000 m of it (as in the site file)"),
]


@pytest.mark.parametrize(("args", "message"), [c[1:] for c in OUTPUT_CASES],
                         ids=[c[0] for c in OUTPUT_CASES])
def test_bad_output_path_writes_nothing(deck, args, message):
    folder, site = deck

    def fill(text: str) -> str:
        return text.replace("{site}", str(site)).replace("{dir}", str(folder))

    before = _tree(folder)
    run = sitegen.run_cli([fill(a) for a in args])
    line = sitegen.assert_one_line_error(run)
    _check_message(line, fill(message))
    assert _tree(folder) == before


@pytest.mark.parametrize("target", ["/dev/null/report.pdf", "{dir}/a_file/report.pdf"])
def test_report_into_an_unwritable_folder_writes_nothing(deck, target):
    """The report command refuses an unusable folder before it evaluates: one line, no file."""
    folder, site = deck
    target = target.replace("{dir}", str(folder))
    before = _tree(folder)
    run = sitegen.run_cli(["report", site, "--out", target, "--no-progress"])
    line = sitegen.assert_one_line_error(run)
    assert line.startswith(f"Error: --out '{target}': its folder '{Path(target).parent}' is a file")
    assert line.endswith("expected a writable folder")
    assert _tree(folder) == before


_BAD_SITES = [
    ("bad-key", ("antenna", 0, "activity"), 1.5),
    ("bad-outline", ("area", 0, "outline"), [[0, 0], [1, 1], [1, 0], [0, 1]]),
    ("inline-model-not-text", ("antenna", 0, "pattern"), {"model": ["isotropic"]}),
]


@pytest.mark.parametrize("command", ["map", "report"])
@pytest.mark.parametrize(("path", "value"), [c[1:] for c in _BAD_SITES],
                         ids=[c[0] for c in _BAD_SITES])
def test_bad_site_makes_no_map_and_no_report(tmp_path, command, path, value):
    doc = sitegen.base_site()
    _edit(doc, path, value)
    site = sitegen.write_site(tmp_path, doc)
    target = tmp_path / ("maps" if command == "map" else "report.pdf")
    before = _tree(tmp_path)
    run = sitegen.run_cli([command, site, "--out", target, "--no-progress"])
    sitegen.assert_one_line_error(run)
    assert not target.exists()
    assert _tree(tmp_path) == before


# --------------------------------------------------------------------------------------
# the same in a real process: what a terminal sees
# --------------------------------------------------------------------------------------


def test_no_traceback_reaches_a_terminal(deck):
    """Four kinds of failure (a bad inline model, a pattern row the csv module cannot split,
    an output folder that is a file, a grid too large) in real subprocesses, run together."""
    folder, site = deck
    doc = sitegen.base_site()
    doc["antenna"][0]["pattern"] = {"model": ["isotropic"]}
    bad_model = sitegen.write_site(folder / "m", doc)
    bad_pattern = sitegen.write_site(folder / "p", sitegen.base_site(),
                                     pattern=_GOOD + "horizontal,," + "9" * 200_000 + ",0\n")
    doc = sitegen.base_site()
    doc["site"]["resolution_m"] = 0.001
    huge = sitegen.write_site(folder / "h", doc)
    commands = [["screen", bad_model, "--json"], ["screen", bad_pattern],
                ["map", site, "--out", folder / "a_file"], ["screen", huge, "--json"]]
    env = {**os.environ, "COLUMNS": "120"}
    procs = [subprocess.Popen([sys.executable, "-m", "siteexposure", *map(str, c)], env=env,
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
             for c in commands]
    for proc in procs:
        out, err = proc.communicate(timeout=120)
        assert proc.returncode == 2, err
        assert out == ""
        assert "Traceback" not in err
        lines = err.strip("\n").splitlines()
        assert len(lines) == 1 and lines[0].startswith("Error: "), err


def test_a_folder_in_place_of_an_output_file_is_one_line(deck):
    """`map --out DIR` where DIR/site.geojson is a folder: one Error line, exit 2, and no
    map file written before the refusal."""
    folder, site = deck
    out = folder / "maps"
    (out / "site.geojson").mkdir(parents=True)
    run = sitegen.run_cli(["map", site, "--out", out, "--no-progress"])
    line = sitegen.assert_one_line_error(run)
    assert "site.geojson" in line
    assert not list(out.glob("*.png")) and not list(out.glob("*.svg"))
