"""User graphs from a nodes file and an edges file (CSV or Parquet), checked column-wise.

Every check works on whole columns (pandas and numpy), never a Python loop over rows, and every
error names the file and the row or column at fault. Rows are counted from 1 after the header;
for CSV files the line number is given as well.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
from sklearn.preprocessing import StandardScaler
from torch_geometric.data import Data

from harness.data.assemble import SPLIT_PARTS, assemble
from harness.data.edge_attributes import attach_edge_types, read_edge_attributes
from harness.data.table_cells import feature_matrix, need_columns, no_missing, row_name, shown
from harness.errors import InputError
from harness.schema.data import TableData


def read_table(path: str, what: str, text_columns: list[str]) -> pd.DataFrame:
    """A whole CSV or Parquet file; `text_columns` are read as strings (ids)."""
    name = shown(path)
    if path.lower().endswith(".csv"):
        try:
            frame = pd.read_csv(path, dtype={c: str for c in text_columns}, keep_default_na=True)
        except pd.errors.EmptyDataError:
            raise InputError(
                f"{name}: the file is empty; allowed: a header row and {what}"
            ) from None
        except (pd.errors.ParserError, UnicodeDecodeError, OSError) as error:
            first = str(error).strip().splitlines()[0]
            raise InputError(f"{name}: cannot read CSV file ({first})") from None
    else:
        try:
            frame = pd.read_parquet(path)
        except Exception as error:  # pyarrow raises several types for damaged files
            first = (str(error).strip().splitlines() or [error.__class__.__name__])[0]
            raise InputError(
                f"{name}: cannot read Parquet file, it is truncated or not Parquet ({first})"
            ) from None
        for column in text_columns:
            if column in frame.columns:
                frame[column] = frame[column].astype("string").astype(object)
    if len(frame) == 0:
        raise InputError(f"{name}: no rows after the header; allowed: {what}")
    return frame


def feature_names(frame: pd.DataFrame, spec: TableData) -> list[str]:
    if spec.feature_columns is not None:
        need_columns(frame, spec.nodes, spec.feature_columns, "feature_columns")
        return list(spec.feature_columns)
    reserved = {spec.id_column, spec.label_column, spec.split_column}  # labels are no feature
    columns = [c for c in frame.columns if c not in reserved]
    if spec.feature_prefix is not None:
        columns = [c for c in columns if str(c).startswith(spec.feature_prefix)]
    if not columns:
        how = f"starting with '{spec.feature_prefix}'" if spec.feature_prefix else "besides id"
        raise InputError(f"{shown(spec.nodes)}: no feature columns {how}; allowed: one or more")
    return columns


def label_codes(frame: pd.DataFrame, spec: TableData) -> tuple[np.ndarray, list[str], str | None]:
    """Class index per node (-1 for an empty label), the class names in sorted order, and what
    keeps the labels from serving a task that reads them (None when nothing does). Tasks that
    read no labels (link prediction) need no label column, nor two classes in it; one the
    suite names must be there."""
    if spec.label_column not in frame.columns and "label_column" not in spec.model_fields_set:
        present = ", ".join(map(str, frame.columns[:12]))
        problem = (
            f"{shown(spec.nodes)}: column '{spec.label_column}' (data.label_column) not found; "
            f"columns present: {present}"
        )
        return np.full(len(frame), -1, dtype=np.int64), [], problem
    values = frame[spec.label_column]
    if pd.api.types.is_float_dtype(values) and np.all(values.dropna() % 1 == 0):
        values = values.astype("Int64")  # integer labels with blanks were read as floats
    codes, names = pd.factorize(values, sort=True, use_na_sentinel=True)
    problem = None
    if len(names) < 2:
        found = f"only {names[0]!r}" if len(names) else "none"
        problem = (
            f"{shown(spec.nodes)}: column '{spec.label_column}' holds fewer than two label "
            f"classes ({found}); allowed: two or more"
        )
    return codes.astype(np.int64), [str(n) for n in names], problem


def split_codes(frame: pd.DataFrame, spec: TableData) -> np.ndarray:
    """0 train, 1 validation, 2 test, -1 for an empty cell."""
    values = frame[spec.split_column].astype("string").str.strip().str.lower()
    codes = values.map(SPLIT_PARTS).astype("Int64")
    unknown = (codes.isna() & values.notna() & (values != "")).to_numpy()
    if unknown.any():
        row = int(np.argmax(unknown))
        raise InputError(
            f"{row_name(spec.nodes, row)}: column '{spec.split_column}' holds "
            f"{frame[spec.split_column].iloc[row]!r}; allowed: train, validation, test or empty"
        )
    return codes.fillna(-1).to_numpy(dtype=np.int64)


def node_index(ids: pd.Series, path: str, id_column: str) -> pd.Index:
    """Ids as an index; repeated ids are an error naming both rows."""
    no_missing(ids, path, f"node id (column '{id_column}')")
    repeated = ids.duplicated().to_numpy()
    if repeated.any():
        row = int(np.argmax(repeated))
        first = int(np.argmax((ids == ids.iloc[row]).to_numpy()))
        raise InputError(
            f"{row_name(path, row)}: node id {ids.iloc[row]!r} repeats row {first + 1}; "
            f"allowed: unique ids in column '{id_column}'"
        )
    return pd.Index(ids)


def endpoint_positions(
    values: pd.Series, index: pd.Index, spec: TableData, role: str
) -> np.ndarray:
    column = spec.source_column if role == "source" else spec.target_column
    no_missing(values, spec.edges, f"{role} (column '{column}')")
    positions = index.get_indexer(values)
    unknown = positions < 0
    if unknown.any():
        row = int(np.argmax(unknown))
        raise InputError(
            f"{row_name(spec.edges, row)}: {role} {values.iloc[row]!r} (column '{column}') is not "
            f"a node id in {shown(spec.nodes)}; allowed: ids from column '{spec.id_column}'"
        )
    return positions.astype(np.int64)


def load_tables(spec: TableData) -> Data:
    """The graph of a nodes file and an edges file; errors name the file and row or column."""
    nodes = read_table(spec.nodes, "one row per node", [spec.id_column])
    need_columns(nodes, spec.nodes, [spec.id_column], "id_column")
    if "label_column" in spec.model_fields_set:  # named: it must be there, whatever the task
        need_columns(nodes, spec.nodes, [spec.label_column], "label_column")
    if spec.split_column:
        need_columns(nodes, spec.nodes, [spec.split_column], "split_column")
    index = node_index(nodes[spec.id_column], spec.nodes, spec.id_column)
    features = feature_matrix(nodes, feature_names(nodes, spec), spec.nodes)
    if spec.standardise:  # constant columns stay at 0
        features = StandardScaler().fit_transform(features).astype(np.float32)
    labels, class_names, label_problem = label_codes(nodes, spec)
    split_part = split_codes(nodes, spec) if spec.split_column else None

    edges = read_table(spec.edges, "one row per edge", [spec.source_column, spec.target_column])
    need_columns(edges, spec.edges, [spec.source_column], "source_column")
    need_columns(edges, spec.edges, [spec.target_column], "target_column")
    source = endpoint_positions(edges[spec.source_column], index, spec, "source")
    target = endpoint_positions(edges[spec.target_column], index, spec, "target")
    weight = None
    if spec.weight_column is not None:
        need_columns(edges, spec.edges, [spec.weight_column], "weight_column")
        weight = feature_matrix(edges, [spec.weight_column], spec.edges, "weight")[:, 0]
    attributes = read_edge_attributes(edges, spec)
    data = assemble(
        features,
        source,
        target,
        labels,
        directed=spec.directed,
        weight=weight,
        edge_attr=None if attributes is None else attributes.matrix,
        split_part=split_part,
        class_names=class_names,
        node_ids=[str(name) for name in index],
    )
    data.split_origin = f"{shown(spec.nodes)}: column '{spec.split_column}'"
    data.label_problem = label_problem
    if attributes is not None:
        names, columns = attributes.names, attributes.type_columns
        attach_edge_types(data, names, columns, attributes.type_names)
    return data
