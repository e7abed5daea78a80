"""Per-graph labels and split parts read from a column, and one-hot codes of categorical
features. A series' index is the row number in its file, so every error names that row."""

from __future__ import annotations

import numpy as np
import pandas as pd
import torch

from harness.data.assemble import SPLIT_PARTS
from harness.data.tables import row_name, shown
from harness.errors import InputError


def graph_label_codes(values: pd.Series, column: str, path: str) -> tuple[np.ndarray, list[str]]:
    """Class index per graph and the class names in sorted order; every graph needs a label."""
    missing = values.isna().to_numpy()
    if missing.any():
        row = int(values.index[np.argmax(missing)])
        raise InputError(
            f"{row_name(path, row)}: column '{column}' is empty; allowed: a label for every graph"
        )
    if pd.api.types.is_float_dtype(values) and np.all(values % 1 == 0):
        values = values.astype("int64")  # whole-number labels read as floats
    codes, names = pd.factorize(values, sort=True)
    if len(names) < 2:
        raise InputError(
            f"{shown(path)}: column '{column}' holds one class ({names[0]!r}); allowed: two or "
            "more classes"
        )
    return np.array(codes, dtype=np.int64), [str(name) for name in names]


def graph_split_codes(values: pd.Series, column: str, path: str) -> np.ndarray:
    """0 train, 1 validation, 2 test, -1 for an empty cell."""
    text = values.astype("string").str.strip().str.lower()
    codes = text.map(SPLIT_PARTS).astype("Int64")
    unknown = (codes.isna() & text.notna() & (text != "")).to_numpy()
    if unknown.any():
        position = int(np.argmax(unknown))
        raise InputError(
            f"{row_name(path, int(values.index[position]))}: column '{column}' holds "
            f"{values.iloc[position]!r}; allowed: train, validation, test or empty"
        )
    return np.array(codes.fillna(-1).to_numpy(dtype=np.int64))


def one_hot_codes(codes: torch.Tensor, names: tuple[str, ...]) -> tuple[torch.Tensor, list[str]]:
    """Each categorical column one-hot over the values it holds (sorted): float32 features and
    their names, `name=value`."""
    blocks, columns = [], []
    for position, name in enumerate(names):
        values, inverse = torch.unique(codes[:, position].long(), return_inverse=True)
        blocks.append(torch.nn.functional.one_hot(inverse, len(values)).float())
        columns += [f"{name}={int(value)}" for value in values]
    if not blocks:
        return torch.empty(len(codes), 0), columns
    return torch.cat(blocks, dim=1), columns
