"""The pruner registry: every pruner the schema offers, under one contract."""

from __future__ import annotations

from typing import get_args

import optuna
import pytest

from harness.schema.tuning import Tuning
from harness.tuning.study import PRUNERS, make_pruner

EPOCHS = 40  # warm-up: max(3, 40 // 10) = epoch 4 is the first judged


def test_the_registry_covers_the_schema() -> None:
    assert set(PRUNERS) == set(get_args(Tuning.model_fields["pruner"].annotation))


def prunes_at(pruner: optuna.pruners.BasePruner) -> list[int | None]:
    """Epoch at which each of five trials was stopped (None: ran to the end); the first three
    climb steadily, the last two stay flat far below them."""
    optuna.logging.set_verbosity(optuna.logging.ERROR)
    study = optuna.create_study(direction="maximize", pruner=pruner)
    stopped: list[int | None] = []
    for number in range(5):
        trial = study.ask()
        stopped.append(None)
        for epoch in range(1, EPOCHS + 1):
            trial.report(epoch / EPOCHS if number < 3 else 0.01, epoch)
            if trial.should_prune():
                stopped[-1] = epoch
                study.tell(trial, state=optuna.trial.TrialState.PRUNED)
                break
        else:
            study.tell(trial, 1.0 if number < 3 else 0.01)
    return stopped


@pytest.mark.parametrize("name", sorted(PRUNERS))
def test_every_pruner_keeps_its_contract(name: str) -> None:
    tuning = Tuning(trials=5, pruner=name)
    pruner = make_pruner(tuning, EPOCHS)
    assert isinstance(pruner, optuna.pruners.BasePruner)
    stopped = prunes_at(pruner)
    # no trial is judged before its warm-up epoch, and climbing trials are never stopped
    assert all(epoch is None or epoch >= 4 for epoch in stopped)
    assert stopped[:3] == [None, None, None]
    if name == "none":
        assert stopped == [None] * 5
    else:  # flat trials fall below the climbing ones at the first judged epoch
        assert stopped[3:] == [4, 4]
