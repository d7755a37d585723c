"""The `map` command (being written)."""
