"""The `point` command (being written)."""
