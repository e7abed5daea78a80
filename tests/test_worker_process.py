"""A Dask worker's allocator (harness/execution/worker_process.py): the thresholds Dask's nanny
fixes through MALLOC_TRIM_THRESHOLD_ are set back to ones that keep training buffers mapped."""

from __future__ import annotations

import os
import subprocess
import sys

import pytest

from harness.execution.worker_process import FIXED_BY

# fifty steps of a small MLP on 600 rows: activations of 600 x 256 floats (600 kB) each step
PROBE = """
import resource, sys, torch
from harness.execution.worker_process import allocator_fitted
fitted = allocator_fitted() if sys.argv[1] == "fit" else False
torch.manual_seed(0)
model = torch.nn.Sequential(torch.nn.Linear(64, 256), torch.nn.ReLU(), torch.nn.Linear(256, 4))
rows, optimiser = torch.randn(600, 64), torch.optim.Adam(model.parameters())
before = resource.getrusage(resource.RUSAGE_SELF).ru_minflt
for _ in range(50):
    optimiser.zero_grad()
    model(rows).sum().backward()
    optimiser.step()
print(fitted, resource.getrusage(resource.RUSAGE_SELF).ru_minflt - before)
"""


def faults(environment: dict[str, str], fit: bool) -> tuple[bool, int]:
    """(whether the allocator was fitted, minor page faults of the fifty steps); none of the
    variables is inherited (a nanny started in this process sets them here too)."""
    inherited = {k: v for k, v in os.environ.items() if k not in FIXED_BY}
    done = subprocess.run(
        [sys.executable, "-c", PROBE, "fit" if fit else "leave"],
        env={**inherited, **environment},
        capture_output=True,
        text=True,
        check=True,
    )
    fitted, count = done.stdout.split()
    return fitted == "True", int(count)


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="glibc's mallopt(3) only")
@pytest.mark.slow  # starts three Python processes that each import torch
def test_a_fixed_trim_threshold_is_undone_and_buffers_stay_mapped():
    """mallopt(3) (glibc manual): any MALLOC_TRIM_THRESHOLD_ turns off the dynamic mmap
    threshold, so every large buffer is mapped anew and its pages faulted in again each step;
    fitted, the process reuses its buffers as one without the variable does."""
    trimmed = {"MALLOC_TRIM_THRESHOLD_": "65536"}
    assert faults({}, fit=True)[0] is False  # nothing to undo: nothing changes
    fitted, after = faults(trimmed, fit=True)
    _, before = faults(trimmed, fit=False)
    assert fitted and before > 5 * after
