"""Takes stored runs; gives statistics, verdicts, effects, costs and summaries as values."""
