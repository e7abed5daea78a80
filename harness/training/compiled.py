"""torch.compile for one run: the on-disk cache, and the fall-back to eager when it fails."""

from __future__ import annotations

import os
import statistics
from collections.abc import Callable
from pathlib import Path
from typing import Any, TypeVar

import torch
from torch import nn

# inductor is torch's default compiler; tests swap in a backend that raises
BACKEND: str | Callable = "inductor"
CACHE_VARIABLE = "TORCHINDUCTOR_CACHE_DIR"

Result = TypeVar("Result")
CACHES_SET: set[str] = set()  # values this process gave the variable (a run may change them)


def use_compile_cache(cache_folder: str) -> None:
    """Compiled kernels go under Heedful's cache folder (`compile/`), shared by every process and
    night that uses the folder; a TORCHINDUCTOR_CACHE_DIR set by the user wins. Importing torch
    sets the variable to its own default (a temporary folder), which is not the user's choice."""
    from torch._inductor.runtime.cache_dir_utils import default_cache_dir
    from torch._inductor.utils import clear_caches

    wanted = str(Path(cache_folder).resolve() / "compile")
    current = os.environ.get(CACHE_VARIABLE)
    ours = (None, os.path.abspath(default_cache_dir()), *CACHES_SET)
    if current == wanted or current not in ours:
        return
    os.environ[CACHE_VARIABLE] = wanted
    CACHES_SET.add(wanted)
    clear_caches()  # folders torch derived from the old value


class Forward:
    """The model as the training loop calls it: eager, or compiled with a fall-back to eager.

    `guarded(action)` runs `action(model)` on the compiled model; if compiling (or the compiled
    code) raises, the random state is put back, the run switches to eager for good, and the
    action runs once more eagerly. The first compiled call happens before any weight changes
    (the action's optimizer step comes last), so a run that falls back at once trains exactly
    as an eager run would.
    """

    def __init__(self, model: nn.Module, compile_model: bool):
        self.model = model
        self.wanted = compile_model
        self.compiled: nn.Module | None = None
        self.warning: str | None = None
        if compile_model:
            # dropout masks come from the compiler's own generator (drawing them from torch's, as
            # eager does, made a GAT epoch three times slower): seeded, but not eager's masks
            # static shapes: one graph per run, recompiled only for a graph of another size
            self.compiled = torch.compile(model, backend=BACKEND, dynamic=False)

    @property
    def mode(self) -> str:
        return "compiled" if self.compiled is not None else "eager"

    def guarded(self, action: Callable[[nn.Module], Result]) -> Result:
        if self.compiled is None:
            return action(self.model)
        state = torch.get_rng_state()
        try:
            return action(self.compiled)
        except Exception as error:  # any failure of the compiled path: no crash, eager instead
            torch.set_rng_state(state)
            self.fall_back(error)
            return action(self.model)

    def fall_back(self, error: Exception) -> None:
        cause: BaseException = error
        # dynamo wraps the compiler's own error (as inner_exception or as the cause)
        while (inner := getattr(cause, "inner_exception", None) or cause.__cause__) is not None:
            cause = inner
        first_line = (str(cause).strip().splitlines() or [""])[0][:200]
        self.warning = (
            f"compiling failed ({type(error).__name__}), trained eagerly instead: "
            f"{type(cause).__name__}: {first_line}"
        )
        self.compiled = None
        torch._dynamo.reset()  # drop half-built graphs and guards of the failed attempt


def compile_share(epoch_seconds: list[float]) -> float:
    """Seconds the first compiled epoch (the second) took beyond a typical epoch: the median of
    the later ones, or the eager first epoch when there are none."""
    if len(epoch_seconds) < 2:
        return 0.0
    later = epoch_seconds[2:] or epoch_seconds[:1]
    return max(0.0, epoch_seconds[1] - statistics.median(later))


def compile_record(compiled: bool, seconds: float, warning: str | None) -> dict[str, Any]:
    """extras.compile of a run: the mode used, the compile seconds, and the fall-back warning."""
    record: dict[str, Any] = {"mode": "compiled" if compiled else "eager", "seconds": seconds}
    if warning is not None:
        record["warning"] = warning
    return record
