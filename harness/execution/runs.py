"""What every executor shares: one run's store row, the specs still to run, and the line that
names a run that could not finish."""

from __future__ import annotations

import errno
from typing import Any

from harness.errors import InputError, ServiceOutage
from harness.planning import RunSpec
from harness.results import RunResult
from harness.storage import store
from harness.storage.predictions import encode, to_text
from harness.training.runs import as_trained, perform


def record_of(spec: RunSpec, result: RunResult) -> dict[str, Any]:
    """The store row of a finished run, keyed by the compile mode it actually used; its test
    predictions travel as text, when made."""
    spec = as_trained(spec, result)
    record = {
        "suite": spec.suite,
        "contender": spec.contender,
        "key": spec.key,
        "model": spec.model,
        "options": spec.options.model_dump(mode="json"),
        "point": spec.point,
        "seed": spec.seed,
        "metric": spec.metric,
        "val_metric": result.val_metric,
        "test_metric": result.test_metric,
        **{f"test_{name}": result.test_scores.get(name) for name in store.TEST_METRICS},
        "epochs": result.epochs,
        "best_epoch": result.best_epoch,
        "seconds": result.seconds,
        "seconds_per_epoch": result.seconds_per_epoch,
        "params": result.params,
        "peak_mb": result.peak_mb,
        "curve": result.curve,
        "extras": result.extras,
    }
    if result.predictions is not None and spec.keep_predictions:
        record["predictions"] = to_text(encode(result.predictions))
    return record


def run_and_store(spec: RunSpec, store_path: store.Store) -> str:
    """One run, committed to the store as soon as it ends."""
    store.save_run(store_path, record_of(spec, perform(spec)))
    return spec.contender


def pending(specs: list[RunSpec], store_path: store.Store) -> list[RunSpec]:
    """Specs whose result is not stored yet (for their suite and contender).

    A compiled spec counts as stored when its eager twin is: a compile that failed once on this
    machine is not retried on every invocation, and eager and compiled runs compute the same
    thing (they differ in speed and in the last float bits).
    """
    suites = {spec.suite for spec in specs}
    done = set()
    for suite in suites:
        done |= {(suite, c, k) for c, k in store.finished_keys(store_path, suite)}
    return [s for s in specs if not any((s.suite, s.contender, k) in done for k in s.stored_keys)]


NO_SPACE_ERRNOS = (errno.ENOSPC, errno.EDQUOT)
NO_SPACE_WORDS = ("database or disk is full", "No space left on device", "Disk quota exceeded")


def out_of_space(error: BaseException) -> bool:
    """Whether a run failed because the disk filled, so that every later run would too. Read
    from the errno and the text: an error a worker sends back has lost its cause."""
    seen: BaseException | None = error
    for _ in range(10):  # a chain of causes, never a cycle
        if seen is None:
            return False
        if isinstance(seen, OSError) and seen.errno in NO_SPACE_ERRNOS:
            return True
        if any(words in str(seen) for words in NO_SPACE_WORDS):
            return True
        seen = seen.__cause__ or seen.__context__
    return False


def no_space_line(left: int) -> str:
    """The line that ends an execution stopped by a full disk."""
    return (
        f"stopped: the disk is full, so {left} runs were not started (each would fail the same "
        "way); finished runs are stored: free some space and run the same command again"
    )


def describe(spec: RunSpec) -> str:
    return f"run {spec.suite}/{spec.label} seed {spec.seed} (key {spec.key})"


def failure_line(spec: RunSpec, error: BaseException) -> str:
    """One line naming a run that raised; bad input raises again, naming the run, since it
    stops the whole execution (exit status 2) where any other error stops only that run."""
    message = " ".join(str(error).split()) or "no message"
    if isinstance(error, ServiceOutage):
        raise error  # the store's server, not this run: it stops every run as it is
    if isinstance(error, InputError) and not out_of_space(error):  # a full disk: see no_space_line
        raise InputError(f"{describe(spec)}: {message}") from None
    return f"{describe(spec)} failed: {type(error).__name__}: {message}"
