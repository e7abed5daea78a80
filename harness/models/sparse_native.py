"""The sparse kernel's loops in C (sparse_loops.c), built once per machine with the system's C
compiler and called through ctypes; None where no compiler is found (torch's operators then).

Why: torch's CSR products run one head at a time (each a pass of random reads of a C-wide row
slice, and a thread barrier per head), and on two threads they ran slower than on one here.
The loops below take every head in one pass over the edges, reading each source's whole row.
Threads: the rows are split into `torch.get_num_threads()` ranges of equal edge counts, each
run by one Python thread (ctypes releases the interpreter lock during the call), each writing
only its own rows; loops that sum into shared rows give each range a buffer of its own, so they
take at most BUFFERED_RANGES ranges.
"""

from __future__ import annotations

import ctypes
import functools
import hashlib
import os
import platform
import shutil
import subprocess
import tempfile
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import torch
from torch import Tensor

SOURCE = Path(__file__).with_name("sparse_loops.c")
FLAGS = ("-O3", "-march=native", "-fno-math-errno", "-shared", "-fPIC")
BUFFERED_RANGES = 4  # each costs one node-sized buffer (256 MB at 1M nodes, 8 heads x 8)


def pointer(tensor: Tensor | None) -> ctypes.c_void_p:
    return ctypes.c_void_p(None if tensor is None else tensor.data_ptr())


def integers(*values: int) -> list[ctypes.c_int64]:
    return [ctypes.c_int64(value) for value in values]


@functools.cache
def library() -> ctypes.CDLL | None:
    """The compiled loops, built on first use into a per-user folder keyed by the source, the
    flags and the machine; None where no C compiler is found or the build or load fails."""
    compiler = shutil.which(os.environ.get("CC", "gcc")) or shutil.which("cc")
    if compiler is None or not SOURCE.exists():
        return None
    code = SOURCE.read_text()
    machine = platform.machine() + platform.node()  # -march=native: this machine's code only
    key = hashlib.sha256((code + " ".join(FLAGS) + compiler + machine).encode()).hexdigest()[:16]
    built = Path(tempfile.gettempdir()) / f"heedful-kernels-{os.getuid()}" / f"loops_{key}.so"
    try:
        if not built.exists():
            build(compiler, built)
        return ctypes.CDLL(str(built))
    except (OSError, subprocess.CalledProcessError):  # no writable folder, or the build failed
        return None


def build(compiler: str, built: Path) -> None:
    built.parent.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory(dir=built.parent) as scratch:
        partial = Path(scratch) / "loops.so"
        command = [compiler, *FLAGS, str(SOURCE), "-o", str(partial), "-lm"]
        subprocess.run(command, check=True, capture_output=True)
        os.replace(partial, built)  # atomic: a concurrent process sees all of it or none


@torch.compiler.disable  # a file lookup (and a first build), not math to compile
def built() -> bool:
    return library() is not None


def native(*tensors: Tensor | None) -> bool:
    """Whether the C loops take these tensors: all float32, and the loops built."""
    present = [tensor for tensor in tensors if tensor is not None]
    return all(tensor.dtype == torch.float32 for tensor in present) and built()


@functools.cache
def pool(process: int) -> ThreadPoolExecutor:
    """Threads for the ranges after the first; one pool per process (a forked child makes its
    own, as the parent's threads do not survive the fork)."""
    return ThreadPoolExecutor(thread_name_prefix=f"heedful-kernel-{process}")


def ranges(offsets: Tensor, parts: int) -> list[tuple[int, int]]:
    """`parts` ranges of rows [first, last) with about equal edge counts (CSR `offsets`)."""
    rows = offsets.numel() - 1
    marks = torch.linspace(0, int(offsets[-1]), max(1, parts) + 1).long()
    bounds = torch.searchsorted(offsets, marks).clamp_(max=rows).tolist()
    bounds[0], bounds[-1] = 0, rows
    return [(first, last) for first, last in zip(bounds, bounds[1:], strict=False) if last > first]


def run_parts(call, parts: list[tuple[int, int]]) -> None:  # noqa: ANN001
    """call(part, first, last) for each range of rows, the first on this thread."""
    futures = [pool(os.getpid()).submit(call, n, *bounds) for n, bounds in enumerate(parts) if n]
    if parts:
        call(0, *parts[0])
    for future in futures:
        future.result()


def heads_product(offsets: Tensor, columns: Tensor, weights: Tensor, dense: Tensor) -> Tensor:
    """out[r, h] = sum_k weights[h, k] dense[columns[k], h] over row r's entries k:
    weights [H, E] (any strides), dense [N, H, C] -> [rows, H, C]."""
    dense = dense.contiguous()
    heads, width = dense.shape[1:]
    out = dense.new_empty(offsets.numel() - 1, heads, width)
    head_step, edge_step = weights.stride()
    fixed = [pointer(offsets), pointer(columns), pointer(weights)]
    fixed += [*integers(edge_step, head_step), pointer(dense), *integers(heads, width)]
    run = library().heads_product

    def call(part: int, first: int, last: int) -> None:
        run(*fixed, *integers(first, last), pointer(out))

    run_parts(call, ranges(offsets, torch.get_num_threads()))
    return out


def heads_scatter(offsets: Tensor, columns: Tensor, weights: Tensor, dense: Tensor) -> Tensor:
    """out[columns[k], h] += weights[h, k] dense[r, h] over row r's entries k: the transposed
    product, weights [H, E] (any strides), dense [rows, H, C] -> [N, H, C], N = rows. Each
    range after the first sums into a buffer of its own (columns are shared), added at the end.
    """
    dense = dense.contiguous()
    heads, width = dense.shape[1:]
    parts = ranges(offsets, min(torch.get_num_threads(), BUFFERED_RANGES))
    outs = [torch.zeros_like(dense) for _ in range(max(1, len(parts)))]
    head_step, edge_step = weights.stride()
    fixed = [pointer(offsets), pointer(columns), pointer(weights)]
    fixed += [*integers(edge_step, head_step), pointer(dense), *integers(heads, width)]
    run = library().heads_scatter

    def call(part: int, first: int, last: int) -> None:
        run(*fixed, *integers(first, last), pointer(outs[part]))

    run_parts(call, parts)
    return sum_into_first(outs)


def sum_into_first(tensors: list[Tensor]) -> Tensor:
    for other in tensors[1:]:
        tensors[0] += other
    return tensors[0]


def heads_sampled(offsets: Tensor, columns: Tensor, left: Tensor, right: Tensor) -> Tensor:
    """<left[i, h], right[columns[k], h]> on every entry k of row i: [N, H, C] x 2 -> [H, E]."""
    left, right = left.contiguous(), right.contiguous()
    heads, width = left.shape[1:]
    out = left.new_empty(columns.numel(), heads)
    fixed = [pointer(offsets), pointer(columns), pointer(left), pointer(right)]
    run = library().heads_sampled

    def call(part: int, first: int, last: int) -> None:
        run(*fixed, *integers(heads, width, first, last), pointer(out))

    run_parts(call, ranges(offsets, torch.get_num_threads()))
    return out.t()


def static_exponentials(
    offsets: Tensor, columns: Tensor, source: Tensor, target: Tensor, bound: Tensor, slope: float
) -> tuple[Tensor, Tensor, Tensor]:
    """GAT's (exp(LeakyReLU(u_j + t_i) - bound) [H, E], u_j + t_i > 0 [H, E], per-target sums
    [H, N]) from the score parts u, t [H, N] and the bound [H]; targets split into ranges."""
    source, target, bound = source.contiguous(), target.contiguous(), bound.contiguous()
    heads, nodes = source.shape
    edges = columns.numel()
    powers = source.new_empty(heads, edges)
    positive = torch.empty(heads, edges, dtype=torch.bool)
    sums = source.new_empty(heads, nodes)
    fixed = [pointer(offsets), pointer(columns), pointer(source), pointer(target), pointer(bound)]
    fixed += [*integers(heads, nodes, edges), ctypes.c_float(slope)]
    run = library().static_exponentials

    def call(part: int, first: int, last: int) -> None:
        run(*fixed, *integers(first, last), pointer(powers), pointer(positive), pointer(sums))

    run_parts(call, ranges(offsets, torch.get_num_threads()))
    return powers, positive, sums
