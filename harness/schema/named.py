"""Functions the registries name by "module:function" path, imported on first use: declaring a
task or a model kind imports neither torch nor scikit-learn."""

from __future__ import annotations

import importlib
from functools import cache
from typing import Any


@cache
def imported(path: str) -> Any:
    """The object a "module:name" path names."""
    module, _, name = path.partition(":")
    return getattr(importlib.import_module(module), name)
