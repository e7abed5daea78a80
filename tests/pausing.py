"""Acting on a process in a known state: stop it (SIGSTOP), check the state while nothing can
change it, then act; a state not (or no longer) reached resumes the process and is tried again.
Kill and pause tests use this instead of hoping that a signal lands before the state passes.
"""

from __future__ import annotations

import os
import signal
import time
from collections.abc import Callable, Iterable


def stopped_in(pids: Iterable[int], reached: Callable[[], bool]) -> bool:
    """Stop every process of `pids`; True (they stay stopped) when `reached()` holds while
    they are stopped, else they are resumed and the answer is False."""
    pids = list(pids)
    for pid in pids:
        try:
            os.kill(pid, signal.SIGSTOP)
        except ProcessLookupError:  # ended since it was listed: nothing of it can move
            pass
    if reached():
        return True
    resume(pids)
    return False


def resume(pids: Iterable[int]) -> None:
    for pid in pids:
        try:
            os.kill(pid, signal.SIGCONT)
        except ProcessLookupError:  # it ended (killed by the test)
            pass


def wait_for(
    reached: Callable[[], bool], alive: Callable[[], None], what: str, seconds: float = 240
) -> None:
    """Poll until `reached()`; `alive()` asserts the process under test has not ended."""
    deadline = time.monotonic() + seconds
    while not reached():
        alive()
        assert time.monotonic() < deadline, f"{what} within {seconds:g} s"
        time.sleep(0.05)
