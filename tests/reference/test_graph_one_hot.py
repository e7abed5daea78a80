"""One-hot atom and bond features against scikit-learn's OneHotEncoder (categories found per
column and sorted, as Heedful names them)."""

from __future__ import annotations

import numpy as np
import torch
from sklearn.preprocessing import OneHotEncoder

from harness.data.graph_labels import one_hot_codes


def test_one_hot_codes_match_scikit_learns_encoder():
    rng = np.random.default_rng(4)
    codes = np.stack(
        [rng.integers(0, 9, 300), rng.choice([2, 5, 40], 300), np.full(300, 3)], axis=1
    )
    features, names = one_hot_codes(torch.from_numpy(codes).to(torch.int16), ("a", "b", "c"))
    encoder = OneHotEncoder(sparse_output=False).fit(codes)
    assert features.dtype == torch.float32
    np.testing.assert_array_equal(features.numpy(), encoder.transform(codes))
    categories = zip("abc", encoder.categories_, strict=True)
    expected = [f"{n}={int(v)}" for n, values in categories for v in values]
    assert names == expected


def test_no_rows_give_no_features():
    features, names = one_hot_codes(torch.empty(0, 2, dtype=torch.int16), ("a", "b"))
    assert features.shape == (0, 0) and names == []
