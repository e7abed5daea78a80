"""Memory a run will need, estimated from sizes alone before anything is allocated.

A training step keeps, per layer, the tensors autograd saves for backward: per node its input
and the layer's outputs, per message edge the gathered messages and (attention) the scores of
every head. Full batch counts every node and edge of the graph (the k-hop set for hop masks,
plus self-loops); sampled batching counts a batch: `batch_size` targets and, hop by hop, up to
`fanout` neighbours of each, capped by the graph. A process also holds the graph itself, the
Python and library images, and what backward and the allocator add on top of the saved
tensors; the factors below are measured (docs/large-graphs.md, "Memory estimate").
"""

from __future__ import annotations

import os
from dataclasses import dataclass, replace
from typing import Any

from pydantic import BaseModel

from harness.errors import InputError
from harness.planning import design_points
from harness.schema.ablation import point_label
from harness.schema.contenders import ContenderBase
from harness.schema.data import DataSource, GraphSize
from harness.schema.model_kinds import MODEL_KINDS
from harness.schema.tasks import task_kind
from harness.schema.tasks.declaration import imported
from harness.schema.training import Training

FLOAT = 4
INDEX = 8
GIB = 2**30
BASE_BYTES = 480 * 2**20  # resident size of a worker after importing torch and PyG (measured)
# resident peak over saved tensors: backward's gradients of the activations, allocator slack;
# measured 15.1 GB resident for about 8.3 GB of saved tensors (1M-node GAT 8x8)
BACKWARD_FACTOR = 1.6
SYNTHETIC_BYTES_PER_FEATURE = 20  # float64 means + noise, then the float32 copy
SYNTHETIC_BYTES_PER_EDGE = 80  # numpy draws, both directions, coalescing
# int64 indices per drawn negative: the pair itself, PyG's oversampled candidates and its
# membership test against the edges (torch_geometric.utils.negative_sampling)
NEGATIVE_INDICES = 8


def machine_bytes() -> int:
    """Physical memory of this machine."""
    return os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES")


def hop_edges(size: GraphSize, radius: int) -> float:
    """Edges of the k-hop set: each node reaches about d + d^2 + ... + d^k others."""
    reach = sum(size.average_degree**step for step in range(1, radius + 1))
    return size.nodes * min(reach, size.nodes - 1)


def layer_shapes(options: ContenderBase, size: GraphSize) -> list[tuple[int, int, int]]:
    """(input width, output width per head, heads) of every layer."""
    hidden, layers = options.hidden, options.layers
    width = options.start_width if options.feature_start == "identity" else size.features
    heads, merges = options.heads_per_layer(), options.merge_per_layer()
    shapes = []
    for index in range(layers):
        out = size.classes if index == layers - 1 else hidden
        shapes.append((width, out, heads[index]))
        width = out * heads[index] if merges[index] == "concatenate" else out
    return shapes


def saved_bytes(options: ContenderBase, size: GraphSize, nodes: float, edges: float) -> float:
    """Tensors autograd saves for backward in one training step over `nodes` nodes and `edges`
    message edges, from the floats its kind declares (within 25% of fit's measurement on a
    3,000-node graph, tests/test_memory.py); every message edge also keeps its two indices."""
    floats = MODEL_KINDS[options.model].saved
    saved = 0.0
    for width, out, heads in layer_shapes(options, size):
        per_node = FLOAT * (floats.node_inputs * width + floats.node_outputs * heads * out)
        per_node += FLOAT * options.extra_floats_per_node()
        per_edge = FLOAT * heads * (floats.edge_outputs * out + floats.edge_scalars)
        saved += nodes * per_node + edges * (per_edge + 2 * INDEX)
    return saved


def step_bytes(options: ContenderBase, size: GraphSize, nodes: float, edges: float) -> float:
    """Peak of one training step: the saved tensors times BACKWARD_FACTOR, plus the widest
    layer's messages, which live only while that layer runs."""
    widest = max(heads * out for _, out, heads in layer_shapes(options, size))
    return BACKWARD_FACTOR * saved_bytes(options, size, nodes, edges) + edges * widest * FLOAT


def message_edges(options: ContenderBase, size: GraphSize) -> float:
    """Edges every layer runs on in a full-graph pass: k-hop set, plus self-loops."""
    kind = MODEL_KINDS[options.model]
    if not kind.message_edges:
        return 0.0
    radius = options.layer_radius()
    edges = size.edges if radius == 1 else hop_edges(size, radius)
    return edges + (size.nodes if kind.self_loops else 0)


def batch_extent(
    options: ContenderBase, size: GraphSize, training: Training
) -> tuple[float, float]:
    """Expected nodes and edges of one sampled batch, capped by the graph."""
    if not MODEL_KINDS[options.model].message_edges:
        return min(training.batch_size, size.nodes), 0.0
    degree = message_edges(options, size) / max(size.nodes, 1)
    fanout = training.fanout
    counts = [degree] * options.layers if fanout == "all" else list(reversed(fanout))
    nodes = frontier = float(min(training.batch_size, size.nodes))
    edges = 0.0
    for count in counts:
        drawn = frontier * min(count, degree)
        edges += drawn
        frontier = min(drawn, size.nodes)
        nodes = min(nodes + frontier, size.nodes)
    return nodes, min(edges, message_edges(options, size) * len(counts))


def graph_bytes(size: GraphSize, options: ContenderBase) -> float:
    """The graph the process holds: features, labels, edges (and the k-hop set)."""
    edges = size.edges + message_edges(options, size)
    return size.nodes * (size.features * FLOAT + INDEX) + edges * 2 * INDEX


def run_bytes(options: ContenderBase, size: GraphSize, training: Training) -> float:
    """Estimated peak resident memory of one run."""
    parameters = sum((w * o * h + o * h) * 4 * FLOAT for w, o, h in layer_shapes(options, size))
    if training.sampled:
        nodes, edges = batch_extent(options, size, training)
        widest = max(o * h for _, o, h in layer_shapes(options, size))
        evaluation = 2 * size.nodes * widest * FLOAT  # chunked inference keeps two layer outputs
        sampler = size.edges * 2 * INDEX  # target-sorted copy of the edges
        step = step_bytes(options, size, nodes, edges)
        return BASE_BYTES + graph_bytes(size, options) + sampler + evaluation + parameters + step
    step = step_bytes(options, size, size.nodes, message_edges(options, size))
    return BASE_BYTES + graph_bytes(size, options) + parameters + step


def scored_pair_bytes(suite: BaseModel, size: GraphSize) -> tuple[float, str]:
    """A link run's scored pairs: each epoch's training edges with `negatives_per_positive`
    fresh negatives each (the decoder's gathered embeddings and products kept for backward,
    and the sampler's candidate indices), plus the fixed validation and test pairs and one
    scoring pass over the larger of them. Measured against training's own peak in
    tests/test_memory.py."""
    link, split = suite.task_options, suite.split
    edges = size.edges / 2  # undirected pairs; a directed graph counts each edge once here
    per_edge = 1 + link.negatives_per_positive
    floats = link.saved_floats_per_pair()  # the decoder's own count, declared with its options
    training = split.train * edges * per_edge
    held = (split.validation + split.test) * edges * per_edge
    largest = max(split.validation, split.test) * edges * per_edge
    step = training * (BACKWARD_FACTOR * floats * FLOAT + NEGATIVE_INDICES * INDEX)
    scoring = held * (2 * INDEX + 2 * FLOAT) + largest * floats * FLOAT
    return step + scoring, f"link.negatives_per_positive = {link.negatives_per_positive}"


def data_bytes(data: DataSource, size: GraphSize) -> float:
    """Peak while generating a synthetic graph (numpy works in float64 and int64)."""
    if not data.generated:
        return 0.0
    features = size.nodes * size.features * SYNTHETIC_BYTES_PER_FEATURE
    return BASE_BYTES + features + size.edges * SYNTHETIC_BYTES_PER_EDGE


@dataclass(frozen=True)
class RunMemory:
    """The estimate of one contender configuration; `sampled_bytes` is what sampling would
    need (batch 1024, fan-out 10 per layer) when the run is full batch."""

    contender: str
    label: str
    batching: str
    bytes: float
    sampled_bytes: float | None = None
    point: tuple[tuple[str, Any], ...] = ()  # the ablation point: (axis, level) pairs
    task_bytes: float = 0.0  # of `bytes`, what the task adds (scored pairs), and the option
    task_option: str = ""  # that moves it most, as the suite sets it

    @property
    def own_bytes(self) -> float:
        """What this run adds to the fixed part of its process (BASE_BYTES)."""
        return self.bytes - BASE_BYTES


SUGGESTED = {"batching": "sampled", "batch_size": 1024}


def estimate_runs(
    designs: list, suite_training: Training, size: GraphSize, task: tuple[float, str] = (0.0, "")
) -> list[RunMemory]:
    """One estimate per contender configuration (design point) of a suite; `task` is what the
    suite's task adds to every run, and the option behind it."""
    estimates = []
    for design in designs:
        training = design.options.training.apply(suite_training)
        needed = run_bytes(design.options, size, training) + task[0]
        sampled = None
        if not training.sampled:
            fanout = [10] * design.options.layers
            alternative = training.model_copy(update={**SUGGESTED, "fanout": fanout})
            sampled = run_bytes(design.options, size, alternative)
        point = tuple(design.point.items())
        estimates.append(
            RunMemory(
                design.contender, design.label, training.batching, needed, sampled, point, *task
            )
        )
    return estimates


def gib(value: float) -> str:
    return f"{value / GIB:,.1f} GiB"


def size_text(value: float) -> str:
    """MiB below a gibibyte (a small run's figure would read 0.0 GiB), GiB above."""
    if value >= GIB:
        return gib(value)
    mib = value / 2**20
    return f"{mib:,.0f} MiB" if mib >= 1 else "under 1 MiB"


FIXED_PART = f"about {size_text(BASE_BYTES)} per process for Python, torch and PyG"


def check_fixed_part(limit_bytes: float) -> None:
    """Stop when one process alone, before any graph, would exceed the limit: no smaller
    graph or model helps then."""
    if BASE_BYTES > limit_bytes:
        needed = -(-BASE_BYTES * 10 // GIB) / 10  # rounded up to 0.1 GiB
        raise InputError(
            f"--memory-limit: given {limit_bytes / GIB:g} GiB, below the fixed part of every "
            f"run ({FIXED_PART}, before any graph); allowed: --memory-limit {needed:g} or more"
        )


def check_data_memory(data_peak: float, limit_bytes: float, source: str) -> None:
    """Stop when generating the graph alone would exceed the limit."""
    if data_peak > limit_bytes:
        raise InputError(
            f"{source}: data: generating this graph needs about {gib(data_peak)} "
            f"({size_text(data_peak - BASE_BYTES)} for the graph, {FIXED_PART}), above the "
            f"memory limit of {gib(limit_bytes)}; allowed: fewer nodes, a smaller "
            "average_degree or feature_dimension, or --memory-limit GIB to raise the limit"
        )


def check_run_memory(
    estimates: list[RunMemory], running: int, limit_bytes: float, source: str
) -> None:
    """Stop when `running` runs of the largest estimate at a time exceed the limit."""
    if not estimates:
        return
    largest = max(estimates, key=lambda estimate: estimate.bytes)
    needed = largest.bytes * running
    if needed <= limit_bytes:
        return
    processes = f"{running} jobs x {gib(largest.bytes)} = {gib(needed)}" if running > 1 else ""
    parts = f"{size_text(largest.own_bytes)} for the graph and model, {FIXED_PART}"
    if BASE_BYTES * running > limit_bytes:  # the processes alone: only fewer of them help
        fitting = int(limit_bytes // largest.bytes)
        advice = f"--jobs {fitting}" if fitting >= 1 else "--jobs 1"
    else:
        hint = ""
        if largest.sampled_bytes is not None:
            hint = (
                f', batching = "sampled" (batch_size = 1024, fanout = 10 per layer: about '
                f"{gib(largest.sampled_bytes)} per run)"
            )
        advice = f"{'fewer --jobs, ' if running > 1 else ''}a smaller graph or model{hint}"
        if largest.task_bytes > largest.own_bytes / 2:  # the task's part is what to cut
            advice = (
                f"a smaller {largest.task_option.replace(' = ', ' (given ')}, whose scored "
                f"pairs take about {gib(largest.task_bytes)}), {advice}"
            )
    raise InputError(
        f"{source}: contenders.{largest.contender}: a {largest.batching}-batch run of "
        f"{largest.label} needs about {gib(largest.bytes)} ({parts})"
        f"{'; ' + processes if processes else ''}, above the memory limit "
        f"of {gib(limit_bytes)} (this machine has {gib(machine_bytes())}); allowed: "
        f"{advice}, or --memory-limit GIB to raise the limit"
    )


def check_suite_memory(
    suite: BaseModel,
    source: str,
    jobs: int,
    limit_gib: float | None,
    loaded: GraphSize | None = None,
) -> list[RunMemory]:
    """Estimates of a suite's runs, stopping with an input error when they do not fit;
    empty when the graph's size is not known yet (it is known before loading only for
    synthetic data; pass `loaded` once the graph is loaded)."""
    size = suite.data.declared_size() or loaded
    if size is None:
        return []
    limit = machine_bytes() if limit_gib is None else limit_gib * GIB
    check_fixed_part(limit)
    kind = task_kind(suite.task)
    if kind.output_option is not None:  # the model's output is the task's, not one per class
        size = replace(size, classes=getattr(suite.task_options, kind.output_option))
    task = imported(kind.run_memory)(suite, size) if kind.run_memory else (0.0, "")
    estimates = estimate_runs(design_points(suite), suite.training, size, task)
    if not kind.sampled_batches:  # sampling is no way out for this task
        estimates = [replace(estimate, sampled_bytes=None) for estimate in estimates]
    if suite.data.many_graphs:  # a step holds one batch of graphs
        batch = f"{suite.task_options.batch_size}-graph"
        estimates = [replace(each, batching=batch) for each in estimates]
    check_data_memory(data_bytes(suite.data, size), limit, source)
    runs = len(estimates) * len(suite.seed_list)
    check_run_memory(estimates, max(min(jobs, runs), 1), limit, source)
    return estimates


def memory_outline(estimates: list[RunMemory], jobs: int = 1) -> list[str]:
    """The fixed part of every process, then what each run adds: configurations with the same
    figure share one line. Sampling is suggested for full-batch runs that would take more than
    half of this machine's memory with `jobs` processes."""
    if not estimates:
        return []
    groups: dict[tuple[str, str, str], list[RunMemory]] = {}
    for estimate in estimates:
        suggestion = ""
        heavy = estimate.bytes * jobs > machine_bytes() / 2
        if estimate.sampled_bytes is not None and heavy:
            suggestion = (
                f'; batching = "sampled" (batch_size = 1024, fanout = 10 per layer) would '
                f"need about {gib(estimate.sampled_bytes)} in all"
            )
        figure = (size_text(estimate.own_bytes), estimate.batching, suggestion)
        groups.setdefault(figure, []).append(estimate)
    points = {estimate.contender: 0 for estimate in estimates}
    for estimate in estimates:
        points[estimate.contender] += 1
    lines = [f"estimated peak memory: {FIXED_PART}, plus per run:"]
    for (figure, batching, suggestion), members in groups.items():
        each = " each" if len(members) > 1 else ""
        names = ", ".join(_group_names(members, points))
        lines.append(f"  {names}: {figure}{each} ({batching} batch){suggestion}")
    return lines


def _group_names(members: list[RunMemory], points: dict[str, int]) -> list[str]:
    """Contenders of one figure; a contender with only some of its points here says how many,
    or names them when there are two at most."""
    names = []
    for contender in dict.fromkeys(member.contender for member in members):
        own = [member for member in members if member.contender == contender]
        if len(own) == points[contender]:
            names.append(contender if len(own) == 1 else f"{contender} (all {len(own)} points)")
        elif len(own) == 1:
            names.append(own[0].label)
        else:
            shared = set(own[0].point).intersection(*(member.point for member in own[1:]))
            common = {axis: level for axis, level in own[0].point if (axis, level) in shared}
            where = point_label(contender, common) if common else contender
            names.append(f"{where} ({len(own)} of {points[contender]} points)")
    return names
