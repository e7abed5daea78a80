"""Dataset profile: size, degrees, cleaning, class balance, features and homophily."""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np
from torch_geometric.data import Data
from torch_geometric.utils import degree

from harness.data.assemble import edge_count
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
    )
