"""Trials of a shared study run one after another in this process, with heartbeats.

Optuna's `study.optimize` ends the whole worker ("Cannot tell a FAIL trial") when this process
was paused past the grace period, another worker marked its trial failed and queued a retry,
and the trial then finished here. In this loop such a late trial is dropped: its result never
counts, its retry runs in its place, and the worker carries on.
"""

from __future__ import annotations

import threading
import warnings
from collections.abc import Callable, Iterator
from contextlib import contextmanager

import optuna
from optuna.exceptions import UpdateFinishedTrialError
from optuna.trial import Trial, TrialState

from harness.errors import ServiceOutage
from harness.tuning.storage import fail_stale_trials


@contextmanager
def heartbeats(study: optuna.Study, trial: Trial) -> Iterator[None]:
    """The trial's heartbeat is recorded every interval while the block runs."""
    storage = study._storage  # Optuna gives no public handle on a study's storage
    interval = storage.get_heartbeat_interval()
    stop = threading.Event()

    def beat() -> None:
        while True:
            try:
                storage.record_heartbeat(trial._trial_id)
            except ServiceOutage:
                return  # the trial's own next call meets the outage and ends the worker
            if stop.wait(interval):
                return

    thread = threading.Thread(target=beat, name="trial heartbeat", daemon=True)
    thread.start()
    try:
        yield
    finally:
        stop.set()
        thread.join()


def run_trials(
    study: optuna.Study,
    objective: Callable[[Trial], float],
    keep_going: Callable[[optuna.Study], bool],
    refused: tuple[type[Exception], ...],
) -> None:
    """While `keep_going(study)`: take a trial (a queued one first), run `objective` on it and
    tell the study how it ended. A trial the objective refuses (`refused`) is marked failed;
    any other error marks it failed and is raised, unless another worker finished the trial
    first: then the trial came back late and is dropped."""
    while keep_going(study):
        fail_stale_trials(study)
        with warnings.catch_warnings():  # heartbeats are recorded here, as optimize would
            warnings.filterwarnings("ignore", "Heartbeat of storage", UserWarning)
            trial = study.ask()
        value, state, error = None, TrialState.COMPLETE, None
        with heartbeats(study, trial):
            try:
                value = objective(trial)
            except optuna.TrialPruned:
                state = TrialState.PRUNED
            except UpdateFinishedTrialError:
                continue  # marked failed by another worker while this one was paused
            except refused:
                state = TrialState.FAIL
            except BaseException as raised:  # Ctrl-C too: the trial must not stay running
                state, error = TrialState.FAIL, raised
        if study._storage.get_trial(trial._trial_id).state.is_finished():
            continue  # late: a retry of it runs elsewhere, and its error is news to no one
        study.tell(trial, value, state=state, skip_if_finished=True)
        if error is not None:
            raise error
