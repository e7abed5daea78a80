"""Takes validated command inputs; gives each command's outcome (what ran, what was reused,
the analysis, the exit status) as a value for a renderer."""
