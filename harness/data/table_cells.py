"""Cell checks shared by the table readers: every check works on whole columns, and every
error names the file and the row or column at fault (rows counted from 1 after the header; for
CSV files the line number as well)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from harness.errors import InputError


def shown(path: str) -> str:
    """A path as the user most likely wrote it: relative to the working folder when inside it."""
    try:
        return str(Path(path).relative_to(Path.cwd()))
    except ValueError:
        return path


def row_name(path: str, row: int) -> str:
    """`file: row N` (and the line for CSV, where the header is line 1)."""
    line = f" (line {row + 2})" if path.lower().endswith(".csv") else ""
    return f"{shown(path)}: row {row + 1}{line}"


def need_columns(frame: pd.DataFrame, path: str, columns: list[str], key: str) -> None:
    for column in columns:
        if column not in frame.columns:
            present = ", ".join(map(str, frame.columns[:12]))
            raise InputError(
                f"{shown(path)}: column '{column}' (data.{key}) not found; columns present: "
                f"{present}"
            )


def no_missing(values: pd.Series, path: str, what: str) -> None:
    missing = values.isna().to_numpy()
    if missing.any():
        row = int(np.argmax(missing))
        raise InputError(f"{row_name(path, row)}: empty {what}; allowed: a value in every row")


def feature_matrix(
    frame: pd.DataFrame, columns: list[str], path: str, what: str = "feature"
) -> np.ndarray:
    """Numeric, finite features as float32; names the first bad column and row."""
    for column in columns:
        values = frame[column]
        if not (pd.api.types.is_numeric_dtype(values) or pd.api.types.is_bool_dtype(values)):
            bad = (pd.to_numeric(values, errors="coerce").isna() & values.notna()).to_numpy()
            row = int(np.argmax(bad))
            raise InputError(
                f"{shown(path)}: column '{column}' is not numeric (row {row + 1} holds "
                f"{values.iloc[row]!r}); allowed: numbers in {what} columns"
            )
    matrix = frame[columns].to_numpy(dtype=np.float64)
    bad = ~np.isfinite(matrix)
    if bad.any():
        row, column = (int(i) for i in np.argwhere(bad)[0])
        kind = "NaN or empty" if np.isnan(matrix[row, column]) else "infinite"
        raise InputError(
            f"{row_name(path, row)}: column '{columns[column]}' holds a {kind} {what}; "
            "allowed: finite numbers"
        )
    return matrix.astype(np.float32)
