"""Imports every command module so that each registers itself on the app."""

from siteexposure.cli import limits_cmd  # noqa: F401
