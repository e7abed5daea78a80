"""Small files of molecules and graph tables that tests write, in an invented setting: a
fictional dye works sorting candidate molecules into those that pass its screen or not."""

from __future__ import annotations

from pathlib import Path

import pandas as pd

# common small organic molecules (SMILES written from general chemistry knowledge)
SMILES = [
    "CCO",
    "CCCO",
    "CC(C)O",
    "CCN",
    "c1ccccc1",
    "c1ccccc1O",
    "c1ccccc1N",
    "Cc1ccccc1",
    "c1ccncc1",
    "c1ccc2ccccc2c1",
    "C1CCCCC1",
    "C1CCCCC1N",
    "C1CCOC1",
    "CC(=O)Oc1ccccc1C(=O)O",
    "O=C(O)c1ccccc1",
    "CCOC(=O)c1ccccc1",
    "c1ccc(-c2ccccc2)cc1",
    "C1CCNCC1",
    "CC1CCCCC1",
    "Oc1ccc2ccccc2c1",
]


def molecule_frame() -> pd.DataFrame:
    """Label: the molecule has a ring (a stated rule, so tests know the truth)."""
    labels = ["ring" if any(ch.isdigit() for ch in s) else "chain" for s in SMILES]
    return pd.DataFrame({"smiles": SMILES, "label": labels})


def write_molecules(folder: Path, rows: pd.DataFrame | None = None, name: str = "dyes.csv") -> Path:
    path = folder / name
    (molecule_frame() if rows is None else rows).to_csv(path, index=False)
    return path


def write_graph_tables(folder: Path) -> dict[str, Path]:
    """Three graphs: a triangle and a path (class 'closed' and 'open'), plus a square."""
    nodes = pd.DataFrame(
        {
            "graph": ["t", "t", "t", "p", "p", "p", "s", "s", "s", "s"],
            "id": ["a", "b", "c", "a", "b", "c", "w", "x", "y", "z"],
            "f1": [1.0, 2.0, 3.0, 1.0, 1.0, 1.0, 0.5, 0.5, 0.5, 0.5],
        }
    )
    edges = pd.DataFrame(
        {
            "graph": ["t", "t", "t", "p", "p", "s", "s", "s", "s"],
            "source": ["a", "b", "c", "a", "b", "w", "x", "y", "z"],
            "target": ["b", "c", "a", "b", "c", "x", "y", "z", "w"],
        }
    )
    graphs = pd.DataFrame({"graph": ["t", "p", "s"], "label": ["closed", "open", "closed"]})
    paths = {}
    for name, frame in (("nodes", nodes), ("edges", edges), ("graphs", graphs)):
        paths[name] = folder / f"{name}.csv"
        frame.to_csv(paths[name], index=False)
    return paths
