"""Heedful: benchmarking and ablation harness for graph attention."""

import os

# Idle torch (OpenMP) threads sleep instead of spinning. On a busy machine spinning threads
# fight the other processes for the cores: a two-thread run of the demo's attention contender
# took 5.7 s per epoch spinning and 0.13 s sleeping. Read once, when torch loads; the user's
# own setting wins.
os.environ.setdefault("OMP_WAIT_POLICY", "PASSIVE")

__version__ = "0.1.0"
