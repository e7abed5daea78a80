"""The Weisfeiler-Leman limit of message passing (Xu et al., 2019, "How powerful are graph
neural networks?", Lemma 2 and Theorem 3; Morris et al., 2019, "Weisfeiler and Leman go
neural", Theorem 1): no message-passing network tells apart two graphs that the 1-WL colour
refinement cannot. A 6-cycle and two disjoint triangles are both 2-regular on six nodes, so
with a constant feature start every node of both gets the same state at every layer, and every
such contender stays at chance. Random-walk landing probabilities (Dwivedi et al., 2022) see
the triangles: a walk of three steps returns to its start in a triangle (probability 1/4), never
in a 6-cycle, so the same contenders then separate the classes.
"""

from __future__ import annotations

import pandas as pd
import pytest

from harness import api
from harness.cli import main

GRAPHS_PER_CLASS = 24


def write_tables(folder) -> None:
    nodes, edges, graphs = [], [], []
    for number in range(2 * GRAPHS_PER_CLASS):
        graph = f"g{number}"
        closed = number % 2 == 0
        pairs = (
            [(0, 1), (1, 2), (2, 3), (3, 4), (4, 5), (5, 0)]
            if closed
            else [(0, 1), (1, 2), (2, 0), (3, 4), (4, 5), (5, 3)]
        )
        nodes += [{"graph": graph, "id": node, "given": 1.0} for node in range(6)]
        edges += [{"graph": graph, "source": a, "target": b} for a, b in pairs]
        graphs.append({"graph": graph, "label": "cycle" if closed else "triangles"})
    for name, rows in (("nodes", nodes), ("edges", edges), ("graphs", graphs)):
        pd.DataFrame(rows).to_csv(folder / f"{name}.csv", index=False)


SUITE = """\
name = "wl_limit"
task = "graph_classification"
seeds = 3

[data]
source = "graph_tables"
nodes = "nodes.csv"
edges = "edges.csv"
graphs = "graphs.csv"

[split]
train = 0.5
validation = 0.25
test = 0.25

[training]
epochs = 60
patience = 60
learning_rate = 0.02

[graphs]
batch_size = 8

[contenders.attention]
model = "gat"
heads = 2
hidden = 8
dropout = 0.0
feature_start = "{start}"

[contenders.isomorphism]
model = "gin"
hidden = 16
dropout = 0.0
readout = "sum"
feature_start = "{start}"

[contenders.convolution]
model = "gcn"
hidden = 16
dropout = 0.0
feature_start = "{start}"
"""


def contender_table(tmp_path, start: str) -> pd.DataFrame:
    write_tables(tmp_path)
    suite = tmp_path / f"{start}.toml"
    suite.write_text(SUITE.replace("{start}", start), encoding="utf-8")
    store = tmp_path / "runs.db"
    assert main(["run", str(suite), "--store", str(store), "--quiet"]) == 0
    return api.contenders(api.runs(store, suite))


@pytest.mark.slow
def test_constant_start_stays_at_chance(tmp_path):
    table = contender_table(tmp_path, "constant")
    assert len(table) == 3
    for _, row in table.iterrows():
        assert row["t_low"] <= 0.5 <= row["t_high"], row.to_dict()


@pytest.mark.slow
def test_random_walk_start_separates_them(tmp_path):
    table = contender_table(tmp_path, "random_walk")
    assert (table["mean"] > 0.95).all(), table[["mean"]].to_dict()
