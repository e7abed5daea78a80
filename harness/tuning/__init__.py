"""Takes a suite with [tuning]; gives equal-budget studies and seeded repeats of the best."""
