"""The shape of a site file: pydantic models of its tables, and its JSON Schema.

:mod:`siteexposure.readers.site_toml` validates a parsed TOML document against
:class:`SiteFile` (strict types, no unknown keys, finite numbers, ranges, fixed words) and
turns the first error into a one-line message; :func:`site_json_schema` gives the same
rules to editors. Checks that need more than one key or the files around the site file
(alternative keys, polygons, pattern files, limit-table ranges) live in ``site_toml``.
"""

from __future__ import annotations

from typing import Annotated, Any, Literal

from pydantic import BaseModel, ConfigDict, Field, WithJsonSchema
from pydantic.json_schema import GenerateJsonSchema

from siteexposure.containers import ACCESS_WORDS, MODEL_WORDS, POLARIZATION_WORDS
from siteexposure.errors import LimitsError
from siteexposure.physics.patterns import PARAMETRIC_MODELS

__all__ = ["MAX_REACH_M", "SiteFile", "site_json_schema"]

# --------------------------------------------------------------------------------------
# the tables (the JSON Schema is generated from these models)
# --------------------------------------------------------------------------------------

#: Every local coordinate (east, north, height, floor) lies within this distance of the site
#: origin: the local frame is a tangent plane good to millimetres there (see siteexposure.geo),
#: and the bound keeps every product of the field formulas finite. [m]
MAX_REACH_M = 10_000.0
#: Largest power per carrier (tx_power_w, and tx_power_dbm <= 100 dBm): 10 MW. [W]
MAX_TX_POWER_W = 1.0e7
#: Plausible physical size of a radiating aperture (panel, collinear, dish). [m]
APERTURE_RANGE_M = (1.0e-3, 100.0)

Coordinate = Annotated[float, Field(ge=-MAX_REACH_M, le=MAX_REACH_M)]
#: longest name, id or operator accepted (a report line holds about 100 characters) [1]
MAX_NAME = 200
Pair = Annotated[list[float], Field(min_length=2, max_length=2)]
EastNorth = Annotated[list[Coordinate], Field(min_length=2, max_length=2)]
Triple = Annotated[list[Coordinate], Field(min_length=3, max_length=3)]
Access = Literal[ACCESS_WORDS]  # public | worker | none
ModelWord = Literal[MODEL_WORDS]  # auto | far-field | cylindrical | array | aperture
Polarization = Literal[POLARIZATION_WORDS]  # vertical | horizontal | slant | circular
_PATTERN_JSON = {
    "description": (
        "Antenna gain pattern: a 'pattern CSV v1' file path (relative to the site file's "
        "folder), or an inline parametric model table such as "
        "{ model = \"3gpp-panel\", gain_dbi = 17.5, hpbw_h_deg = 65, hpbw_v_deg = 7 }."
    ),
    "anyOf": [
        {"type": "string", "minLength": 1, "description": "Path of a pattern CSV v1 file."},
        {
            "type": "object",
            "required": ["model"],
            "properties": {
                "model": {
                    "enum": list(PARAMETRIC_MODELS),
                    "description": "Parametric pattern model.",
                },
                "gain_dbi": {"type": "number", "description": "Peak gain. [dBi]"},
                "gain_dbd": {"type": "number", "description": "Peak gain. [dBd]"},
            },
            "additionalProperties": True,
        },
    ],
}
PatternValue = Annotated[Any, WithJsonSchema(_PATTERN_JSON)]


class _Table(BaseModel):
    """A TOML table: strict types, no unknown keys, finite numbers only."""

    model_config = ConfigDict(strict=True, extra="forbid", allow_inf_nan=False)


class OriginTable(_Table):
    model_config = ConfigDict(title="site.origin")
    lat: float = Field(ge=-90.0, le=90.0, description="WGS84 latitude of the origin. [deg]")
    lon: float = Field(ge=-180.0, le=180.0, description="WGS84 longitude of the origin. [deg]")


class AveragingTable(_Table):
    model_config = ConfigDict(title="site.averaging")
    method: Literal["vertical-line", "peak"] = Field(
        "vertical-line",
        description="'vertical-line' takes the mean of the points of a vertical line standing "
        "on the floor, 'peak' their maximum.",
    )
    bottom_m: float = Field(0.0, ge=0.0, le=100.0, description="Lowest point above the floor. [m]")
    top_m: float = Field(2.0, gt=0.0, le=100.0, description="Highest point above the floor. [m]")
    points: int = Field(
        10,
        ge=1,
        le=1000,
        description="Number of evenly spaced points, both ends included (>= 2 for "
        "'vertical-line'; 1 = a single point midway, 'peak' only).",
    )


class SiteTable(_Table):
    model_config = ConfigDict(title="[site]")
    name: str = Field(min_length=1, max_length=MAX_NAME, description="Site name for reports.")
    origin: OriginTable = Field(
        description="WGS84 origin of the local east/north frame, e.g. { lat = 44.98, lon = -93.27 }."
    )
    limits: list[str] = Field(
        min_length=1,
        description="Limit-set ids to evaluate side by side, e.g. [\"fcc-1310\", \"icnirp-2020\"].",
    )
    averaging: AveragingTable = Field(
        default_factory=AveragingTable, description="Spatial averaging over a vertical line."
    )
    resolution_m: float = Field(
        0.25, gt=0.0, le=100.0, description="Grid spacing of the areas. [m]"
    )
    address: str = Field("", description="Postal address or location text for reports.")
    preparer: str = Field("", description="Who prepared the site file, for reports.")
    zone_levels: list[Annotated[float, Field(gt=0.0)]] = Field(
        default_factory=list,
        description="Extra exposure-ratio contour levels besides 1, e.g. [0.05, 0.5, 10]. [1]",
    )
    reflection_factor: float = Field(
        1.0,
        ge=1.0,
        le=4.0,
        description="Field-squared reflection factor F of S = P G F / (4 pi r^2) for every "
        "antenna (1 = free space, 2.56 = OET-65 ground reflection, 4 = full in-phase). [1]",
    )


class AreaTable(_Table):
    model_config = ConfigDict(
        title="[[area]]",
        json_schema_extra={"oneOf": [{"required": ["outline"]}, {"required": ["outline_lonlat"]}]}
    )
    name: str = Field(min_length=1, max_length=MAX_NAME, description="Area name, unique in the file.")
    access: Access = Field(description="Who can stand here: public | worker | none.")
    floor_m: Coordinate = Field(description="Standing surface height above site ground. [m]")
    outline: list[EastNorth] | None = Field(
        None, min_length=3, description="Polygon vertices [[east, north], ...] in local metres. [m]"
    )
    outline_lonlat: list[Pair] | None = Field(
        None, min_length=3, description="Polygon vertices [[lon, lat], ...], WGS84. [deg]"
    )


class PointTable(_Table):
    model_config = ConfigDict(title="[[point]]")
    name: str = Field(min_length=1, max_length=MAX_NAME, description="Receptor name, unique in the file.")
    at: Triple = Field(description="[east, north, height above site ground]. [m]")
    access: Access = Field("public", description="Who can be here: public | worker | none.")


class ApertureTable(_Table):
    model_config = ConfigDict(
        title="antenna.aperture",
        json_schema_extra={
            "anyOf": [{"required": ["height_m"]}, {"required": ["width_m"]},
                      {"required": ["depth_m"]}, {"required": ["diameter_m"]}],
        }
    )
    height_m: float | None = Field(None, ge=APERTURE_RANGE_M[0], le=APERTURE_RANGE_M[1],
                                   description="Height of the antenna's body along its own "
                                   "vertical axis (length of a panel or collinear). [m]")
    width_m: float | None = Field(None, ge=APERTURE_RANGE_M[0], le=APERTURE_RANGE_M[1],
                                  description="Width of the body (element span of a "
                                  "horizontal Yagi or log-periodic array). [m]")
    depth_m: float | None = Field(None, ge=APERTURE_RANGE_M[0], le=APERTURE_RANGE_M[1],
                                  description="Depth of the body along boresight: reflector to "
                                  "front of a panel, boom of a Yagi or log-periodic array, "
                                  "feed in front of a dish's aperture plane. [m]")
    diameter_m: float | None = Field(None, ge=APERTURE_RANGE_M[0], le=APERTURE_RANGE_M[1],
                                     description="Dish diameter. [m]")
    offset_m: Annotated[list[Annotated[float, Field(ge=-APERTURE_RANGE_M[1],
                                                    le=APERTURE_RANGE_M[1])]],
                        Field(min_length=3, max_length=3)] | None = Field(
        None, description="Centre of the body relative to the radiation centre, in the "
        "antenna's own frame [forward along boresight, left, up]; default centred. [m]")


class AntennaTable(_Table):
    model_config = ConfigDict(
        title="[[antenna]]",
        json_schema_extra={"oneOf": [{"required": ["tx_power_w"]}, {"required": ["tx_power_dbm"]}]}
    )
    id: str = Field(min_length=1, max_length=MAX_NAME, description="Antenna id, unique in the file.")
    operator: str = Field(min_length=1, max_length=MAX_NAME, description="Tenant, for apportioning contributions.")
    position: Triple = Field(
        description="[east, north, height] of the radiation centre above site ground. [m]"
    )
    azimuth_deg: float = Field(
        0.0, ge=-360.0, le=360.0, description="Boresight, clockwise from TRUE north. [deg]"
    )
    mechanical_tilt_deg: float = Field(
        0.0, ge=-90.0, le=90.0, description="Mechanical downtilt, positive down. [deg]"
    )
    electrical_tilt_deg: float | None = Field(
        None,
        ge=-90.0,
        le=90.0,
        description="Electrical downtilt, positive down, applied to parametric patterns; a "
        "pattern file carries its own. [deg]",
    )
    frequency_mhz: float = Field(gt=0.0, description="Carrier frequency. [MHz]")
    tx_power_w: float | None = Field(
        None, gt=0.0, le=MAX_TX_POWER_W,
        description="Power per carrier at the transmitter output. [W]",
    )
    tx_power_dbm: float | None = Field(
        None, ge=-100.0, le=100.0,
        description="Power per carrier at the transmitter output. [dBm]",
    )
    carriers: int = Field(1, ge=1, le=10_000, description="Number of carriers. [1]")
    line_loss_db: float = Field(
        0.0, ge=0.0, le=60.0, description="Loss between transmitter and antenna. [dB]"
    )
    activity: float = Field(
        1.0,
        gt=0.0,
        le=1.0,
        description="Time-averaging factor 0 < activity <= 1: duty cycle, TDD ratio, "
        "beam-forming actual-maximum factor. [1]",
    )
    pattern: PatternValue
    gain_dbi: float | None = Field(
        None, ge=-30.0, le=70.0, description="Rescale a pattern file to this peak gain. [dBi]"
    )
    gain_dbd: float | None = Field(
        None, ge=-32.15, le=67.85,
        description="Rescale a pattern file to this peak gain (dBi = dBd + 2.15). [dBd]",
    )
    aperture: ApertureTable | None = Field(
        None,
        description="The antenna's body: { height_m, width_m, depth_m } (a box) or "
        "{ diameter_m, depth_m } (dishes), optional offset_m. [m]",
    )
    polarization: Polarization = Field(
        "vertical", description="Orientation of the radiating elements: vertical | horizontal "
        "| slant | circular.")
    ground_plane: bool = Field(
        False, description="The antenna is a monopole standing on a conducting ground plane "
        "at the lower end of its body (needs aperture.height_m; no mechanical tilt).")
    model: ModelWord = Field(
        "auto", description="Field model: auto | far-field | cylindrical | array | aperture."
    )
    reflection_factor: float | None = Field(
        None, ge=1.0, le=4.0, description="F for this antenna, overriding site.reflection_factor. [1]"
    )


class SiteFile(_Table):
    site: SiteTable = Field(description="The [site] table.")
    area: list[AreaTable] = Field(
        default_factory=list, description="[[area]] tables: surfaces people stand on."
    )
    point: list[PointTable] = Field(
        default_factory=list, description="[[point]] tables: named receptors (windows, balconies)."
    )
    antenna: list[AntennaTable] = Field(min_length=1, description="[[antenna]] tables.")


class _TomlJsonSchema(GenerateJsonSchema):
    """TOML has no null: optional keys are simply absent, so drop ``null`` alternatives."""

    def field_title_should_be_set(self, schema) -> bool:
        return False  # the key itself is the title; descriptions carry the meaning

    def nullable_schema(self, schema):
        return self.generate_inner(schema["schema"])

    def default_schema(self, schema):
        out = super().default_schema(schema)
        if "default" in out and out["default"] is None:
            del out["default"]
        return out


def site_json_schema() -> dict[str, Any]:
    """The JSON Schema (draft 2020-12) of the site file, for editors and other tools.

    It describes every key with its unit; the checks that need more than a schema
    (polygon validity, pattern files, frequency ranges of the limit tables) are made by
    :func:`read_site` only.

    Returns
    -------
    dict
        A JSON-serialisable schema with ``$schema``, ``title`` and ``description``.
    """
    body = SiteFile.model_json_schema(schema_generator=_TomlJsonSchema)
    try:
        from siteexposure.readers.limit_tables import available_sets

        known = sorted(available_sets())
    except (ImportError, LimitsError):  # no readable limit tables: leave the ids open
        known = []
    if known:
        body["$defs"]["SiteTable"]["properties"]["limits"]["items"]["enum"] = known
    schema: dict[str, Any] = {
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "title": "siteexposure site file",
        "description": (
            "A site description for siteexposure screening (TOML). Positions are local "
            "metres east and north of site.origin and heights above site ground; azimuths "
            "are degrees clockwise from true north. Relative file paths start at the site "
            "file's folder. Results are screening estimates, not measurements."
        ),
    }
    schema.update({k: v for k, v in body.items() if k not in ("title", "description")})
    return schema
