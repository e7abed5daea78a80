"""The data section: where the graph comes from, chosen by `source`. Splits: splits.py."""

from __future__ import annotations

import hashlib
import math
import re
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any, ClassVar, Literal, Self

from pydantic import (
    Field,
    PrivateAttr,
    ValidationInfo,
    computed_field,
    field_validator,
    model_validator,
)

from harness.schema.base import StrictModel

TABLE_SUFFIXES = (".csv", ".parquet", ".pq")

# A `name` that PyG itself checks: passed through, and a failure becomes our one-line error.
NAME_CHECKED_BY_PYG = "a dataset name PyG's class knows"
# PyG dataset classes a suite may name, with the `name` values each accepts (None: no name).
# Only these are ever looked up in torch_geometric.datasets: a suite cannot import anything else.
PYG_DATASETS: dict[str, tuple[str, ...] | str | None] = {
    "KarateClub": None,
    "Planetoid": NAME_CHECKED_BY_PYG,
    "Amazon": ("Computers", "Photo"),
    "Coauthor": ("CS", "Physics"),
    "WikipediaNetwork": ("chameleon", "squirrel"),
    "WebKB": ("Cornell", "Texas", "Wisconsin"),
    "Actor": None,
    "HeterophilousGraphDataset": (
        "Roman-empire",
        "Amazon-ratings",
        "Minesweeper",
        "Tolokers",
        "Questions",
    ),
}
PygClass = Literal[
    "KarateClub",
    "Planetoid",
    "Amazon",
    "Coauthor",
    "WikipediaNetwork",
    "WebKB",
    "Actor",
    "HeterophilousGraphDataset",
]


def resolve_path(value: str, info: ValidationInfo) -> str:
    """A path relative to the suite file's folder (context "folder"), else to the working dir."""
    folder = (info.context or {}).get("folder", ".")
    return str((Path(folder) / Path(value).expanduser()).resolve())


_DIGESTS: dict[tuple[str, int, int], str] = {}
_ROWS: dict[tuple[str, int, int], int] = {}


def file_digest(path: str) -> str:
    """SHA-256 of a file's bytes, cached by (path, size, modification time)."""
    stat = Path(path).stat()
    cache_key = (path, stat.st_size, stat.st_mtime_ns)
    if cache_key not in _DIGESTS:
        digest = hashlib.sha256()
        with open(path, "rb") as handle:
            for block in iter(lambda: handle.read(1 << 20), b""):
                digest.update(block)
        _DIGESTS[cache_key] = digest.hexdigest()[:16]
    return _DIGESTS[cache_key]


def table_rows(path: str) -> int:
    """Data rows of a CSV (lines after the header) or Parquet file (from its footer)."""
    stat = Path(path).stat()
    cache_key = (path, stat.st_size, stat.st_mtime_ns)
    if cache_key not in _ROWS:
        if Path(path).suffix.lower() == ".csv":
            with open(path, "rb") as handle:
                lines = sum(block.count(b"\n") for block in iter(lambda: handle.read(1 << 20), b""))
            _ROWS[cache_key] = max(lines - 1, 0)
        else:
            import pyarrow.parquet  # only suites with Parquet tables need it

            _ROWS[cache_key] = pyarrow.parquet.ParquetFile(path).metadata.num_rows
    return _ROWS[cache_key]


@dataclass(frozen=True)
class GraphSize:
    """What a memory estimate needs to know of a graph: directed edges (both directions counted)."""

    nodes: int
    edges: int
    features: int
    classes: int

    @property
    def average_degree(self) -> float:
        return self.edges / max(self.nodes, 1)


class DataSource(StrictModel):
    """What every data section declares about its graph before it is loaded."""

    # whether loading generates the graph (its peak memory is then estimated before it runs)
    generated: ClassVar[bool] = False
    # whether it gives a collection of small graphs, one label each (graph classification)
    many_graphs: ClassVar[bool] = False
    # what `pinned` read from the data files; None: read them whenever asked
    _file_facts: dict[str, Any] | None = PrivateAttr(None)

    def file_fact(self, name: str, read: Callable[[], Any]) -> Any:
        """A fact about the section's files (a content digest, a row count): read now, or the
        value a pinned copy kept."""
        if self._file_facts is not None and name in self._file_facts:
            return self._file_facts[name]
        return read()

    def pinned(self) -> Self:
        """A copy that keeps the facts read from its files now (content digests, declared
        edges), so it names the same data, run keys included, on a machine that cannot read
        those files or reads other files at the same paths (a cluster worker)."""
        facts = {"declared_edges": self.declared_edges()}
        if "content_digest" in type(self).model_computed_fields:
            facts["content_digest"] = self.content_digest
        copy = self.model_copy()
        copy._file_facts = facts
        return copy

    def declared_edges(self) -> int | None:
        """Directed edges the section will give, known before loading it; None if unknown."""
        return None

    def declared_size(self) -> GraphSize | None:
        """The whole size of the graph, when the section alone tells it."""
        return None

    def declares_edge_attributes(self) -> bool | None:
        """Whether the graph will carry edge attributes; None when unknown before loading."""
        return None


class SyntheticData(DataSource):
    """Contextual stochastic block model: planted classes, homophilous edges, Gaussian features."""

    generated: ClassVar[bool] = True
    keyed_when_set: ClassVar[frozenset[str]] = frozenset({"edge_types"})

    source: Literal["synthetic"] = Field(
        description="synthetic: a contextual stochastic block model generated from a seed.",
    )
    nodes: int = Field(1000, ge=4, le=2_000_000, description="Number of nodes.")
    classes: int = Field(4, ge=2, le=100, description="Number of planted classes.")
    average_degree: float = Field(
        8.0,
        gt=0,
        le=1000,
        description="Mean number of neighbours per node.",
    )
    edge_homophily: float = Field(
        0.7,
        ge=0,
        le=1,
        description="Share of edges that join two nodes of the same class.",
    )
    feature_dimension: int = Field(
        16,
        ge=1,
        le=10_000,
        description="Number of Gaussian feature columns.",
    )
    feature_signal: float = Field(
        1.0,
        ge=0,
        le=100,
        description=(
            "Distance between the class means of the features, in standard "
            "deviations; 0: features carry no label information."
        ),
    )
    class_balance: list[float] | None = Field(
        None,
        description=(
            "Relative class sizes, one positive weight per class; default: equal classes."
        ),
    )
    graph_seed: int = Field(
        0,
        ge=0,
        description="Seed of the generated graph (the same for every run seed).",
    )
    edge_types: int = Field(
        1,
        ge=1,
        le=16,
        description=(
            "Typed edges: with 2 or more, every edge gets one of this many types (a one-hot "
            "edge attribute, column edge_type); only type 0 edges follow edge_homophily, the "
            "others join uniformly random nodes. 1: untyped edges, no edge attributes."
        ),
    )

    @model_validator(mode="after")
    def _balance_matches_classes(self) -> SyntheticData:
        balance = self.class_balance
        if balance is not None:
            if len(balance) != self.classes:
                raise ValueError(
                    f"class_balance has {len(balance)} entries; allowed: one per class "
                    f"({self.classes})"
                )
            if any(not 0 < b < math.inf for b in balance):  # NaN fails every comparison
                raise ValueError("class_balance entries must all be finite numbers > 0")
        weights = balance or [1.0] * self.classes
        shares = [w / sum(weights) for w in weights]
        smallest = min(range(self.classes), key=shares.__getitem__)
        if shares[smallest] * self.nodes < 1:  # an empty class breaks sampling and splitting
            raise ValueError(
                f"class {smallest} gets {shares[smallest] * self.nodes:.2g} of {self.nodes} "
                "nodes; allowed: nodes and class_balance that give every class at least one node"
            )
        if self.average_degree >= self.nodes - 1:
            raise ValueError(f"average_degree must be below nodes - 1 ({self.nodes - 1})")
        return self

    def declared_edges(self) -> int:
        return round(self.nodes * self.average_degree)

    def declares_edge_attributes(self) -> bool | None:
        return self.edge_types > 1

    def declared_size(self) -> GraphSize:
        return GraphSize(self.nodes, self.declared_edges(), self.feature_dimension, self.classes)


class TableData(DataSource):
    """A nodes file and an edges file, CSV or Parquet; paths are relative to the suite file.

    Nodes: an id column, feature columns (a list, a prefix, or else every other column), a label
    column (empty cells are unlabelled nodes) and an optional split column (train, validation,
    test, or empty). Edges: source and target ids and an optional weight column.
    """

    keyed_when_set: ClassVar[frozenset[str]] = frozenset(
        {"edge_feature_columns", "edge_feature_prefix", "standardise_edge_features"}
    )

    source: Literal["tables"] = Field(
        description="tables: a nodes file and an edges file, CSV or Parquet.",
    )
    nodes: str = Field(
        description="Nodes file (.csv, .parquet or .pq), relative to the suite file.",
    )
    edges: str = Field(
        description="Edges file (.csv, .parquet or .pq), relative to the suite file.",
    )
    id_column: str = Field(
        "id",
        description="Nodes column of unique node ids (strings or integers).",
    )
    feature_columns: list[str] | None = Field(
        None,
        description=(
            "Nodes columns holding the features; default: every column but the id, "
            "label and split columns."
        ),
    )
    feature_prefix: str | None = Field(
        None,
        description=(
            "Take as features every nodes column whose name starts with this (instead"
            " of feature_columns)."
        ),
    )
    label_column: str = Field(
        "label",
        description=(
            "Nodes column of class labels; an empty cell is an unlabelled node, never split."
        ),
    )
    split_column: str | None = Field(
        None,
        description=(
            "Nodes column saying train, validation, test or empty, read by split method column."
        ),
    )
    source_column: str = Field("source", description="Edges column of the source node id.")
    target_column: str = Field("target", description="Edges column of the target node id.")
    weight_column: str | None = Field(
        None,
        description=(
            "Edges column of edge weights, kept as edge_weight; today's contenders do"
            " not use weights."
        ),
    )
    edge_feature_columns: list[str] | None = Field(
        None,
        description=(
            "Edges columns holding edge attributes: text columns are one-hot encoded (one "
            "column per value), numeric ones kept as numbers; default: no edge attributes."
        ),
    )
    edge_feature_prefix: str | None = Field(
        None,
        description=(
            "Take as edge attributes every edges column whose name starts with this "
            "(instead of edge_feature_columns)."
        ),
    )
    standardise_edge_features: bool = Field(
        False,
        description="Rescale each numeric edge attribute to mean 0 and standard deviation 1.",
    )
    directed: bool = Field(
        False,
        description=("false: every edge also runs the other way; true: edges are taken as given."),
    )
    # rescale each feature column to mean 0, standard deviation 1
    standardise: bool = Field(
        False,
        description="Rescale each feature column to mean 0 and standard deviation 1.",
    )

    @field_validator("nodes", "edges")
    @classmethod
    def _existing_table_file(cls, value: str, info: ValidationInfo) -> str:
        path = resolve_path(value, info)
        if Path(path).suffix.lower() not in TABLE_SUFFIXES:
            if Path(value).suffix.lower() in TABLE_SUFFIXES:  # the name is fine: a link is not
                raise ValueError(
                    f"a symbolic link to {path}, which is what would be read; "
                    f"allowed: a link to a file ending in {', '.join(TABLE_SUFFIXES)}"
                )
            raise ValueError(f"allowed: a file ending in {', '.join(TABLE_SUFFIXES)}")
        if not Path(path).is_file():
            raise ValueError(f"file not found at {path}; allowed: an existing CSV or Parquet file")
        return path

    @field_validator("feature_columns", "edge_feature_columns")
    @classmethod
    def _some_columns(cls, value: list[str] | None) -> list[str] | None:
        if value is not None and (not value or len(set(value)) != len(value)):
            raise ValueError("allowed: a non-empty list of distinct column names")
        return value

    @model_validator(mode="after")
    def _one_way_to_name_features(self) -> TableData:
        if self.feature_columns is not None and self.feature_prefix is not None:
            raise ValueError("give feature_columns or feature_prefix, not both")
        if self.edge_feature_columns is not None and self.edge_feature_prefix is not None:
            raise ValueError("give edge_feature_columns or edge_feature_prefix, not both")
        return self

    @computed_field  # part of the run key: changed files mean new runs
    @property
    def content_digest(self) -> str:
        return self.file_fact(
            "content_digest", lambda: file_digest(self.nodes) + file_digest(self.edges)
        )

    def declared_edges(self) -> int:
        """Edge rows, twice when undirected (each row is both directions)."""
        both_ways = 1 if self.directed else 2
        return self.file_fact("declared_edges", lambda: table_rows(self.edges) * both_ways)

    def declares_edge_attributes(self) -> bool | None:
        return self.edge_feature_columns is not None or self.edge_feature_prefix is not None


class KarateData(DataSource):
    """Zachary's karate club (Zachary, 1977), networkx's copy: 34 members, two factions."""

    source: Literal["karate"] = Field(
        description=(
            "karate: Zachary's karate club (networkx's copy), 34 members in two factions."
        ),
    )

    def declares_edge_attributes(self) -> bool | None:
        return False

    def declared_edges(self) -> int:
        return 0  # small enough to count as none


class DigitsData(DataSource):
    """scikit-learn's digits (UCI optical recognition of handwritten digits) as a k-NN graph."""

    source: Literal["digits"] = Field(
        description=("digits: scikit-learn's handwritten digits as a k-nearest-neighbour graph."),
    )
    neighbours: int = Field(10, ge=1, le=100, description="k of the k-nearest-neighbour graph.")

    def declares_edge_attributes(self) -> bool | None:
        return False

    def declared_edges(self) -> int:
        return 0  # small enough to count as none


class PygData(DataSource):
    """A PyG dataset class from the allow-list PYG_DATASETS, stored under a local root folder.
    Its edges are not counted without loading it."""

    source: Literal["pyg"] = Field(
        description="pyg: a dataset class of PyTorch Geometric, from an allow-list.",
    )
    dataset: PygClass = Field(description="The PyG dataset class.")
    name: str | None = Field(
        None,
        description=(
            "The dataset within the class, where the class has several (e.g. "
            "Minesweeper for HeterophilousGraphDataset)."
        ),
    )
    root: str = Field(
        "datasets",
        description="Local folder of the dataset's files, relative to the suite file.",
    )
    download: bool = Field(
        False,
        description="Fetch missing files; otherwise missing files are an error listing them.",
    )
    # load files PyG would unpickle although Heedful did not see them made (harness/data/
    # pyg_folder.py); says nothing about the result, so it enters no key or hash
    trusted: bool = Field(
        False,
        exclude=True,
        description=(
            "Load files PyG would unpickle although Heedful's manifest does not list "
            "them; only for a folder whose files you know the origin of. Enters no "
            "run key."
        ),
    )

    @field_validator("root")
    @classmethod
    def _resolve_root(cls, value: str, info: ValidationInfo) -> str:
        return resolve_path(value, info)

    @model_validator(mode="after")
    def _name_fits_class(self) -> PygData:
        names = PYG_DATASETS[self.dataset]
        if names is None and self.name is not None:
            raise ValueError(f"{self.dataset} takes no name; allowed: leave 'name' out")
        if names == NAME_CHECKED_BY_PYG:
            # the name becomes a folder under root: letters, digits, '-' and '_' only
            if self.name is None or not re.fullmatch(r"[A-Za-z0-9_-]{1,64}", self.name):
                raise ValueError(
                    f"name {self.name!r} for {self.dataset}; allowed: {names} (letters, "
                    "digits, '-' and '_', at most 64)"
                )
        elif names is not None and self.name not in names:
            raise ValueError(
                f"name {self.name!r} is not one of {self.dataset}'s; allowed: {', '.join(names)}"
            )
        return self
