"""Molecules from a table of SMILES strings: atoms become nodes, bonds edges (PyG's `from_rdmol`).

RDKit parses each string; one it cannot parse is an error naming the row and the string, or,
with `invalid_rows = "skip"`, left out and counted. Atom and bond features are PyG's categorical
codes (atomic number, chirality, degree, charge, hydrogens, radicals, hybridisation, aromatic,
in ring; bond type, stereo, conjugated), one-hot encoded over the values the file holds. The
parsed graphs and their Bemis-Murcko scaffolds are cached under `<cache>/molecules`, keyed by
the file's content digest, so a large file is parsed once.
"""

from __future__ import annotations

import os
from pathlib import Path

import pandas as pd
import torch
from torch_geometric.utils import from_rdmol

from harness.data.collection import GraphCollection, collect, load_cached, save_cached
from harness.data.graph_labels import graph_label_codes, graph_split_codes, one_hot_codes
from harness.data.tables import need_columns, read_table, row_name, shown
from harness.digest import text_digest
from harness.errors import InputError
from harness.planning import HOP_CACHE_VARIABLE
from harness.schema.ablation import DEFAULT_HOP_CACHE
from harness.schema.data import file_digest
from harness.schema.graph_data import MoleculeData

ATOM_FEATURES = (
    "atomic_num",
    "chirality",
    "degree",
    "formal_charge",
    "num_hs",
    "num_radical_electrons",
    "hybridization",
    "is_aromatic",
    "is_in_ring",
)
BOND_FEATURES = ("bond_type", "stereo", "is_conjugated")


def rdkit_chem():
    """RDKit's Chem module, quiet; a clear line when the optional extra is missing."""
    try:
        from rdkit import Chem, RDLogger
    except ImportError:
        raise InputError(
            "data.source: 'molecules' needs RDKit; allowed: install the extra with "
            "pip install 'heedful[molecules]'"
        ) from None
    RDLogger.DisableLog("rdApp.*")  # a bad string is reported once, by us, naming its row
    return Chem


def cache_file(spec: MoleculeData) -> tuple[Path, str]:
    """Where the parsed molecules of this file live, and the key stored inside."""
    key = text_digest(f"{file_digest(spec.file)}|{spec.smiles_column}|{spec.invalid_rows}")
    folder = Path(os.environ.get(HOP_CACHE_VARIABLE) or DEFAULT_HOP_CACHE) / "molecules"
    return folder / f"molecules-{key}.pt", key


def parse_molecules(smiles: pd.Series, spec: MoleculeData) -> GraphCollection:
    """Graphs of the strings RDKit parses; each keeps its row number as `y` for now."""
    from rdkit.Chem.Scaffolds.MurckoScaffold import MurckoScaffoldSmiles

    chem = rdkit_chem()
    graphs, scaffolds, skipped = [], [], []
    for row, text in enumerate(smiles.tolist()):
        molecule = chem.MolFromSmiles(text) if isinstance(text, str) and text.strip() else None
        problem = None
        if molecule is None:
            problem = f"SMILES {text!r} that RDKit cannot parse"
        elif molecule.GetNumHeavyAtoms() == 0:
            problem = f"SMILES {text!r} without heavy atoms"
        if problem:
            if spec.invalid_rows == "error":
                raise InputError(
                    f"{row_name(spec.file, row)}: column '{spec.smiles_column}' holds {problem}; "
                    'allowed: a valid SMILES string, or invalid_rows = "skip"'
                )
            skipped.append(f"{row_name(spec.file, row)}: {problem}")
            continue
        graph = from_rdmol(molecule)
        graph.x = graph.x.to(torch.int16)
        graph.edge_attr = graph.edge_attr.to(torch.int16).reshape(-1, len(BOND_FEATURES))
        graph.y = torch.tensor([row])
        del graph.smiles
        graphs.append(graph)
        scaffolds.append(MurckoScaffoldSmiles(mol=molecule, includeChirality=False))
    if not graphs:
        raise InputError(f"{shown(spec.file)}: no row holds a valid SMILES string")
    return collect(graphs, [], scaffolds=tuple(scaffolds), skipped=tuple(skipped))


def parsed_molecules(smiles: pd.Series, spec: MoleculeData) -> GraphCollection:
    """From the cache when it holds this file's content, else parsed and cached."""
    path, key = cache_file(spec)
    cached = load_cached(path, key)
    if cached is None:
        cached = parse_molecules(smiles, spec)
        save_cached(cached, path, key)
    return cached


def load_molecules(spec: MoleculeData) -> GraphCollection:
    """The molecules of a table, labelled; errors name the file, row and value."""
    frame = read_table(spec.file, "one row per molecule", [spec.smiles_column])
    need_columns(frame, spec.file, [spec.smiles_column], "smiles_column")
    need_columns(frame, spec.file, [spec.label_column], "label_column")
    if spec.split_column:
        need_columns(frame, spec.file, [spec.split_column], "split_column")
    parsed = parsed_molecules(frame[spec.smiles_column], spec)
    rows = parsed.storage.y.numpy()
    kept = frame.iloc[rows].reset_index(drop=True)
    kept.index = rows  # errors below name the file's own row
    labels, class_names = graph_label_codes(kept[spec.label_column], spec.label_column, spec.file)
    storage = parsed.storage.clone()
    storage.x, atom_names = one_hot_codes(storage.x, ATOM_FEATURES)
    storage.edge_attr, bond_names = one_hot_codes(storage.edge_attr, BOND_FEATURES)
    storage.y = torch.from_numpy(labels)
    split_part = None
    if spec.split_column:
        split_part = torch.from_numpy(
            graph_split_codes(kept[spec.split_column], spec.split_column, spec.file)
        )
    return GraphCollection(
        storage,
        parsed.slices,
        class_names,
        split_part=split_part,
        scaffolds=parsed.scaffolds,
        skipped=parsed.skipped,
        split_origin=f"{shown(spec.file)}: column '{spec.split_column}'",
        feature_names=tuple(atom_names),
    )
