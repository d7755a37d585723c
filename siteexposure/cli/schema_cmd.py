"""The `schema` command (being written)."""
