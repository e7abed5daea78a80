"""What a run takes from the machine: peak resident memory of this process, torch threads.

Peak resident memory is read from the kernel's high-water mark (VmHWM in /proc/self/status)
and reset at the start of each run by writing "5" to /proc/self/clear_refs, because worker
processes are reused from run to run. Elsewhere than Linux it is not measured (None).
"""

from __future__ import annotations

from pathlib import Path

STATUS = Path("/proc/self/status")
CLEAR_REFS = Path("/proc/self/clear_refs")


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
