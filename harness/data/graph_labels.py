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
    their names, `name=value`. Codes are small integers, so counting finds the values in one
    pass (a sort per column took most of reading a large cached file)."""
    positions, columns, width = [], [], 0
    for position, name in enumerate(names):
        column = codes[:, position].long()
        low = int(column.min()) if len(column) else 0
        present = torch.bincount(column - low) > 0
        values = torch.nonzero(present).flatten() + low
        positions.append((torch.cumsum(present, 0) - 1)[column - low] + width)
        width += len(values)
        columns += [f"{name}={int(value)}" for value in values]
    features = torch.zeros(len(codes), width)
    if positions:
        features.scatter_(1, torch.stack(positions, dim=1), 1.0)
    return features, columns
