"""Text of the repository itself: words the project has chosen never to spell.

The three classic citation-graph datasets of the graph-attention literature are kept out of
every tracked file (names included). The check holds SHA-256 digests of the lower-cased words,
so this file does not spell them either.
"""

from __future__ import annotations

import hashlib
import re
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
FORBIDDEN_WORD_DIGESTS = frozenset(
    {
        "b8d8a9b672985b1df0c1c580e2981200646f9120945b31f5407722bda0e1e62a",
        "4ee813c5e32d41ea43e4b89d97108fc634c7d67532cd121a1e4dcbd7427fe838",
        "0408e4e185d65e5988e4dc8927c2a52d58db649fc9f933c4a323d337f0d01a78",
    }
)
# runs of letters and digits; '_' splits too, so snake_case names are seen word by word
WORD = re.compile(r"[^\W_]+")


def forbidden_words(text: str, digests: frozenset[str] = FORBIDDEN_WORD_DIGESTS) -> set[str]:
    words = {word.lower() for word in WORD.findall(text)}
    return {w for w in words if hashlib.sha256(w.encode()).hexdigest() in digests}


def tracked_files() -> list[str]:
    try:
        listing = subprocess.run(
            ["git", "ls-files", "-z"], cwd=ROOT, capture_output=True, check=True
        ).stdout
    except (OSError, subprocess.CalledProcessError):
        pytest.skip("not a git checkout")  # an unpacked source archive; CI always clones
    return [name for name in listing.decode().split("\0") if name]


def test_the_check_sees_a_word_of_its_own_list() -> None:
    # the digest of a plain word, to show the matching works without spelling the real ones
    digests = frozenset({hashlib.sha256(b"larkspur").hexdigest()})
    assert forbidden_words("the Larkspur_route (LARKSPUR)", digests) == {"larkspur"}
    assert forbidden_words("larkspurs 3larkspur ind.larkspur.x", digests) == {"larkspur"}
    assert forbidden_words("larkspurs 3larkspur", digests) == set()


def test_no_tracked_file_spells_the_citation_dataset_names() -> None:
    offenders = []
    for name in tracked_files():
        path = ROOT / name
        text = path.read_bytes().decode("utf-8", errors="ignore") if path.is_file() else ""
        found = forbidden_words(name) | forbidden_words(text)
        if found:
            offenders.append(f"{name}: {len(found)} forbidden word(s)")
    assert offenders == []
