"""Seeded node splits: the seed fixes the split, so every contender sees the same one.

Methods: stratified fractions, a fixed count per class, or the split column the data carries.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import torch
from pydantic import BaseModel
from sklearn.model_selection import train_test_split
from torch_geometric.data import Data

from harness.errors import InputError


@dataclass(frozen=True)
class Split:
    """Node indices of each part (sorted, disjoint)."""

    train: torch.Tensor
    validation: torch.Tensor
    test: torch.Tensor


def unit(data: Data) -> str:
    """What a split counts, for its messages: a node, or a graph of a collection."""
    return getattr(data, "unit", "node")


def fraction_split(data: Data, spec: BaseModel, seed: int) -> Split:
    """Stratified random fractions of the labelled nodes."""
    labelled = np.flatnonzero(data.y.numpy() >= 0)
    labels = data.y.numpy()[labelled]
    counts = np.bincount(labels)
    total = spec.train + spec.validation + spec.test
    smallest = int(np.argmin(np.where(counts > 0, counts, np.iinfo(int).max)))
    names = getattr(data, "class_names", None) or [str(c) for c in range(len(counts))]
    for part, share in (
        ("train", spec.train),
        ("validation", spec.validation),
        ("test", spec.test),
    ):
        if counts[smallest] * share < 1:
            raise InputError(
                f"split.{part}: class {names[smallest]!r} has {counts[smallest]} labelled "
                f"{unit(data)}s, too few for a {share:g} share; allowed: shares that give every "
                f"class at least one {unit(data)}"
            )
    rng = np.random.RandomState(seed)
    used = labelled
    if total < 1 - 1e-9:
        try:
            used, _ = train_test_split(
                labelled, train_size=total, stratify=labels, random_state=rng
            )
        except ValueError:  # fewer unused nodes than classes: too few to stratify, draw plainly
            used, _ = train_test_split(labelled, train_size=total, random_state=rng)
    used_labels = data.y.numpy()[used]
    train, rest = train_test_split(
        used, train_size=spec.train / total, stratify=used_labels, random_state=rng
    )
    rest_labels = data.y.numpy()[rest]
    validation, test = train_test_split(
        rest,
        train_size=spec.validation / (spec.validation + spec.test),
        stratify=rest_labels,
        random_state=rng,
    )
    return Split(*(torch.from_numpy(np.sort(part)) for part in (train, validation, test)))


def per_class_split(data: Data, spec: BaseModel, seed: int) -> Split:
    """A fixed number of nodes per class for training and validation; test takes
    `test_per_class` per class or every remaining labelled node."""
    labels = data.y.numpy()
    wanted = spec.train_per_class + spec.validation_per_class + (spec.test_per_class or 1)
    counts = np.bincount(labels[labels >= 0], minlength=int(labels.max()) + 1)
    small = np.flatnonzero(counts < wanted)
    if len(small):
        names = getattr(data, "class_names", None) or [str(c) for c in range(len(counts))]
        raise InputError(
            f"split: class {names[small[0]]!r} has {counts[small[0]]} labelled nodes, fewer than "
            f"the {wanted} the split needs per class; allowed: smaller per-class counts"
        )
    rng = np.random.default_rng(seed)
    parts: list[list[np.ndarray]] = [[], [], []]
    for label in range(len(counts)):
        members = rng.permutation(np.flatnonzero(labels == label))
        first, second = spec.train_per_class, spec.train_per_class + spec.validation_per_class
        end = None if spec.test_per_class is None else second + spec.test_per_class
        for part, chosen in zip(
            parts, (members[:first], members[first:second], members[second:end]), strict=True
        ):
            part.append(chosen)
    return Split(*(torch.from_numpy(np.sort(np.concatenate(p))) for p in parts))


def column_split(data: Data, spec: BaseModel, seed: int) -> Split:
    """The split the data carries (0 train, 1 validation, 2 test per node); with several
    columns of masks, seed s takes column s mod their count. Only labelled nodes are used."""
    part = getattr(data, "split_part", None)
    if part is None:
        raise InputError(
            "split.method: 'column' but the data has no split column; allowed: data.split_column "
            "for tables, a PyG dataset with train/val/test masks, or another split method"
        )
    if part.dim() == 2:
        part = part[:, seed % part.size(1)]
    labelled = data.y >= 0
    chosen = [torch.nonzero((part == code) & labelled).flatten() for code in range(3)]
    origin = getattr(data, "split_origin", "data")
    names = getattr(data, "class_names", None) or [str(c) for c in range(int(data.y.max()) + 1)]
    for code, name in enumerate(("train", "validation", "test")):
        if len(chosen[code]) == 0:
            raise InputError(
                f"{origin} marks no labelled {unit(data)} '{name}'; allowed: at least one"
            )
    present = torch.bincount(data.y[chosen[0]], minlength=len(names))
    if (present == 0).any():
        missing = names[int(torch.nonzero(present == 0)[0])]
        raise InputError(
            f"{origin}: class {missing!r} has no training {unit(data)}; allowed: every class "
            f"with at least one {unit(data)} marked 'train'"
        )
    return Split(*chosen)


SPLITTERS = {"fractions": fraction_split, "per_class": per_class_split, "column": column_split}


def make_split(data: Data, spec: BaseModel, seed: int) -> Split:
    """The split a split section describes, for this seed."""
    return SPLITTERS[spec.method](data, spec, seed)
