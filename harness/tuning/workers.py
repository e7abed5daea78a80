"""Shared execution of a tuned suite through Optuna's storage: any number of worker processes,
on one machine or many, pointed at the same storage cooperate without a queue of our own.

Tuning trials: every worker joins each contender's study. A trial is admitted only while
fewer than `trials` live trials (waiting, running, finished) have a smaller id, checked when it
starts and again before it reports, so a study never holds more finished trials than the
budget; a refused trial is marked failed and never counted.
Repeats: the seeded repeats are trials enqueued in one repeats study; popping a waiting trial
is atomic in Optuna's storage, and of two live trials for one (contender, seed) only the one
with the smaller id runs. A killed worker's trial loses its heartbeat, is marked failed by the
next worker that looks and is queued again with the same settings (Optuna retry callback).
"""

from __future__ import annotations

import logging
import time
from collections.abc import Callable
from dataclasses import dataclass

import optuna
from optuna.trial import Trial

from harness.execution.executors import Executor
from harness.schema.suite import Suite
from harness.schema.tuning import Tuning
from harness.storage import store
from harness.tuning.repeats import run_repeats, sync_repeats
from harness.tuning.sizing import sizer, target_count
from harness.tuning.storage import fail_stale_trials, open_storage
from harness.tuning.study import (
    Plan,
    best_settings,
    make_pruner,
    make_sampler,
    objective_for,
    repeats_study_name,
    tuning_plan,
)
from harness.tuning.trial_loop import run_trials
from harness.tuning.trial_states import (
    FINISHED,
    LIVE,
    POLL_SECONDS,
    SurplusTrial,
    Usage,
    trial_id,
    trial_seconds,
    usage,
)


def budget_spent(used: Usage, tuning: Tuning) -> bool:
    """The budget is spent when the trials or the seconds of training are used up."""
    by_trials = tuning.trials is not None and used.finished >= tuning.trials
    by_seconds = tuning.seconds is not None and used.seconds >= tuning.seconds
    return by_trials or by_seconds


def has_room(used: Usage, tuning: Tuning) -> bool:
    """Room for another trial: budget left, and a queued retry or trials not yet started."""
    if budget_spent(used, tuning):
        return False
    busy = used.finished + used.running + used.waiting
    return used.waiting > 0 or tuning.trials is None or busy < tuning.trials


def admission(study: optuna.Study, tuning: Tuning) -> Callable[[Trial], None]:
    """Raises SurplusTrial for a trial beyond the budget."""

    def admit(trial: Trial) -> None:
        trials = study.get_trials(deepcopy=False, states=LIVE)
        if tuning.trials is not None:
            ahead = sum(1 for t in trials if trial_id(t) < trial_id(trial))
            if ahead >= tuning.trials:
                raise SurplusTrial(f"trial {trial.number} is beyond the budget")
        if tuning.seconds is not None:
            spent = sum(trial_seconds(t) for t in trials if t.state in FINISHED)
            if spent >= tuning.seconds:
                raise SurplusTrial(f"trial {trial.number} starts after the time budget")

    return admit


def take_share(study: optuna.Study, objective: Callable[[Trial], float], tuning: Tuning) -> None:
    """Run trials of this study until the budget has no room for another."""

    run_trials(study, objective, lambda study: has_room(usage(study), tuning), (SurplusTrial,))


def settle(study: optuna.Study, objective: Callable[[Trial], float], tuning: Tuning) -> None:
    """Wait until the budget is spent and no trial runs; take over trials of dead workers."""
    while True:
        fail_stale_trials(study)
        used = usage(study)
        if budget_spent(used, tuning) and used.running == 0:
            return
        if has_room(used, tuning):
            take_share(study, objective, tuning)
        else:
            time.sleep(POLL_SECONDS)


@dataclass(frozen=True)
class WorkOutcome:
    """What one worker saw at the end: the keys of the repeats it stored locally."""

    keys: frozenset[str]


def tuning_studies(
    suite: Suite, storage: optuna.storages.BaseStorage
) -> tuple[list[Plan], dict[str, optuna.Study], Callable | None]:
    """The contenders' studies (created if new) and the equal-parameter sizer, if any."""
    tuning = suite.tuning
    plans = tuning_plan(suite)
    resize = None
    if tuning.equal_parameters is not None:
        resize = sizer(target_count(tuning.equal_parameters, {p.contender: p.base for p in plans}))
    studies = {
        plan.contender: optuna.create_study(
            storage=storage,
            study_name=plan.study,
            direction="maximize",
            sampler=make_sampler(tuning),
            pruner=make_pruner(tuning, plan.base.training.epochs),
            load_if_exists=True,
        )
        for plan in plans
    }
    return plans, studies, resize


def work(suite: Suite, store_path: store.Store | None, storage_url: str) -> WorkOutcome:
    """Take part in tuning every contender, then in the seeded repeats; store every repeat
    (unless `store_path` is None: on a cluster worker, which leaves storing to the submitter)."""
    optuna.logging.set_verbosity(logging.ERROR)  # refused trials are expected, not news
    tuning = suite.tuning
    seconds = (tuning.heartbeat_seconds, tuning.grace_seconds)
    storage = open_storage(storage_url, *seconds, checked=True)  # the command checked it
    plans, studies, resize = tuning_studies(suite, storage)
    objectives = {
        p.contender: objective_for(p.base, p.space, admission(studies[p.contender], tuning), resize)
        for p in plans
    }
    for plan in plans:  # first pass: no waiting, so workers spread over contenders
        take_share(studies[plan.contender], objectives[plan.contender], tuning)
    for plan in plans:
        settle(studies[plan.contender], objectives[plan.contender], tuning)
    settings = {name: best_settings(study) for name, study in studies.items()}
    repeats = optuna.create_study(
        storage=storage,
        study_name=repeats_study_name(suite, plans),
        direction="maximize",
        load_if_exists=True,
    )
    names = {p.contender: p.study for p in plans}
    run_repeats(suite, repeats, settings, names, resize, store_path)
    keys = sync_repeats(repeats, store_path)
    return WorkOutcome(keys)


def tune(
    suite: Suite, store_path: store.Store, storage_url: str, executor: Executor
) -> WorkOutcome:
    """One tuning worker per worker of the executor, all on one storage. Every repeat ends in
    the store: written by the workers, or by this process when they cannot reach the store."""
    tuning = suite.tuning
    storage = open_storage(
        storage_url, tuning.heartbeat_seconds, tuning.grace_seconds, checked=True
    )  # opened early: the command checked it
    on_workers = store_path if executor.workers_store else None
    # pinned: every worker plans the same runs and study names, whatever files it sees
    suite = suite.model_copy(update={"data": suite.data.pinned()})
    outcomes = executor.run_copies(work, (suite, on_workers, storage_url), (suite.data,))
    if on_workers is not None:
        return outcomes[0]  # the outcome all of them agree on
    name = repeats_study_name(suite, tuning_plan(suite))
    repeats = optuna.load_study(study_name=name, storage=storage)
    return WorkOutcome(sync_repeats(repeats, store_path))
