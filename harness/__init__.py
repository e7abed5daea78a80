"""Heedful: benchmarking and ablation harness for graph attention."""

__version__ = "0.1.0"
