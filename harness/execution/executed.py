"""What an execution did, the one outcome every executor returns; kept free of heavy imports
so that the commands read it before torch loads."""

from __future__ import annotations

import signal
from dataclasses import dataclass

INTERRUPTED = 130  # the exit status of a command cut off by Ctrl-C (128 + SIGINT)
RUNS_FAILED = 3  # the exit status of a command some of whose runs could not finish


@dataclass(frozen=True)
class LostRun:
    """A run whose worker process died under it twice: not stored, reported instead."""

    suite: str
    label: str
    seed: int
    key: str
    exit_code: int | None

    def message(self) -> str:
        how = "SIGKILL" if self.exit_code == -signal.SIGKILL else f"exit code {self.exit_code}"
        return (
            f"{self.suite}: run {self.label} seed {self.seed} (key {self.key}) ended its worker "
            f"process twice ({how}); likely cause: memory (the kernel's out-of-memory killer "
            "sends SIGKILL); lower the suite's sizes or run fewer jobs"
        )


@dataclass(frozen=True)
class Executed:
    """What an execution did: specs given, reused from the store (skipped), trained and stored
    (finished), whether Ctrl-C cut it off, and one line per run that could not finish."""

    planned: int
    skipped: int
    finished: int
    interrupted: bool
    failures: tuple[str, ...] = ()  # one line per run that could not finish, naming its spec
    lost: tuple[LostRun, ...] = ()  # of those, the runs that ended their worker twice

    @property
    def stopped(self) -> bool:
        return self.interrupted or bool(self.failures)

    @property
    def status(self) -> int:
        if self.interrupted:
            return INTERRUPTED
        return RUNS_FAILED if self.failures else 0
