"""Takes a suite's current runs and a baseline; gives baseline files, outcomes and history rows."""
