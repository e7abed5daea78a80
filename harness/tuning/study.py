"""Fair tuning: one Optuna study per contender and data, on validation data only.

Each trial samples settings from the contender's search space (tree-structured Parzen
estimator, Bergstra et al., 2011, seeded), trains on the train nodes of the tuning seed's split
and reports the best validation score so far after every epoch, so that a median or successive
halving pruner (Jamieson and Talwalkar, 2016; Li et al., 2018) can stop hopeless trials. The test
nodes are dropped from the split before training. After tuning, the best settings run as
seeded repeats (harness/tuning/workers.py), and only those runs reach the result store.
"""

from __future__ import annotations

import os
import socket
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
import optuna
import pandas as pd
from optuna.samplers import BaseSampler, TPESampler
from optuna.trial import FrozenTrial, Trial

from harness.digest import json_digest
from harness.planning import RunSpec, expand, with_settings
from harness.schema.suite import Suite
from harness.schema.tuning import (
    Range,
    SpaceEntry,
    Tuning,
    is_integer_option,
    spaces,
)
from harness.training.runs import perform

Settings = dict[str, Any]
WORKER = f"{socket.gethostname()}:{os.getpid()}"  # which process ran a trial, for diagnosis


class TrialSeededSampler(BaseSampler):
    """TPE whose random state depends only on (seed, trial number).

    Workers sharing a study then propose different settings for different trials, and a
    single worker reproduces its proposals exactly.
    """

    def __init__(self, seed: int, startup_trials: int) -> None:
        self.seed = seed
        self.startup_trials = startup_trials
        self._current: tuple[int, TPESampler] | None = None

    def _tpe(self, trial: FrozenTrial | Trial) -> TPESampler:
        if self._current is None or self._current[0] != trial.number:
            state = np.random.SeedSequence([self.seed, trial.number]).generate_state(1)[0]
            sampler = TPESampler(seed=int(state), n_startup_trials=self.startup_trials)
            self._current = (trial.number, sampler)
        return self._current[1]

    def infer_relative_search_space(self, study, trial):  # noqa: ANN001, ANN201
        return self._tpe(trial).infer_relative_search_space(study, trial)

    def sample_relative(self, study, trial, search_space):  # noqa: ANN001, ANN201
        return self._tpe(trial).sample_relative(study, trial, search_space)

    def sample_independent(self, study, trial, param_name, param_distribution):  # noqa: ANN001, ANN201
        return self._tpe(trial).sample_independent(study, trial, param_name, param_distribution)

    def before_trial(self, study, trial):  # noqa: ANN001, ANN201
        self._tpe(trial).before_trial(study, trial)

    def after_trial(self, study, trial, state, values):  # noqa: ANN001, ANN201
        self._tpe(trial).after_trial(study, trial, state, values)


def startup_trials(tuning: Tuning) -> int:
    """Random trials before TPE models the history: a quarter of the budget, 2 to 10."""
    return 10 if tuning.trials is None else min(10, max(2, tuning.trials // 4))


def make_sampler(tuning: Tuning) -> BaseSampler:
    return TrialSeededSampler(tuning.seed, startup_trials(tuning))


def _warmup(epochs: int) -> int:
    """The first epoch a pruner may judge: a tenth of the epochs, at least the third."""
    return max(3, epochs // 10)


# pruner name (the schema's `tuning.pruner`) -> pruner for trials of `epochs` epochs
PRUNERS: dict[str, Callable[[Tuning, int], optuna.pruners.BasePruner]] = {
    "median": lambda tuning, epochs: optuna.pruners.MedianPruner(
        n_startup_trials=startup_trials(tuning), n_warmup_steps=_warmup(epochs)
    ),
    "halving": lambda tuning, epochs: optuna.pruners.SuccessiveHalvingPruner(
        min_resource=_warmup(epochs), reduction_factor=3
    ),
    "none": lambda tuning, epochs: optuna.pruners.NopPruner(),
}


def make_pruner(tuning: Tuning, epochs: int) -> optuna.pruners.BasePruner:
    """The suite's pruner; none judges a trial before its warm-up epoch (_warmup)."""
    return PRUNERS[tuning.pruner](tuning, epochs)


def study_name(base: RunSpec, space: dict[str, SpaceEntry], tuning: Tuning) -> str:
    """Names the study by everything that shapes its trials; the budget may grow later."""
    shaping = {
        "run": base.key,  # data, split, options, training, metric, setting, seed, version
        "space": {k: v if isinstance(v, list) else v.model_dump() for k, v in space.items()},
        "tuning": tuning.model_dump(mode="json", include={"seed", "pruner", "equal_parameters"}),
    }
    return f"{base.suite}:{base.contender}:{json_digest(shaping, 16)}"


def suggest(trial: Trial, space: dict[str, SpaceEntry], options: Any) -> Settings:
    """One value per search-space entry, drawn through the trial's sampler."""
    settings: Settings = {}
    for key, entry in space.items():
        if isinstance(entry, Range):
            if is_integer_option(options, key):
                settings[key] = trial.suggest_int(
                    key, int(entry.low), int(entry.high), log=entry.log
                )
            else:
                settings[key] = trial.suggest_float(key, entry.low, entry.high, log=entry.log)
        else:
            settings[key] = trial.suggest_categorical(key, list(entry))
    return settings


def objective_for(
    base: RunSpec,
    space: dict[str, SpaceEntry],
    admit: Callable[[Trial], None],
    sizing: Callable[[RunSpec], RunSpec] | None = None,
) -> Callable[[Trial], float]:
    """The trial function: `admit` may refuse a trial beyond the budget (before and after)."""

    def objective(trial: Trial) -> float:
        admit(trial)
        trial.set_user_attr("worker", WORKER)
        spec = with_settings(base, suggest(trial, space, base.options))
        if sizing is not None:
            spec = sizing(spec)
            trial.set_user_attr("hidden", spec.options.hidden)
        best = -float("inf")

        def on_epoch(epoch: int, value: float) -> None:
            nonlocal best
            best = max(best, value)
            trial.report(best, epoch)  # best so far: a steadier signal for the pruner
            if trial.should_prune():
                raise optuna.TrialPruned()

        result = perform(spec, on_epoch, validation_only=True)
        admit(trial)
        trial.set_user_attr("curve", [round(v, 6) for v in result.curve])
        trial.set_user_attr("params", result.params)
        return result.val_metric

    return objective


def best_settings(study: optuna.Study) -> Settings:
    """The best completed trial's settings (its sized hidden width included)."""
    best = study.best_trial
    settings = dict(best.params)
    if "hidden" in best.user_attrs:
        settings["hidden"] = best.user_attrs["hidden"]
    return settings


@dataclass(frozen=True)
class Plan:
    """One contender's tuning: its untuned spec on the tuning seed, its space and study."""

    contender: str
    base: RunSpec
    space: dict[str, SpaceEntry]
    study: str


def tuning_plan(suite: Suite) -> list[Plan]:
    """A plan per contender, in suite order; trials use the split of the suite's first seed."""
    assert suite.tuning is not None
    first = suite.seed_list[0]
    bases = {spec.contender: spec for spec in expand(suite) if spec.seed == first}
    return [
        Plan(name, bases[name], space, study_name(bases[name], space, suite.tuning))
        for name, space in spaces(suite.tuning, suite.contenders).items()
    ]


def repeats_study_name(suite: Suite, plans: list[Plan]) -> str:
    """The study whose enqueued trials are the seeded repeats of the tuned settings."""
    return f"{suite.name}:repeats:{json_digest([[p.study for p in plans], suite.seed_list], 16)}"


def tuning_outline(suite: Suite) -> list[str]:
    """Lines that say how a suite is tuned (for `heedful check`)."""
    tuning = suite.tuning
    budget = " and at most ".join(
        part
        for part in (
            f"{tuning.trials} finished trials" if tuning.trials else "",
            f"{tuning.seconds:g} seconds of trials" if tuning.seconds else "",
        )
        if part
    )
    lines = [
        f"tuning: every contender gets {budget}; {tuning.pruner} pruner; validation nodes of "
        f"seed {suite.seed_list[0]} only; the best settings then run on every seed"
    ]
    if tuning.equal_parameters is not None:
        lines.append(f"  hidden widths sized to the parameters of {tuning.equal_parameters!r}")
    for plan in tuning_plan(suite):
        lines.append(f"  {plan.contender} searches {', '.join(plan.space)}")
    return lines


def current_tuned_runs(runs: pd.DataFrame, suite: Suite) -> pd.DataFrame:
    """Stored runs that are seeded repeats of this tuned suite's current studies."""
    studies = {plan.study for plan in tuning_plan(suite)}
    current = runs["extras"].map(lambda extras: extras.get("tuning_study") in studies)
    return runs[current & runs["seed"].isin(suite.seed_list)]
