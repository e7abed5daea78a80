"""How a long command tells its caller what it is doing while it works."""

from __future__ import annotations

from collections.abc import Callable, Iterator
from contextlib import AbstractContextManager, contextmanager
from dataclasses import dataclass

Advance = Callable[[], None]


@contextmanager
def no_progress(description: str, total: int) -> Iterator[Advance]:
    yield lambda: None


@dataclass(frozen=True)
class Feedback:
    """`note` says what starts next; `progress(description, total)` counts finished runs."""

    note: Callable[[str], None] = lambda text: None
    progress: Callable[[str, int], AbstractContextManager[Advance]] = no_progress


SILENT = Feedback()
