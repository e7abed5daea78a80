"""Seeded splits of a graph collection, by graph: the seed fixes the split, so every contender
sees the same one. Stratified `fractions` and the data's own `column` are the node splits' own
functions (data/splits.py) applied to graph labels; `scaffold` and `size` are here.
"""

from __future__ import annotations

import numpy as np
import torch
from pydantic import BaseModel
from sklearn.model_selection import train_test_split

from harness.data.collection import GraphCollection
from harness.data.splits import Split, column_split, fraction_split
from harness.errors import InputError


def scaffold_split(collection: GraphCollection, spec: BaseModel, seed: int) -> Split:
    """Scaffold groups fill train, then validation, then test, each up to its share: no
    scaffold in two parts (Bemis and Murcko, 1996). Groups larger than half the validation or
    test part come first, so they land in train; then the rest; each in a random order per seed
    (the balanced scaffold split of Yang et al., 2019, common practice)."""
    if collection.scaffolds is None:
        raise InputError(
            "split.method: 'scaffold' needs molecules (data.source = \"molecules\"); allowed for "
            "these graphs: fractions, size, column"
        )
    names, group = np.unique(np.asarray(collection.scaffolds, dtype=object), return_inverse=True)
    sizes = np.bincount(group)
    wanted = np.cumsum([spec.train, spec.validation, spec.test]) * len(group)
    part_of_group = np.full(len(names), -1)
    filled, part = 0, 0
    rng = np.random.default_rng(seed)
    large = sizes > min(spec.validation, spec.test) * len(group) / 2
    order = np.concatenate(
        [rng.permutation(np.flatnonzero(large)), rng.permutation(np.flatnonzero(~large))]
    )
    for chosen in order:
        while part < 3 and filled >= wanted[part] - 1e-9:
            part += 1
        if part == 3:
            break
        part_of_group[chosen] = part
        filled += sizes[chosen]
    parts = part_of_group[group]
    for code, name in enumerate(("train", "validation", "test")):
        if not (parts == code).any():
            raise InputError(
                f"split: the scaffold split leaves '{name}' empty ({len(names)} distinct "
                f"scaffolds in {len(group)} molecules); allowed: more molecules or scaffolds, or "
                'split.method = "fractions"'
            )
    return Split(*(torch.from_numpy(np.flatnonzero(parts == code)) for code in range(3)))


def size_split(collection: GraphCollection, spec: BaseModel, seed: int) -> Split:
    """The largest `test` share of graphs (by node count, ties in a seeded random order) is the
    test part; the smallest train + validation share is split at random into those two."""
    rng = np.random.default_rng(seed)
    counts = collection.node_counts().numpy()
    order = np.lexsort((rng.random(len(counts)), counts))
    tested = max(1, int(round(spec.test * len(counts))))
    pooled = int(round((spec.train + spec.validation) * len(counts)))
    pool, test = order[:pooled], order[len(counts) - tested :]
    if pooled < 2 or pooled + tested > len(counts):
        raise InputError(
            f"split: {len(counts)} graphs are too few for a size split with these shares; "
            "allowed: more graphs"
        )
    share = spec.train / (spec.train + spec.validation)
    state = np.random.RandomState(seed)
    try:
        train, validation = train_test_split(
            pool, train_size=share, stratify=collection.y.numpy()[pool], random_state=state
        )
    except ValueError:  # a class too small to stratify: draw plainly
        train, validation = train_test_split(pool, train_size=share, random_state=state)
    return Split(*(torch.from_numpy(np.sort(part)) for part in (train, validation, test)))


GRAPH_SPLITTERS = {
    "fractions": fraction_split,
    "column": column_split,
    "scaffold": scaffold_split,
    "size": size_split,
}


def make_graph_split(collection: GraphCollection, spec: BaseModel, seed: int) -> Split:
    """The split a split section describes, for this seed, over the collection's graphs."""
    return GRAPH_SPLITTERS[spec.method](collection, spec, seed)
