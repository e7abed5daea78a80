"""Content hashes: SHA-256 of a text, or of JSON content written in one canonical form."""

from __future__ import annotations

import hashlib
import json
from typing import Any


def text_digest(text: str, length: int = 24) -> str:
    """The first `length` hex digits of the text's SHA-256."""
    return hashlib.sha256(text.encode()).hexdigest()[:length]


def json_digest(content: Any, length: int = 24) -> str:
    """Hash of JSON content with sorted keys and no spaces, so equal content hashes equal;
    values JSON cannot hold count by their text."""
    text = json.dumps(content, sort_keys=True, separators=(",", ":"), default=str)
    return text_digest(text, length)
