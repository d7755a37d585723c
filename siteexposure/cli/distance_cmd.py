"""The `distance` command (being written)."""
