"""`siteexposure schema`: one JSON Schema object on stdout that the sample sites satisfy.

Reference: JSON Schema draft 2020-12 (json-schema.org, "JSON Schema: A Media Type for
Describing JSON Documents", 2020-12), checked with the ``jsonschema`` package's
Draft202012Validator where that package is installed.
"""

from __future__ import annotations

import json
import subprocess
import sys
import tomllib

import pytest
from typer.testing import CliRunner

from siteexposure.resources import sample_sites_dir

SAMPLES = ("office_roof.toml", "shared_tower.toml", "parking_dish.toml")


@pytest.fixture(scope="module")
def schema() -> dict:
    out = subprocess.run([sys.executable, "-m", "siteexposure", "schema"], capture_output=True,
                         text=True, check=False, timeout=120)
    assert out.returncode == 0, out.stderr
    assert out.stderr == ""
    return json.loads(out.stdout)  # exactly one JSON document, nothing else on stdout


def _props(schema: dict, name: str) -> dict:
    return schema["$defs"][name]["properties"]


def test_schema_is_a_draft_2020_12_document_with_title(schema):
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert schema["title"] and "screening estimate" in schema["description"]
    assert schema["type"] == "object" and schema["additionalProperties"] is False
    assert set(schema["required"]) == {"site", "antenna"}


def test_schema_lists_the_fixed_keys_of_spec_3_1(schema):
    assert {"site", "area", "point", "antenna"} <= set(schema["properties"])
    assert {"name", "origin", "limits", "averaging", "resolution_m"} <= set(_props(schema, "SiteTable"))
    assert {"lat", "lon"} <= set(_props(schema, "OriginTable"))
    assert {"method", "bottom_m", "top_m", "points"} <= set(_props(schema, "AveragingTable"))
    assert {"name", "access", "floor_m", "outline", "outline_lonlat"} <= set(_props(schema, "AreaTable"))
    assert {"name", "at", "access"} <= set(_props(schema, "PointTable"))
    antenna = {"id", "operator", "position", "azimuth_deg", "mechanical_tilt_deg",
               "electrical_tilt_deg", "frequency_mhz", "tx_power_w", "tx_power_dbm", "carriers",
               "line_loss_db", "activity", "pattern", "aperture", "model"}
    assert antenna <= set(_props(schema, "AntennaTable"))
    assert _props(schema, "AreaTable")["access"]["enum"] == ["public", "worker", "none"]
    assert _props(schema, "AntennaTable")["model"]["enum"] == [
        "auto", "far-field", "cylindrical", "array", "aperture"]
    assert _props(schema, "AveragingTable")["method"]["enum"] == ["vertical-line", "peak"]
    limits = _props(schema, "SiteTable")["limits"]["items"]["enum"]
    assert {"fcc-1310", "icnirp-2020", "icnirp-1998", "ieee-c95.1-2019", "hc-sc6-2015"} <= set(limits)


def test_descriptions_carry_units(schema):
    ant = _props(schema, "AntennaTable")
    assert ant["frequency_mhz"]["description"].endswith("[MHz]")
    assert ant["tx_power_w"]["description"].endswith("[W]")
    assert ant["tx_power_dbm"]["description"].endswith("[dBm]")
    assert ant["azimuth_deg"]["description"].endswith("[deg]")
    assert _props(schema, "AreaTable")["floor_m"]["description"].endswith("[m]")
    assert "null" not in json.dumps(schema)  # TOML has no null; optional keys are just absent


@pytest.mark.parametrize("name", SAMPLES)
def test_sample_sites_validate_against_the_schema(schema, name):
    jsonschema = pytest.importorskip("jsonschema", reason="jsonschema is not installed")
    jsonschema.Draft202012Validator.check_schema(schema)
    document = tomllib.loads((sample_sites_dir() / name).read_text(encoding="utf-8"))
    errors = list(jsonschema.Draft202012Validator(schema).iter_errors(document))
    assert not errors, [e.message for e in errors[:3]]


@pytest.mark.parametrize(
    ("change", "word"),
    [
        (lambda d: d["area"][0].update(access="private"), "private"),
        (lambda d: d["antenna"][0].update(tx_power_dbm=40.0), "oneOf"),
        (lambda d: d["antenna"][0].update(azimuth=10), "azimuth"),
        (lambda d: d["site"].update(limits=["fcc-1311"]), "fcc-1311"),
        (lambda d: d["antenna"][0].update(activity=1.5), "1.5"),
    ],
)
def test_schema_rejects_bad_sites(schema, change, word):
    """The schema is not vacuous: the same kinds of mistakes the reader refuses fail it."""
    jsonschema = pytest.importorskip("jsonschema", reason="jsonschema is not installed")
    document = tomllib.loads((sample_sites_dir() / SAMPLES[0]).read_text(encoding="utf-8"))
    change(document)
    errors = list(jsonschema.Draft202012Validator(schema).iter_errors(document))
    assert errors and any(word in str(e) for e in errors)


def test_schema_out_option_writes_the_same_document(tmp_path, schema):
    from siteexposure.cli.app import _register, app

    _register()
    target = tmp_path / "nested" / "site.schema.json"
    result = CliRunner().invoke(app, ["schema", "--out", str(target)])
    assert result.exit_code == 0, result.output
    assert json.loads(target.read_text(encoding="utf-8")) == schema
