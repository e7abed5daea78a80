"""One run: takes a RunSpec; gives a fitted model's RunResult with metrics and diagnostics."""
