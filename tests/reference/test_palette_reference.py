"""Our palette under colour-vision deficiency: every two series colours (and every two verdict
colours) stay at least MIN_DIFFERENCE apart in CIEDE2000 for normal vision and for simulated
deuteranopia and protanopia.

Simulation: Machado, Oliveira and Fernandes (2009), "A physiologically-based model for
simulation of color vision deficiency", IEEE TVCG 15(6), through the `colorspacious` package
(severity 100: the full deficiency). Colour difference: CIEDE2000 as given by Sharma, Wu and
Dalal (2005), "The CIEDE2000 color-difference formula: implementation notes, supplementary test
data, and mathematical observations", Color Research and Application 30(1); checked here against
rows of their Table 1 (values from memory of that table).
"""

from __future__ import annotations

import itertools
from pathlib import Path

import numpy as np
import pytest
from ciede2000 import ciede2000
from colorspacious import cspace_convert

from harness.report.documents import palette

# A difference of 10 is far above what a reader notices side by side (about 1 to 2.3 in CIELAB
# terms): common practice for colours that must be told apart in a small marker or a thin line
# on a legend, not just in large patches.
MIN_DIFFERENCE = 10.0
VISIONS = ("normal", "deuteranomaly", "protanomaly")

# Sharma, Wu and Dalal (2005), Table 1: pairs of CIELAB colours and their ΔE00 (from memory)
SHARMA_PAIRS = [
    ((50.0, 2.6772, -79.7751), (50.0, 0.0, -82.7485), 2.0425),
    ((50.0, 3.1571, -77.2803), (50.0, 0.0, -82.7485), 2.8615),
    ((50.0, 2.8361, -74.0200), (50.0, 0.0, -82.7485), 3.4412),
    ((50.0, 0.0, 0.0), (50.0, -1.0, 2.0), 2.3669),
    ((50.0, 2.5, 0.0), (73.0, 25.0, -18.0), 27.1492),
    ((50.0, 2.5, 0.0), (61.0, -5.0, 29.0), 22.8977),
    ((50.0, 2.5, 0.0), (56.0, -27.0, -3.0), 31.9030),
    ((50.0, 2.5, 0.0), (58.0, 24.0, 15.0), 19.4535),
    ((60.2574, -34.0099, 36.2677), (60.4626, -34.1751, 39.4387), 1.2644),
]

# the colour codes the plots and the page used before: swatches of a published palette
OLD_CODES = (
    "#c2571a",
    "#2f6f9f",
    "#2e7d32",
    "#b71c1c",
    "#607d8b",
    "#f9a825",
    "#eceff1",
    "#455a64",
    "#6a1b9a",
    "#9e9e9e",
    "#263238",
    "#212121",
    "#fff8f3",
    "#e0e0e0",
    "#616161",
)


@pytest.mark.parametrize(("first", "second", "expected"), SHARMA_PAIRS)
def test_ciede2000_matches_the_published_test_data(first, second, expected) -> None:
    assert ciede2000(first, second) == pytest.approx(expected, abs=1e-4)


def seen(hexes: list[str], vision: str) -> np.ndarray:
    """CIELAB of each colour as a reader with `vision` sees it."""
    rgb = np.array([[int(code[i : i + 2], 16) / 255 for i in (1, 3, 5)] for code in hexes])
    if vision != "normal":
        simulated = {"name": "sRGB1+CVD", "cvd_type": vision, "severity": 100}
        rgb = np.clip(cspace_convert(rgb, simulated, "sRGB1"), 0, 1)
    return cspace_convert(rgb, "sRGB1", "CIELab")


@pytest.mark.parametrize("vision", VISIONS)
@pytest.mark.parametrize("group", ["series", "verdicts"])
def test_colours_stay_apart_for_every_vision(group: str, vision: str) -> None:
    hexes = list(palette.SERIES if group == "series" else palette.VERDICTS.values())
    lab = seen(hexes, vision)
    closest = min(
        (ciede2000(tuple(lab[i]), tuple(lab[j])), hexes[i], hexes[j])
        for i, j in itertools.combinations(range(len(hexes)), 2)
    )
    assert closest[0] >= MIN_DIFFERENCE, closest


def test_a_full_deficiency_merges_a_rust_and_a_leaf_green() -> None:
    """The simulation is not a no-op: a rust orange and a leaf green, far apart for normal
    vision, come within the threshold under deuteranopia (a red-green confusion)."""
    pair = ["#aa5500", "#558800"]
    normal, deuteranopia = seen(pair, "normal"), seen(pair, "deuteranomaly")
    assert ciede2000(tuple(normal[0]), tuple(normal[1])) > 40
    assert ciede2000(tuple(deuteranopia[0]), tuple(deuteranopia[1])) < MIN_DIFFERENCE


def test_no_old_colour_code_remains() -> None:
    package = Path(palette.__file__).parents[2]
    for path in package.rglob("*.py"):
        text = path.read_text(encoding="utf-8").lower()
        assert not [code for code in OLD_CODES if code in text], path
