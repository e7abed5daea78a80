"""Renderers: they format analysis results and never compute statistics."""
