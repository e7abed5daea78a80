"""Data and split sections for collections of small graphs, one label per graph.

Sources: `molecules` (SMILES strings in a table, parsed by RDKit), `graph_tables` (nodes, edges
and graphs tables joined by a graph-id column), `synthetic_graphs` (planted motifs on random
trees) and `graph_atlas` (networkx's atlas of all graphs with up to seven nodes). Their split
methods `scaffold` and `size` are in schema/splits.py.
"""

from __future__ import annotations

from pathlib import Path
from typing import ClassVar, Literal

from pydantic import Field, ValidationInfo, computed_field, field_validator, model_validator

from harness.schema.data import TABLE_SUFFIXES, DataSource, file_digest, resolve_path

MOTIFS = ("cycle", "star", "house", "clique")


def table_file(value: str, info: ValidationInfo) -> str:
    """An existing CSV or Parquet file, resolved against the suite's folder."""
    path = resolve_path(value, info)
    if Path(path).suffix.lower() not in TABLE_SUFFIXES:
        raise ValueError(f"allowed: a file ending in {', '.join(TABLE_SUFFIXES)}")
    if not Path(path).is_file():
        raise ValueError(f"file not found at {path}; allowed: an existing CSV or Parquet file")
    return path


class GraphsSource(DataSource):
    """A data section that gives many small graphs, one label each."""

    many_graphs: ClassVar[bool] = True

    def declares_edge_attributes(self) -> bool | None:
        return False  # molecules say otherwise: their bonds


class MoleculeData(GraphsSource):
    """A table with one molecule per row: a SMILES column, a label column, an optional split
    column (train, validation, test or empty). Atoms become nodes and bonds edges (PyG's
    `from_rdmol`); bond features are kept as edge attributes."""

    source: Literal["molecules"] = Field(description="Molecules given as SMILES strings.")
    file: str = Field(description="CSV or Parquet file, relative to the suite file.")
    smiles_column: str = Field("smiles", description="Column holding each row's SMILES.")
    label_column: str = Field("label", description="Column holding each molecule's class.")
    split_column: str | None = Field(
        None, description="Optional column of train / validation / test / empty per row."
    )
    invalid_rows: Literal["error", "skip"] = Field(
        "error",
        description="A SMILES string RDKit cannot parse: an error naming the row, or skipped "
        "and counted.",
    )

    @field_validator("file")
    @classmethod
    def _existing_file(cls, value: str, info: ValidationInfo) -> str:
        return table_file(value, info)

    @computed_field(description="Content digest of the file; part of the run key.")
    @property
    def content_digest(self) -> str:
        return self.file_fact("content_digest", lambda: file_digest(self.file))

    def declares_edge_attributes(self) -> bool | None:
        return True  # bond type, stereo and conjugation, one-hot


class GraphTablesData(GraphsSource):
    """Three tables joined by a graph-id column: nodes (graph id, node id, feature columns),
    edges (graph id, source, target) and graphs (graph id, label, optional split column).
    Node ids need only be unique within their graph; edges join nodes of one graph."""

    source: Literal["graph_tables"] = Field(description="Many graphs from three tables.")
    nodes: str = Field(description="Nodes file (CSV or Parquet), relative to the suite file.")
    edges: str = Field(description="Edges file (CSV or Parquet), relative to the suite file.")
    graphs: str = Field(description="Graphs file (CSV or Parquet), relative to the suite file.")
    graph_column: str = Field("graph", description="Graph-id column, in all three tables.")
    id_column: str = Field("id", description="Node-id column of the nodes table.")
    feature_columns: list[str] | None = Field(
        None, description="Node feature columns; default every column besides the ids."
    )
    feature_prefix: str | None = Field(
        None, description="Use the node columns whose names start with this text."
    )
    source_column: str = Field("source", description="Edge source column.")
    target_column: str = Field("target", description="Edge target column.")
    label_column: str = Field("label", description="Label column of the graphs table.")
    split_column: str | None = Field(None, description="Optional split column of the graphs table.")
    directed: bool = Field(False, description="Keep edge directions (default: both ways).")
    standardise: bool = Field(
        False, description="Rescale each node feature column to mean 0, deviation 1."
    )

    @field_validator("nodes", "edges", "graphs")
    @classmethod
    def _existing_files(cls, value: str, info: ValidationInfo) -> str:
        return table_file(value, info)

    @model_validator(mode="after")
    def _one_way_to_name_features(self) -> GraphTablesData:
        if self.feature_columns is not None and self.feature_prefix is not None:
            raise ValueError("give feature_columns or feature_prefix, not both")
        return self

    @computed_field(description="Content digest of the three files; part of the run key.")
    @property
    def content_digest(self) -> str:
        files = (self.nodes, self.edges, self.graphs)
        return self.file_fact("content_digest", lambda: "".join(map(file_digest, files)))


class MotifGraphsData(GraphsSource):
    """Seeded random trees, each with one motif attached; the class is which motif.

    Node features: Gaussian noise, plus a class mean of norm `feature_signal` on the motif's
    nodes (0: only the structure tells the classes apart). `edge_noise` adds that share of the
    graph's edge count as random extra edges.
    """

    source: Literal["synthetic_graphs"] = Field(description="Planted-motif graphs.")
    graphs: int = Field(600, ge=4, le=1_000_000, description="How many graphs.")
    motifs: list[Literal["cycle", "star", "house", "clique"]] = Field(
        list(MOTIFS), description="The classes: which motifs are planted, one per class."
    )
    tree_nodes_min: int = Field(8, ge=1, le=10_000, description="Smallest base tree.")
    tree_nodes_max: int = Field(24, ge=1, le=10_000, description="Largest base tree.")
    class_balance: list[float] | None = Field(
        None, description="Relative class sizes, one per motif (default equal)."
    )
    feature_dimension: int = Field(8, ge=1, le=1000, description="Node feature width.")
    feature_signal: float = Field(
        0.0, ge=0, le=100, description="Norm of the class mean added to motif nodes."
    )
    edge_noise: float = Field(
        0.0, ge=0, le=1, description="Random extra edges, as a share of each graph's edges."
    )
    graph_seed: int = Field(0, ge=0, le=2**32 - 1, description="Seed of the generator.")

    @model_validator(mode="after")
    def _consistent(self) -> MotifGraphsData:
        if len(self.motifs) < 2 or len(set(self.motifs)) != len(self.motifs):
            raise ValueError(f"motifs: allowed: two or more distinct of {', '.join(MOTIFS)}")
        if self.tree_nodes_min > self.tree_nodes_max:
            raise ValueError("tree_nodes_min is above tree_nodes_max; allowed: min <= max")
        balance = self.class_balance
        if balance is not None:
            if len(balance) != len(self.motifs):
                raise ValueError(
                    f"class_balance has {len(balance)} entries; allowed: one per motif "
                    f"({len(self.motifs)})"
                )
            if not all(0 < b < float("inf") for b in balance):
                raise ValueError("class_balance: allowed: finite entries above 0")
            if min(balance) / sum(balance) * self.graphs < 1:
                raise ValueError("class_balance leaves a class without graphs; allowed: more")
        return self


class AtlasData(GraphsSource):
    """networkx's atlas of every graph with up to seven nodes (Read and Wilson, An Atlas of
    Graphs, 1998), labelled by a property networkx computes; the null graph is left out."""

    source: Literal["graph_atlas"] = Field(description="networkx's graph atlas.")
    label: Literal["bipartite", "triangle_free", "planar", "connected", "tree"] = Field(
        "bipartite", description="The property that makes each graph's class (yes / no)."
    )
