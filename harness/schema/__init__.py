"""Pydantic schema of suite files: the only place that validates user input."""
