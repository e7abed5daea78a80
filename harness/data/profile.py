"""Dataset profile: size, degrees, cleaning, class balance, features, homophily, and the edge
attributes with the edge homophily of each edge type."""

from __future__ import annotations

import dataclasses
from dataclasses import asdict, dataclass, field

import numpy as np
import torch
from torch_geometric.data import Data
from torch_geometric.utils import degree

from harness.data.assemble import edge_count
from harness.data.collection import GraphCollection
from harness.data.edge_attributes import edge_types
from harness.data.graph_starts import as_one_graph
from harness.data.homophily import Homophily, measure_homophily


@dataclass(frozen=True)
class DegreeSummary:
    minimum: int
    median: float
    mean: float
    percentile_90: float
    maximum: int


@dataclass(frozen=True)
class FeatureSummary:
    dimension: int
    mean: float
    standard_deviation: float
    minimum: float
    maximum: float
    constant_columns: int
    zero_share: float


@dataclass(frozen=True)
class CollectionSummary:
    """A collection of graphs (graph classification): how many, how large, what was left out."""

    graphs: int
    nodes_minimum: int
    nodes_median: float
    nodes_maximum: int
    distinct_scaffolds: int | None  # molecules only
    skipped_rows: int


@dataclass(frozen=True)
class DatasetProfile:
    nodes: int
    edges: int
    directed: bool
    degrees: DegreeSummary
    isolated_nodes: int
    self_loops_removed: int
    duplicate_edges_removed: int
    class_names: list[str]  # empty, as the counts, when the task reads no node labels
    class_counts: list[int]
    unlabelled_nodes: int
    features: FeatureSummary
    homophily: Homophily | None  # None when the task reads no node labels
    edge_attributes: list[str] = field(default_factory=list)  # edge_attr column names
    # per edge type: its edges and the share joining two nodes of the same label (NaN if none)
    edge_type_homophily: dict[str, list] = field(default_factory=dict)
    collection: CollectionSummary | None = None  # graph classification: the graphs; classes
    # and counts are then those of the graphs

    @property
    def labelled(self) -> bool:
        """Whether the node-label facts (classes, unlabelled nodes, homophily) apply."""
        return self.homophily is not None

    def as_dict(self) -> dict:
        return asdict(self)

    @classmethod
    def from_dict(cls, values: dict) -> DatasetProfile:
        return cls(
            **{
                **values,
                "degrees": DegreeSummary(**values["degrees"]),
                "features": FeatureSummary(**values["features"]),
                "homophily": values["homophily"] and Homophily(**values["homophily"]),
                "collection": values.get("collection")
                and CollectionSummary(**values["collection"]),
            }
        )


def profile_graph(data: Data, node_labels: bool = True) -> DatasetProfile:
    """Everything `heedful describe` prints about a loaded graph; without `node_labels` (a task
    that reads none) no class or homophily facts, which would not apply."""
    nodes = data.num_nodes
    directed = not data.is_undirected()
    # in-degree: the neighbours whose messages a node receives
    degrees = degree(data.edge_index[1], nodes).numpy()
    labels = data.y.numpy()
    classes = int(labels.max()) + 1
    names = list(getattr(data, "class_names", None) or [str(c) for c in range(classes)])
    x = data.x.double().numpy()
    spread = x.std(axis=0)
    return DatasetProfile(
        nodes=nodes,
        edges=edge_count(data),
        directed=directed,
        degrees=DegreeSummary(
            minimum=int(degrees.min()),
            median=float(np.median(degrees)),
            mean=float(degrees.mean()),
            percentile_90=float(np.percentile(degrees, 90)),
            maximum=int(degrees.max()),
        ),
        isolated_nodes=int(np.sum(degree(data.edge_index.flatten(), nodes).numpy() == 0)),
        self_loops_removed=int(getattr(data, "self_loops_removed", 0)),
        duplicate_edges_removed=int(getattr(data, "duplicate_edges_removed", 0)),
        class_names=names if node_labels else [],
        class_counts=np.bincount(labels[labels >= 0], minlength=classes).tolist()
        if node_labels
        else [],
        unlabelled_nodes=int(np.sum(labels < 0)) if node_labels else 0,
        features=FeatureSummary(
            dimension=x.shape[1],
            mean=float(x.mean()),
            standard_deviation=float(x.std()),
            minimum=float(x.min()),
            maximum=float(x.max()),
            constant_columns=int(np.sum(spread == 0)),
            zero_share=float(np.mean(x == 0)),
        ),
        homophily=measure_homophily(data.edge_index, data.y) if node_labels else None,
        edge_attributes=list(getattr(data, "edge_attribute_names", None) or []),
        edge_type_homophily=type_homophily(data) if node_labels else {},
    )


def profile_collection(collection: GraphCollection) -> DatasetProfile:
    """The profile of a collection's graphs taken as one graph of disconnected pieces (degrees,
    features), with the classes of the graphs and a summary of their sizes."""
    whole = as_one_graph(collection)
    whole.y = torch.zeros(whole.num_nodes, dtype=torch.long)
    profile = profile_graph(whole, node_labels=False)
    counts = collection.node_counts().numpy()
    return dataclasses.replace(
        profile,
        class_names=list(collection.class_names),
        class_counts=np.bincount(
            collection.y.numpy(), minlength=len(collection.class_names)
        ).tolist(),
        collection=CollectionSummary(
            graphs=len(collection),
            nodes_minimum=int(counts.min()),
            nodes_median=float(np.median(counts)),
            nodes_maximum=int(counts.max()),
            distinct_scaffolds=None
            if collection.scaffolds is None
            else len(set(collection.scaffolds)),
            skipped_rows=len(collection.skipped),
        ),
    )


def type_homophily(data: Data) -> dict[str, list]:
    """Edge homophily of each edge type: [edges of the type, share of its labelled edges that
    join two nodes of the same label, None without any]; empty without typed edges."""
    types = edge_types(data, data.edge_index)
    if types is None:
        return {}
    source, target = data.edge_index
    labelled = (data.y[source] >= 0) & (data.y[target] >= 0)
    same = data.y[source] == data.y[target]
    out = {}
    for index, name in enumerate(data.edge_type_names):
        of_type = types == index
        counted = of_type & labelled
        share = float(same[counted].double().mean()) if bool(counted.any()) else None
        out[name] = [int(of_type.sum()), share]
    return out
