"""Imports every command module so that each registers itself on the app."""

from importlib import import_module

COMMAND_MODULES = (
    "limits_cmd",
    "distance_cmd",
    "point_cmd",
    "screen_cmd",
    "map_cmd",
    "report_cmd",
    "schema_cmd",
    "demo_cmd",
    "batch_cmd",
)

for _name in COMMAND_MODULES:
    import_module(f"siteexposure.cli.{_name}")
