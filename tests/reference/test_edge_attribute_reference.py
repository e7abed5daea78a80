"""Edge attribute encoding against pandas and scikit-learn: a text column one-hot encoded as
pandas.get_dummies and scikit-learn's OneHotEncoder do (sorted categories), a numeric column
standardised as scikit-learn's StandardScaler does (population standard deviation)."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
from sklearn.preprocessing import OneHotEncoder, StandardScaler

from harness.data.tables import load_tables
from harness.planning import parse_suite


def test_one_hot_and_standardised_columns_match_pandas_and_scikit_learn(tmp_path: Path) -> None:
    rng = np.random.default_rng(3)
    ids = [f"depot{i}" for i in range(30)]
    pd.DataFrame({"id": ids, "label": rng.integers(0, 2, 30), "f": rng.random(30)}).to_csv(
        tmp_path / "nodes.csv", index=False
    )
    # a chain of distinct pairs, so no edge is merged with another and rows keep their values
    edges = pd.DataFrame(
        {
            "source": ids[:-1],
            "target": ids[1:],
            "mode": rng.choice(["air", "rail", "road", "sea"], 29),
            "tonnes": rng.gamma(2.0, 10.0, 29),
        }
    )
    edges.to_csv(tmp_path / "edges.csv", index=False)
    raw = {
        "name": "exchange",
        "data": {
            "source": "tables",
            "nodes": "nodes.csv",
            "edges": "edges.csv",
            "directed": True,
            "edge_feature_columns": ["mode", "tonnes"],
            "standardise_edge_features": True,
        },
        "contenders": {"attention": {"model": "gat", "edge_features": True}},
    }
    data = load_tables(parse_suite(raw, str(tmp_path / "suite.toml")).data)
    # directed edges are coalesced in (source, target) order: the chain keeps the row order
    got = data.edge_attr.numpy()
    dummies = pd.get_dummies(edges["mode"], prefix="mode", prefix_sep="=", dtype=float)
    assert data.edge_attribute_names[:4] == list(dummies.columns)
    np.testing.assert_array_equal(got[:, :4], dummies.to_numpy())
    encoder = OneHotEncoder(sparse_output=False).fit(edges[["mode"]])
    np.testing.assert_array_equal(got[:, :4], encoder.transform(edges[["mode"]]))
    scaled = StandardScaler().fit_transform(edges[["tonnes"]])[:, 0]
    np.testing.assert_allclose(got[:, 4], scaled, rtol=1e-5)
    assert abs(got[:, 4].std() - 1.0) < 1e-5  # population standard deviation, as scikit-learn
