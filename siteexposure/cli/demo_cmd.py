"""The `demo` command (being written)."""
