"""Write the example molecule table: a fictional dye works, Saltmarsh Dyeworks, screening
candidate dye molecules.

Each candidate (1,053 distinct molecules) joins one core (azobenzene, stilbene, naphthalene,
anthraquinone, biphenyl, diphenylamine and some plain rings) with two substituents from a short
list. The screen a
candidate passes is a stated rule computed with RDKit descriptors: at least two aromatic rings
(rdMolDescriptors.CalcNumAromaticRings; enough conjugation to colour) and a Crippen logP
(Wildman and Crippen, 1999; Crippen.MolLogP) of at most 3.2 (soluble enough for the dye bath).
Everything is drawn from a seeded generator; no real company, product or person is described.

Run from the repository root:  python examples/make_dye_molecules.py
"""

from __future__ import annotations

import itertools
from pathlib import Path

import numpy as np
import pandas as pd
from rdkit import Chem
from rdkit.Chem import Crippen, rdMolDescriptors

SEED = 23
FOLDER = Path(__file__).parent / "dyes"
# cores with two places {a} and {b} where a substituent may hang
CORES = [
    "c1cc{a}ccc1N=Nc1ccc{b}cc1",  # azobenzene
    "c1cc{a}ccc1C=Cc1ccc{b}cc1",  # stilbene
    "c1cc{a}c2ccc{b}cc2c1",  # naphthalene
    "O=C1c2cc{a}ccc2C(=O)c2ccc{b}cc12",  # anthraquinone
    "c1cc{a}ccc1-c1ccc{b}cc1",  # biphenyl
    "c1cc{a}ccc1Nc1ccc{b}cc1",  # diphenylamine
    "c1cc{a}ccc1C{b}",  # toluene
    "C1CC{a}CCC1{b}",  # cyclohexane
    "c1cc{a}ncc1{b}",  # pyridine
]
SUBSTITUENTS = [
    "",
    "O",
    "N",
    "C",
    "Cl",
    "Br",
    "C(=O)O",
    "S(=O)(=O)O",
    "N(C)C",
    "[N+](=O)[O-]",
    "OC",
    "CCCC",
    "C(F)(F)F",
]


def branch(substituent: str) -> str:
    return f"({substituent})" if substituent else ""


def passes_screen(molecule: Chem.Mol) -> bool:
    return rdMolDescriptors.CalcNumAromaticRings(molecule) >= 2 and Crippen.MolLogP(molecule) <= 3.2


def candidates(rng: np.random.Generator) -> pd.DataFrame:
    """Every distinct core-and-substituents molecule, in a seeded random order."""
    unique: dict[str, Chem.Mol] = {}
    for core in CORES:
        for a, b in itertools.product(SUBSTITUENTS, repeat=2):
            molecule = Chem.MolFromSmiles(core.format(a=branch(a), b=branch(b)))
            unique.setdefault(Chem.MolToSmiles(molecule), molecule)
    order = rng.permutation(len(unique))
    listed = list(unique.items())
    return pd.DataFrame(
        {
            "candidate": [f"SD-{number + 1:05d}" for number in range(len(order))],
            "smiles": [listed[i][0] for i in order],
            "screen": ["passes" if passes_screen(listed[i][1]) else "fails" for i in order],
        }
    )


def main() -> None:
    FOLDER.mkdir(exist_ok=True)
    frame = candidates(np.random.default_rng(SEED))
    frame.to_csv(FOLDER / "candidates.csv", index=False)
    print(f"{len(frame)} candidates, {frame['screen'].value_counts().to_dict()}")


if __name__ == "__main__":
    main()
