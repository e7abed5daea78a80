"""Takes finished runs and data profiles; gives them back from the result store (SQLite)."""
