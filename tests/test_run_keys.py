"""Run keys are what stored runs and committed baselines are found by: they must not move.

The values below were computed from the suites as they stood before the package layout
changed (commit 986cf92); a change that moves them strands every user's stored runs.
"""

import hashlib
from dataclasses import replace
from pathlib import Path
from typing import ClassVar

import pytest
from pydantic import computed_field

from harness.planning import RunSpec, expand, load_suite
from harness.schema.base import key_dump
from harness.schema.data import TableData, file_digest
from harness.schema.training import Training

SUITES = Path(__file__).resolve().parents[1] / "suites"

DEMO_KEYS = [
    "011f6458705a67420900c7fc", "e83e8a1cc28ce74ae132bd5a", "6cb1a793e018cb9556b0e6d4",
    "ff16947c8b8f5cd3656f7c99", "2015f7e8cd5d597fbcee231c", "a75f9e662dba3516deb87e96",
    "b84c9380912aa54d5d3e28f3", "9cd8404cf1a2d49226ce76f9", "eae58c6fbe8d81630ffc31c0",
    "e2e90b4233679cf03be239a9", "60ae4e7cfef8099d64460882", "50832817414193c728a4698c",
    "699432b65a120f7da6b0a2b0", "5a02debd4ee498ac71215f9b", "ea42fbc1db8970dfd6ced67b",
    "1789170eb93b6ed438d62c92", "5c84665f946f1d60b2d12b41", "82c17801802294aa74ec8abf",
    "3c264b6121ff6c523a6a2400", "6efb769283f3842ad5024225", "c951d99591bb92dcd05c7329",
    "7f22dc81042dacd16c87ff99", "f68bda53df4b7fccc634430d", "f0e2550c02ccd2847243ac59",
    "21bd8a34dc2f18efc30ae488",
]  # fmt: skip

# sha256 of the sorted keys joined by commas, first 16 hex digits, and the run count
SUITE_KEY_DIGESTS = {
    "ablation": ("5553af01757b4ce5", 66),
    "circuit_boards": ("71c5f258fba5cc98", 24),  # added with graph classification demos
    "courier_sites": ("39e9166521e3cbaa", 12),
    "karate_club": ("b6586e000ea6e320", 15),
    "links": ("45df8a732fd0d725", 25),  # added with link prediction suites
    "nightly": ("9f9a46dac667e410", 15),
    "tuned": ("51a7f3d236631249", 20),
}


def test_demo_suite_run_keys_are_pinned():
    assert [spec.key for spec in expand(load_suite(SUITES / "demo.toml"))] == DEMO_KEYS


# Table paths enter a key resolved (absolute), so a table suite's keys depend on where the
# checkout lies; the pins were taken in a checkout at PINNED_ROOT, where the paths are put back.
PINNED_ROOT = "/work/main"
TABLES = ("nodes", "edges")


def pinned_location(spec: RunSpec) -> RunSpec:
    if not isinstance(spec.data, TableData):
        return spec
    here = str(SUITES.parent)
    moved = {name: getattr(spec.data, name).replace(here, PINNED_ROOT, 1) for name in TABLES}
    return replace(spec, data=PinnedTables.model_construct(**{**dict(spec.data), **moved}))


class PinnedTables(TableData):
    """TableData whose content digest reads the files of this checkout, whatever the paths say."""

    @computed_field
    @property
    def content_digest(self) -> str:
        here = str(SUITES.parent)
        real = [getattr(self, name).replace(PINNED_ROOT, here, 1) for name in TABLES]
        return file_digest(real[0]) + file_digest(real[1])


@pytest.mark.parametrize("name", sorted(SUITE_KEY_DIGESTS))
def test_every_shipped_suite_keeps_its_run_keys(name):
    specs = expand(load_suite(SUITES / f"{name}.toml"))
    keys = sorted(pinned_location(spec).key for spec in specs)
    digest = hashlib.sha256(",".join(keys).encode()).hexdigest()[:16]
    assert (digest, len(keys)) == SUITE_KEY_DIGESTS[name]


class LaterTraining(Training):
    """Training with one option added after keys were stored."""

    keyed_when_set: ClassVar[frozenset[str]] = Training.keyed_when_set | {"smoothing"}
    smoothing: float = 0.0


def test_an_option_added_later_enters_the_key_only_when_set():
    assert key_dump(LaterTraining()) == key_dump(Training())
    assert key_dump(LaterTraining(smoothing=0.1)) == {**key_dump(Training()), "smoothing": 0.1}
