"""GATv2's dynamic scores in one pass over the edges (Brody et al., 2022): a small C loop, built
once per machine with the system's C compiler and called through ctypes.

s_ij = a^T LeakyReLU(x_s[j] + x_t[i] [+ e_ij]) per head, for the edges j -> i in target order.
Forward: for each target i, each in-edge forms its H x C vector, applies LeakyReLU and the dot
product with a in registers: the vector never reaches memory. Backward forms it again:
    g_h = g_s a LeakyReLU'(h),  g_x_s[j] += g_h,  g_x_t[i] += g_h,  g_a += g_s LeakyReLU(h)
Torch's own operators need several passes over edges x heads x C floats for the same work
(harness.models.sparse_dynamic, the path taken where no compiler is found).

Threads: the targets are split into `torch.get_num_threads()` ranges of equal edge counts, each
run by one Python thread (ctypes releases the interpreter lock during the call). A range
writes its own targets' rows; sources are shared, so each range after the first sums g_x_s
into a buffer of its own, added up at the end.
"""

from __future__ import annotations

import ctypes
import functools
import hashlib
import os
import shutil
import subprocess
import tempfile
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import torch
from torch import Tensor

from harness.models.sparse_kernel import TargetGraph

SOURCE = r"""
#include <stdint.h>

#define AHEAD 8 /* edges ahead whose source rows are fetched early: the reads are random */

/* x_s[j] + x_t[i] (+ e_ij) for one edge into `hidden` (`row` = heads x width floats) */
static inline void form(const float *restrict at_source, const float *restrict at_target,
                        const float *restrict edge, int64_t row, float *restrict hidden) {
    for (int64_t c = 0; c < row; ++c) hidden[c] = at_source[c] + at_target[c];
    if (edge)
        for (int64_t c = 0; c < row; ++c) hidden[c] += edge[c];
}

static inline void fetch(const float *xs, const int64_t *sources, int64_t k, int64_t end,
                         int64_t row) {
    if (k + AHEAD < end)
        for (int64_t c = 0; c < row; c += 16) __builtin_prefetch(xs + sources[k + AHEAD] * row + c);
}

void dynamic_forward(const float *restrict xs, const float *restrict xt,
                     const float *restrict att, const float *restrict ep,
                     const int64_t *restrict offsets, const int64_t *restrict sources,
                     int64_t first, int64_t last, int64_t heads, int64_t width, float slope,
                     float *restrict scores) {
    const int64_t row = heads * width, end = offsets[last];
    float hidden[row];
    for (int64_t i = first; i < last; ++i) {
        for (int64_t k = offsets[i]; k < offsets[i + 1]; ++k) {
            fetch(xs, sources, k, end, row);
            form(xs + sources[k] * row, xt + i * row, ep ? ep + k * row : 0, row, hidden);
            for (int64_t c = 0; c < row; ++c)
                hidden[c] = att[c] * (hidden[c] > 0.0f ? hidden[c] : hidden[c] * slope);
            for (int64_t h = 0; h < heads; ++h) {
                float total = 0.0f;
                for (int64_t c = h * width; c < (h + 1) * width; ++c) total += hidden[c];
                scores[k * heads + h] = total;
            }
        }
    }
}

void dynamic_backward(const float *restrict xs, const float *restrict xt,
                      const float *restrict att, const float *restrict ep,
                      const int64_t *restrict offsets, const int64_t *restrict sources,
                      int64_t first, int64_t last, int64_t heads, int64_t width, float slope,
                      const float *restrict grad, float *restrict grad_source,
                      float *restrict grad_target, float *restrict grad_att,
                      float *restrict grad_edge) {
    const int64_t row = heads * width, end = offsets[last];
    float hidden[row], weight[row], gradient[row], att_sum[row], target_sum[row];
    for (int64_t c = 0; c < row; ++c) att_sum[c] = 0.0f;
    for (int64_t i = first; i < last; ++i) {
        for (int64_t c = 0; c < row; ++c) target_sum[c] = 0.0f;
        for (int64_t k = offsets[i]; k < offsets[i + 1]; ++k) {
            fetch(xs, sources, k, end, row);
            form(xs + sources[k] * row, xt + i * row, ep ? ep + k * row : 0, row, hidden);
            for (int64_t h = 0; h < heads; ++h)
                for (int64_t c = h * width; c < (h + 1) * width; ++c)
                    weight[c] = grad[k * heads + h];
            for (int64_t c = 0; c < row; ++c) {
                const int positive = hidden[c] > 0.0f;
                gradient[c] = weight[c] * att[c] * (positive ? 1.0f : slope);
                att_sum[c] += weight[c] * (positive ? hidden[c] : hidden[c] * slope);
                target_sum[c] += gradient[c];
            }
            float *restrict at_source = grad_source + sources[k] * row;
            for (int64_t c = 0; c < row; ++c) at_source[c] += gradient[c];
            if (grad_edge)
                for (int64_t c = 0; c < row; ++c) grad_edge[k * row + c] = gradient[c];
        }
        for (int64_t c = 0; c < row; ++c) grad_target[i * row + c] = target_sum[c];
    }
    for (int64_t c = 0; c < row; ++c) grad_att[c] = att_sum[c];
}
"""
FLAGS = ("-O3", "-march=native", "-fno-math-errno", "-shared", "-fPIC")
FLOAT = ctypes.POINTER(ctypes.c_float)


def pointer(tensor: Tensor | None) -> ctypes.c_void_p:
    return ctypes.c_void_p(None if tensor is None else tensor.data_ptr())


@functools.cache
def library() -> ctypes.CDLL | None:
    """The compiled loops, built on first use into a per-user folder keyed by the source and
    flags; None where no C compiler is found or the build fails (the torch path runs then)."""
    compiler = shutil.which(os.environ.get("CC", "gcc")) or shutil.which("cc")
    if compiler is None:
        return None
    key = hashlib.sha256((SOURCE + " ".join(FLAGS) + compiler).encode()).hexdigest()[:16]
    folder = Path(tempfile.gettempdir()) / f"heedful-kernels-{os.getuid()}"
    built = folder / f"dynamic_scores_{key}.so"
    if not built.exists():
        folder.mkdir(parents=True, exist_ok=True)
        with tempfile.TemporaryDirectory(dir=folder) as scratch:
            code, partial = Path(scratch) / "kernel.c", Path(scratch) / "kernel.so"
            code.write_text(SOURCE)
            done = subprocess.run([compiler, *FLAGS, str(code), "-o", str(partial)], check=False)
            if done.returncode != 0:
                return None
            os.replace(partial, built)  # atomic: a concurrent process sees all of it or none
    return ctypes.CDLL(str(built))


@functools.cache
def pool(process: int) -> ThreadPoolExecutor:
    """Threads for the ranges after the first; one pool per process (a forked child makes its
    own, as the parent's threads do not survive the fork)."""
    return ThreadPoolExecutor(thread_name_prefix=f"heedful-kernel-{process}")


def ranges(graph: TargetGraph, parts: int) -> list[tuple[int, int]]:
    """`parts` ranges of targets [first, last) with about equal edge counts."""
    marks = torch.linspace(0, graph.edges, max(1, parts) + 1).long()
    bounds = torch.searchsorted(graph.offsets, marks).clamp_(max=graph.nodes).tolist()
    bounds[0], bounds[-1] = 0, graph.nodes
    return [(first, last) for first, last in zip(bounds, bounds[1:], strict=False) if last > first]


def run_parts(call, parts: list[tuple[int, int]]) -> None:  # noqa: ANN001
    """call(part, first, last) for each range of targets, the first on this thread."""
    futures = [pool(os.getpid()).submit(call, n, *bounds) for n, bounds in enumerate(parts) if n]
    if parts:
        call(0, *parts[0])
    for future in futures:
        future.result()


def fused_forward(inputs: tuple, graph: TargetGraph, slope: float) -> Tensor:
    """Scores [E, H] (edge-major) from (x_s, x_t, a, edge part or None), all float32."""
    source, target, att, edge_part = inputs
    heads, width = source.shape[1:]
    scores = source.new_empty(graph.edges, heads)
    run = library().dynamic_forward
    fixed = [pointer(t) for t in (source, target, att, edge_part, graph.offsets)]
    indices = pointer(graph.source_index)

    def call(part: int, first: int, last: int) -> None:
        run(*fixed, indices, ctypes.c_int64(first), ctypes.c_int64(last), ctypes.c_int64(heads),
            ctypes.c_int64(width), ctypes.c_float(slope), pointer(scores))  # fmt: skip

    run_parts(call, ranges(graph, torch.get_num_threads()))
    return scores


def fused_backward(inputs: tuple, graph: TargetGraph, slope: float, grad: Tensor) -> tuple:
    """(g_x_s, g_x_t, g_a, g_edge or None) from the scores' gradient [E, H] (edge-major)."""
    source, target, att, edge_part = inputs
    heads, width = source.shape[1:]
    parts = ranges(graph, torch.get_num_threads())
    grad_sources = [torch.zeros_like(source) for _ in range(max(1, len(parts)))]
    grad_target, grad_atts = torch.zeros_like(target), att.new_zeros(len(parts) + 1, *att.shape)
    grad_edge = None if edge_part is None else torch.empty_like(edge_part)
    run = library().dynamic_backward
    fixed = [pointer(t) for t in (source, target, att, edge_part, graph.offsets)]
    indices = pointer(graph.source_index)

    def call(part: int, first: int, last: int) -> None:
        run(*fixed, indices, ctypes.c_int64(first), ctypes.c_int64(last), ctypes.c_int64(heads),
            ctypes.c_int64(width), ctypes.c_float(slope), pointer(grad),
            pointer(grad_sources[part]), pointer(grad_target), pointer(grad_atts[part]),
            pointer(grad_edge))  # fmt: skip

    run_parts(call, parts)
    grad_source = grad_sources[0]
    for other in grad_sources[1:]:
        grad_source += other
    return grad_source, grad_target, grad_atts.sum(0), grad_edge
