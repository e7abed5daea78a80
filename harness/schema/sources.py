"""Every data section a suite may name, told apart by `source`: one graph (schema/data.py) or a
collection of graphs (schema/graph_data.py); each task says which it reads."""

from __future__ import annotations

from typing import Annotated

from pydantic import Field

from harness.schema.data import DigitsData, KarateData, PygData, SyntheticData, TableData
from harness.schema.graph_data import AtlasData, GraphTablesData, MoleculeData, MotifGraphsData

DataSection = Annotated[
    SyntheticData
    | TableData
    | KarateData
    | DigitsData
    | PygData
    | MoleculeData
    | GraphTablesData
    | MotifGraphsData
    | AtlasData,
    Field(discriminator="source"),
]
