"""Short explanations of the terms report tables use, said in a legend under each table."""

from __future__ import annotations

TERMS: dict[str, str] = {}


def legend_for(header: list[str] | tuple[str, ...]) -> str:
    """`term: meaning; ...` for each glossary term a header uses, in glossary order."""
    text = " ".join(header)
    return "; ".join(f"{term}: {meaning}" for term, meaning in TERMS.items() if term in text)
