"""The `screen` command (being written)."""
