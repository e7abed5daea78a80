"""Peak resident memory per run: the kernel's high-water mark, reset between runs."""

from __future__ import annotations

import sys

import pytest
import torch

from harness.training.resources import peak_resident_mb, reset_peak_resident

pytestmark = pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")


def test_peak_rises_with_a_large_tensor_and_falls_after_a_reset():
    assert reset_peak_resident()
    before = peak_resident_mb()
    block = torch.ones(64 * 2**20 // 4)  # 64 MiB, written so every page is resident
    during = peak_resident_mb()
    del block
    assert during - before >= 60  # the pages of the tensor, beyond what was resident
    assert reset_peak_resident()
    assert peak_resident_mb() < during - 50
