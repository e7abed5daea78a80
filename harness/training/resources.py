"""What a run takes from the machine: peak resident memory of this process, and the bytes of
the tensors a training step holds.

Peak resident memory is read from the kernel's high-water mark (VmHWM in /proc/self/status)
and reset at the start of each run by writing "5" to /proc/self/clear_refs, because worker
processes are reused from run to run. Elsewhere than Linux it is not measured (None).
"""

from __future__ import annotations

from pathlib import Path

import torch
from torch import nn

STATUS = Path("/proc/self/status")
CLEAR_REFS = Path("/proc/self/clear_refs")
MEBIBYTE = 2**20
ADAM_STATES = 2  # first and second moment per parameter


def reset_peak_resident() -> bool:
    """Start a new high-water mark at the current resident size; False where unsupported."""
    try:
        CLEAR_REFS.write_text("5")
    except OSError:
        return False
    return True


def peak_resident_mb() -> float | None:
    """Peak resident memory of this process since the last reset, in MiB (None if unknown)."""
    try:
        lines = STATUS.read_text().splitlines()
    except OSError:
        return None
    for line in lines:
        if line.startswith("VmHWM:"):
            return int(line.split()[1]) / 1024  # the kernel reports kB
    return None


class ActivationMeter:
    """Bytes of tensors autograd keeps for backward during one forward pass."""

    def __init__(self) -> None:
        self.seen: set[int] = set()
        self.bytes = 0

    def pack(self, tensor: torch.Tensor) -> torch.Tensor:
        storage = tensor.untyped_storage()
        if storage.data_ptr() not in self.seen:
            self.seen.add(storage.data_ptr())
            self.bytes += storage.nbytes()
        return tensor

    @staticmethod
    def unpack(tensor: torch.Tensor) -> torch.Tensor:
        return tensor


def tensor_bytes(*tensors: torch.Tensor) -> int:
    return sum(t.numel() * t.element_size() for t in tensors)


def step_peak_mb(model: nn.Module, inputs: int, activations: int) -> float:
    """Peak tensor memory of a training step in MiB: the parameters, their gradients and Adam
    state, the step's input tensors and the activations autograd keeps for backward."""
    parameter_bytes = sum(tensor_bytes(p) for p in model.parameters())
    return (parameter_bytes * (2 + ADAM_STATES) + inputs + activations) / MEBIBYTE
