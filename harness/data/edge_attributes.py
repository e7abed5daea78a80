"""Edge attributes of a table: text columns one-hot encoded, numeric ones kept (optionally
standardised), every cell checked column-wise with errors naming the file, row and column.

A text column is categorical: one attribute column per distinct value, named `column=value`,
values in sorted order (as pandas.get_dummies). A text column most of whose cells read as
numbers is a numeric column with a bad cell, reported as such. The first categorical column
gives the edge types the attention diagnostic groups by (`edge_type_names`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
import torch
from sklearn.preprocessing import StandardScaler
from torch_geometric.data import Data

from harness.data.table_cells import feature_matrix, need_columns, no_missing, shown
from harness.errors import InputError
from harness.schema.data import TableData


@dataclass(frozen=True)
class EdgeAttributes:
    """One row per edge row of the table; `type_columns` are the one-hot columns of the first
    categorical attribute (empty without one), `type_names` its values."""

    matrix: np.ndarray
    names: list[str]
    type_columns: list[int]
    type_names: list[str]


def attribute_columns(frame: pd.DataFrame, spec: TableData) -> list[str]:
    """The edges columns the suite names as attributes (a list or a prefix); [] for none."""
    if spec.edge_feature_columns is not None:
        need_columns(frame, spec.edges, spec.edge_feature_columns, "edge_feature_columns")
        return list(spec.edge_feature_columns)
    if spec.edge_feature_prefix is None:
        return []
    reserved = {spec.source_column, spec.target_column, spec.weight_column}
    columns = [
        c
        for c in frame.columns
        if str(c).startswith(spec.edge_feature_prefix) and c not in reserved
    ]
    if not columns:
        raise InputError(
            f"{shown(spec.edges)}: no edge attribute columns starting with "
            f"'{spec.edge_feature_prefix}' (data.edge_feature_prefix); allowed: one or more"
        )
    return columns


def is_categorical(values: pd.Series) -> bool:
    """Text whose cells mostly do not read as numbers (else: a numeric column, checked as one)."""
    if pd.api.types.is_numeric_dtype(values) or pd.api.types.is_bool_dtype(values):
        return False
    numbers = pd.to_numeric(values, errors="coerce").notna()
    return bool(numbers.mean() < 0.5)


def one_hot(values: pd.Series, column: str) -> pd.DataFrame:
    """One column per distinct value, sorted, named `column=value`."""
    return pd.get_dummies(values.astype(str), prefix=column, prefix_sep="=", dtype=np.float32)


def read_edge_attributes(frame: pd.DataFrame, spec: TableData) -> EdgeAttributes | None:
    """The attribute matrix of the edges table, or None when the suite names no attributes."""
    columns = attribute_columns(frame, spec)
    if not columns:
        return None
    parts: list[np.ndarray] = []
    names: list[str] = []
    type_columns: list[int] = []
    type_names: list[str] = []
    for column in columns:
        values = frame[column]
        no_missing(values, spec.edges, f"edge attribute (column '{column}')")
        if is_categorical(values):
            encoded = one_hot(values, column)
            if not type_columns:
                type_columns = list(range(len(names), len(names) + encoded.shape[1]))
                type_names = [name.split("=", 1)[1] for name in encoded.columns]
            parts.append(encoded.to_numpy())
            names.extend(encoded.columns)
            continue
        numbers = feature_matrix(frame, [column], spec.edges, "edge attribute")
        if spec.standardise_edge_features:  # a constant column stays at 0
            numbers = StandardScaler().fit_transform(numbers).astype(np.float32)
        parts.append(numbers)
        names.append(column)
    return EdgeAttributes(np.hstack(parts).astype(np.float32), names, type_columns, type_names)


def attach_edge_types(data: Data, names: list[str], columns: list[int], types: list[str]) -> None:
    """Record on the graph what its `edge_attr` columns are and which of them are edge types."""
    data.edge_attribute_names = names
    data.edge_type_columns = columns
    data.edge_type_names = types


def edge_types(data: Data, edge_index: torch.Tensor) -> torch.Tensor | None:
    """The type of each edge in `edge_index` (-1 for a pair not among the graph's edges, such
    as a self-loop or a farther hop); None when the graph has no typed edges."""
    columns = getattr(data, "edge_type_columns", None)
    if not columns or getattr(data, "edge_attr", None) is None:
        return None
    nodes = data.num_nodes
    own = data.edge_index[0] * nodes + data.edge_index[1]
    order = torch.argsort(own)
    wanted = edge_index[0] * nodes + edge_index[1]
    position = torch.searchsorted(own[order], wanted).clamp(max=max(len(own) - 1, 0))
    found = own[order][position] == wanted
    kinds = data.edge_attr[:, columns].argmax(dim=1)[order][position]
    return torch.where(found, kinds, torch.full_like(kinds, -1))
