"""Split methods: fractions (the default), a fixed count per class, and the data's own column."""

from __future__ import annotations

import pytest
import torch
from torch_geometric.data import Data

from harness.data.splits import SPLITTERS, make_split
from harness.errors import InputError
from harness.planning import parse_suite
from harness.schema.splits import ColumnSplit, FractionSplit, PerClassSplit


def labelled_graph(per_class: list[int]) -> Data:
    y = torch.cat([torch.full((n,), c) for c, n in enumerate(per_class)])
    y = torch.cat([y, torch.tensor([-1, -1])])  # two unlabelled nodes are never split
    data = Data(x=torch.zeros(len(y), 1), edge_index=torch.zeros(2, 0, dtype=torch.long), y=y)
    data.class_names = [f"route_{c}" for c in range(len(per_class))]
    return data


def parts(split) -> list[set[int]]:
    return [set(split.train.tolist()), set(split.validation.tolist()), set(split.test.tolist())]


def test_method_defaults_to_fractions() -> None:
    raw = {
        "name": "s",
        "data": {"source": "karate"},
        "split": {"train": 0.3, "validation": 0.3, "test": 0.4},
        "contenders": {"c": {"model": "mlp"}},
    }
    assert isinstance(parse_suite(raw, "s.toml").split, FractionSplit)


def test_unknown_method_is_named() -> None:
    raw = {
        "name": "s",
        "data": {"source": "karate"},
        "split": {"method": "halves"},
        "contenders": {"c": {"model": "mlp"}},
    }
    with pytest.raises(InputError, match=r"s.toml: split: .*allowed: fractions, per_class, col"):
        parse_suite(raw, "s.toml")


def test_per_class_counts_are_exact_and_seeded() -> None:
    data = labelled_graph([10, 12, 8])
    spec = PerClassSplit(method="per_class", train_per_class=2, validation_per_class=3)
    first = make_split(data, spec, seed=4)
    train, validation, test = parts(first)
    assert torch.bincount(data.y[first.train]).tolist() == [2, 2, 2]
    assert torch.bincount(data.y[first.validation]).tolist() == [3, 3, 3]
    assert len(test) == 30 - 15  # every other labelled node
    assert not (train & validation or train & test or validation & test)
    assert all(data.y[i] >= 0 for i in train | validation | test)
    assert parts(make_split(data, spec, seed=4)) == parts(first)
    assert parts(make_split(data, spec, seed=5)) != parts(first)


def test_per_class_test_count() -> None:
    data = labelled_graph([10, 12, 8])
    spec = PerClassSplit(
        method="per_class", train_per_class=1, validation_per_class=1, test_per_class=4
    )
    assert torch.bincount(data.y[make_split(data, spec, 0).test]).tolist() == [4, 4, 4]


def test_per_class_too_small_class_is_an_error() -> None:
    data = labelled_graph([10, 3])
    spec = PerClassSplit(method="per_class", train_per_class=2, validation_per_class=2)
    with pytest.raises(InputError, match=r"class 'route_1' has 3 labelled nodes, fewer than the 5"):
        make_split(data, spec, 0)


def test_column_split_uses_the_data_and_skips_unlabelled() -> None:
    data = labelled_graph([3, 3])
    data.split_part = torch.tensor([0, 1, 2, 0, 1, 2, 0, 0])  # the last two are unlabelled
    split = make_split(data, ColumnSplit(method="column"), seed=9)
    assert split.train.tolist() == [0, 3]
    assert split.validation.tolist() == [1, 4]
    assert split.test.tolist() == [2, 5]


def test_column_split_with_several_mask_columns_follows_the_seed() -> None:
    data = labelled_graph([2, 2])
    first = [0, 1, 0, 2, -1, -1]
    second = [1, 0, 2, 0, -1, -1]
    data.split_part = torch.tensor([first, second]).T
    assert make_split(data, ColumnSplit(method="column"), seed=0).train.tolist() == [0, 2]
    assert make_split(data, ColumnSplit(method="column"), seed=1).train.tolist() == [1, 3]
    assert make_split(data, ColumnSplit(method="column"), seed=2).train.tolist() == [0, 2]


def test_column_split_needs_a_column() -> None:
    with pytest.raises(InputError, match=r"split.method: 'column' but the data has no split col"):
        make_split(labelled_graph([3, 3]), ColumnSplit(method="column"), 0)


def test_column_split_class_without_training_node() -> None:
    data = labelled_graph([2, 2])
    data.split_part = torch.tensor([0, 1, 1, 2, -1, -1])
    data.split_origin = "depots.csv: column 'split'"
    with pytest.raises(InputError, match=r"depots.csv: column 'split': class 'route_1' has no tr"):
        make_split(data, ColumnSplit(method="column"), 0)


SECTIONS = {
    "fractions": FractionSplit(),
    "per_class": PerClassSplit(method="per_class", train_per_class=2, validation_per_class=2),
    "column": ColumnSplit(method="column"),
}


def test_the_split_registry_has_a_case_for_every_method() -> None:
    assert set(SECTIONS) == set(SPLITTERS)


@pytest.mark.parametrize("method", sorted(SPLITTERS))
def test_every_split_method_keeps_its_contract(method: str) -> None:
    """Sorted, disjoint, non-empty parts of labelled nodes only; one seed, one split."""
    data = labelled_graph([8, 8])
    data.split_part = torch.tensor([0, 0, 1, 2] * 4 + [0, 0])  # used by the column method
    first, again = (make_split(data, SECTIONS[method], 3) for _ in range(2))
    sets = parts(first)
    assert all(sets) and not (sets[0] & sets[1] or sets[0] & sets[2] or sets[1] & sets[2])
    assert all(int(data.y[i]) >= 0 for part in sets for i in part)  # never an unlabelled node
    for chosen, repeated in zip(
        (first.train, first.validation, first.test),
        (again.train, again.validation, again.test),
        strict=True,
    ):
        assert torch.equal(chosen, repeated) and torch.equal(chosen, chosen.sort().values)
