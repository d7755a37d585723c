"""The validated accuracy of the field models, as the report's method section quotes it.

The figures come from ``siteexposure/accuracy_table.json``, which the method-of-moments
validation (``tests/validation/nec_accuracy.py``) writes beside ``tests/data/nec/accuracy.md``
from the same run; the end-to-end tests check that the two agree row for row.

Tables (each a list of rows of strings, as printed):

* :data:`CASES` -- the reference antennas (case, frequency, body, polarisation, peak gain,
  radiated over input power, far-field range);
* :data:`AUTO_BY_CASE` and :data:`AUTO_BY_CASE_3D` -- ``auto`` per case with the pattern's cuts
  only and with its full-sphere table (case, points judged, share within -1.5..+3 dB, lowest
  and highest error, share refused, far-field error range, share given the envelope bound);
* :data:`BY_MODEL_REGION` -- every model over all cases by region (model and region, judged,
  assessed, median, 5th and 95th percentile, minimum, maximum, share within -1.5..+3 dB);
* :data:`BOUND_MARGINS` -- the envelope bound over the reference (case, points, minimum, 5th
  percentile, median, in dB).
"""

from __future__ import annotations

import json
from pathlib import Path

_TABLE = Path(__file__).resolve().parents[1] / "accuracy_table.json"
_DATA = json.loads(_TABLE.read_text(encoding="utf-8"))

#: where the tables come from (relative to the project root)
SOURCE = _DATA["source"]
SUMMARY = _DATA["summary"]
CASES = tuple(tuple(r) for r in _DATA["cases"])
AUTO_BY_CASE = tuple(tuple(r) for r in _DATA["auto_by_case"])
AUTO_BY_CASE_3D = tuple(tuple(r) for r in _DATA["auto_by_case_3d"])
BY_MODEL_REGION = tuple(tuple(r) for r in _DATA["by_model_region"])
BOUND_MARGINS = tuple(tuple(r) for r in _DATA["bound_margins"])

#: what the figures cannot show, per model id (for the report's accuracy section)
KNOWN_LIMITS = {
    "array-synthesis": (
        "The criteria (95 % of judged points within -1.5..+3 dB, none below -3 dB) are met for "
        "the half-wave, short and collinear dipoles, the monopole over ground and (with the "
        "pattern's full-sphere table) the small loop; beside and behind panels within a "
        "wavelength of the reflector, close to log-periodic arrays and crossed-dipole FM bays "
        "the model errs by several dB either way (lowest -11 dB close to the crossed FM "
        "elements). The far field of electrically tilted panels off the cut planes follows the "
        "cuts' synthesis, not the antenna (-0.7..+2.2 dB for the 6 deg reference panel); a "
        "full-sphere table in the pattern file removes most of it."
    ),
    "circular-aperture": (
        "Just outside the rim, within about a centimetre of the aperture plane, it can be up "
        "to 8 dB low (the scalar aperture field leaves out the rim's vector fringe field); "
        "elsewhere in front of the dish within -3.5 .. +4 dB of the uniform reference "
        "aperture, its far field -0.2 .. +2.6 dB. Off the beam in the near field beyond two "
        "diameters of the axis, where the integral would be costly, the OET-65 off-axis rule "
        "and the envelope bound apply: conservative by design, by tens of dB."
    ),
}

#: model ids of the package that the validation covers (the rest: "not validated")
VALIDATED_MODEL_IDS = ("far-field-friis", "oet65-cylindrical", "array-synthesis",
                       "circular-aperture")


def rows_for(model_id: str) -> list[tuple]:
    """Rows of :data:`BY_MODEL_REGION` of one model id (the ``auto`` rows excluded)."""
    return [r for r in BY_MODEL_REGION if not r[0].startswith("auto ")
            and f"({model_id})" in r[0].split(",")[0]]
