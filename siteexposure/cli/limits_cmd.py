"""The `limits` command (being written)."""
