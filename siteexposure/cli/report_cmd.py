"""The `report` command (being written)."""
