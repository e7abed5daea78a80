"""A run that ends its worker process: loaded by the workers alone, as one of the modules a
worker imports before its first run (`harness.execution.local.WORKER_MODULES`), so forked
workers and spawned replacements alike take it, and the process that starts them never does.

The run whose key DOOMED_RUN_KEY names gets SIGKILL from its own worker process as it
starts, as the kernel's out-of-memory killer would send it.
"""

from __future__ import annotations

import multiprocessing
import os
import signal

import harness.execution.runs

DOOMED_KEY = os.environ["DOOMED_RUN_KEY"]
_real_perform = harness.execution.runs.perform


def _perform(spec):  # noqa: ANN001, ANN202 - harness.execution.runs.perform, wrapped
    if spec.key == DOOMED_KEY and multiprocessing.parent_process() is not None:
        os.kill(os.getpid(), signal.SIGKILL)
    return _real_perform(spec)


harness.execution.runs.perform = _perform
