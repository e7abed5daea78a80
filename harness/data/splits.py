"""Seeded node splits: the seed fixes the split, so every contender sees the same one."""

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


def fraction_split(data: Data, spec: BaseModel, seed: int) -> Split:
    """Stratified random fractions of the labelled nodes."""
    labelled = np.flatnonzero(data.y.numpy() >= 0)
    labels = data.y.numpy()[labelled]
    counts = np.bincount(labels)
    total = spec.train + spec.validation + spec.test
    smallest = int(np.argmin(np.where(counts > 0, counts, np.iinfo(int).max)))
    for part, share in (
        ("train", spec.train),
        ("validation", spec.validation),
        ("test", spec.test),
    ):
        if counts[smallest] * share < 1:
            raise InputError(
                f"split.{part}: class {smallest} has {counts[smallest]} labelled nodes, too few "
                f"for a {share:g} share; allowed: shares that give every class at least one node"
            )
    rng = np.random.RandomState(seed)
    used, _ = (
        train_test_split(labelled, train_size=total, stratify=labels, random_state=rng)
        if (total < 1 - 1e-9)
        else (labelled, None)
    )
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


SPLITTERS = {"fractions": fraction_split}


def make_split(data: Data, spec: BaseModel, seed: int) -> Split:
    """The split a split section describes, for this seed."""
    return SPLITTERS[spec.method](data, spec, seed)
