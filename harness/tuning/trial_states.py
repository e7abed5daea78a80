"""Trial states of a shared study: what counts against the budget, and who came first."""

from __future__ import annotations

from dataclasses import dataclass

import optuna
from optuna.trial import FrozenTrial, Trial, TrialState

FINISHED = (TrialState.COMPLETE, TrialState.PRUNED)
LIVE = (TrialState.COMPLETE, TrialState.PRUNED, TrialState.RUNNING, TrialState.WAITING)
POLL_SECONDS = 0.5


class SurplusTrial(Exception):
    """A trial beyond the budget, or a second trial for one repeat: marked failed, not counted."""


@dataclass(frozen=True)
class Usage:
    """What a study has used of its budget so far."""

    completed: int
    pruned: int
    running: int
    waiting: int
    failed: int
    seconds: float

    @property
    def finished(self) -> int:
        return self.completed + self.pruned


def trial_seconds(trial: FrozenTrial) -> float:
    if trial.datetime_start is None or trial.datetime_complete is None:
        return 0.0
    return (trial.datetime_complete - trial.datetime_start).total_seconds()


def usage(study: optuna.Study) -> Usage:
    trials = study.get_trials(deepcopy=False)

    def count(state: TrialState) -> int:
        return sum(1 for t in trials if t.state == state)

    return Usage(
        completed=count(TrialState.COMPLETE),
        pruned=count(TrialState.PRUNED),
        running=count(TrialState.RUNNING),
        waiting=count(TrialState.WAITING),
        failed=count(TrialState.FAIL),
        seconds=sum(trial_seconds(t) for t in trials if t.state in FINISHED),
    )


def trial_id(trial: Trial | FrozenTrial) -> int:
    # Optuna numbers trials per study from the storage's trial id; the id orders creation
    return trial._trial_id
