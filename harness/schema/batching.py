"""Cross-checks of the training section against each contender: fan-out entries match its
layers, `kernel = "sparse"` is asked only of kinds that have a sparse kernel, and edge
attributes only of tasks and data that have them."""

from __future__ import annotations

from typing import TYPE_CHECKING

from harness.errors import InputError
from harness.schema.ablation import configured_points, point_label
from harness.schema.model_kinds import MODEL_KINDS
from harness.schema.tasks import task_kind
from harness.schema.tuning import spaces

if TYPE_CHECKING:
    from harness.schema.suite import Suite


def _fanout_source(suite: Suite, contender: str) -> str:
    """Where a contender's fan-out (or its absence) comes from, as a key path."""
    own = suite.contenders[contender].training
    if own.fanout is not None or own.batching is not None:
        return f"contenders.{contender}.training.fanout"
    return "training.fanout"


def check_options_apply(suite: Suite, source: str) -> None:
    """`fanout` applies only to sampled batches and `compile = true` only to full ones: each is
    refused where no run would use it, rather than silently ignored."""
    inherit_fanout = inherit_compile = False  # whether any run uses the suite table's value
    for contender, _, options in configured_points(suite.contenders, suite.ablation):
        own = options.training
        training = own.apply(suite.training)
        where = f"{source}: contenders.{contender}.training"
        if own.fanout is not None and not training.sampled:
            raise InputError(unused_fanout(where, own.fanout))
        if own.compile is True and training.sampled:
            raise InputError(unused_compile(where))
        inherit_fanout |= own.fanout is None and training.sampled
        inherit_compile |= own.compile is None and not training.sampled
    if suite.training.fanout is not None and not inherit_fanout:
        raise InputError(unused_fanout(f"{source}: training", suite.training.fanout))
    if suite.training.compile is True and not inherit_compile:
        raise InputError(unused_compile(f"{source}: training"))


def unused_fanout(where: str, fanout: object) -> str:
    return (
        f"{where}.fanout: given {fanout!r} where every run trains on full batches, which draw no "
        'neighbours; allowed: leave fanout out, or batching = "sampled"'
    )


def unused_compile(where: str) -> str:
    return (
        f"{where}.compile: given true where every run trains on sampled batches, which are never "
        'compiled (every batch has another shape); allowed: false or "auto", or batching = "full"'
    )


def check_batching(suite: Suite, source: str) -> None:
    """Sampled contenders need a fan-out with one entry per layer (or "all")."""
    tuned = {} if suite.tuning is None else spaces(suite.tuning, suite.contenders)
    for contender, point, options in configured_points(suite.contenders, suite.ablation):
        training = options.training.apply(suite.training)
        if not training.sampled:
            continue
        if not task_kind(suite.task).sampled_batches:
            own = suite.contenders[contender].training.batching is not None
            key = f"contenders.{contender}.training" if own else "training"
            raise InputError(
                f'{source}: {key}.batching: given "sampled"; sampled batches are not extended '
                f'to {task_kind(suite.task).title}; allowed: "full"'
            )
        where = f"{source}: {_fanout_source(suite, contender)}"
        layers = options.layers
        if training.fanout is None:
            raise InputError(
                f'{where}: required when batching = "sampled"; allowed: a list of neighbour '
                f'counts with one entry per layer ({layers}), or "all"'
            )
        if training.fanout == "all":
            continue
        if len(training.fanout) != layers:
            raise InputError(
                f"{where}: given {training.fanout} ({len(training.fanout)} entries) for "
                f"{point_label(contender, point)} with {layers} layers; allowed: one count per "
                'layer, or "all"'
            )
        if "layers" in tuned.get(contender, {}):
            raise InputError(
                f"{where}: given {training.fanout} while tuning.space.{contender} varies "
                'layers; allowed: fanout = "all", or a fixed layers count'
            )


def check_kernel(suite: Suite, source: str) -> None:
    """`kernel = "sparse"` only for kinds registered with a sparse kernel."""
    sparse = sorted(name for name, kind in MODEL_KINDS.items() if kind.sparse_kernel)
    for contender, options in suite.contenders.items():
        if options.training.apply(suite.training).kernel != "sparse":
            continue
        own = options.training.kernel is not None
        key = f"contenders.{contender}.training" if own else "training"
        if MODEL_KINDS[options.model].sparse_kernel and options.edge_attribute_use() != "none":
            raise InputError(
                f'{source}: {key}.kernel: given "sparse" for {contender}, which reads edge '
                'attributes; allowed: "auto" or "scatter" (the sparse kernel has no edge terms)'
            )
        if MODEL_KINDS[options.model].sparse_kernel:
            continue
        raise InputError(
            f'{source}: {key}.kernel: given "sparse" for {contender} (model {options.model}); '
            f'allowed: "sparse" only for {", ".join(sparse)}; "auto" or "scatter" for any model'
        )


def check_edge_attributes(suite: Suite, source: str) -> None:
    """A configuration that reads edge attributes needs a task that passes them on, and (for
    `edge_features = true`) data that declares them (sources that cannot tell are checked when
    loaded, by the run)."""
    task = task_kind(suite.task)
    declared = suite.data.declares_edge_attributes()
    for contender, point, options in configured_points(suite.contenders, suite.ablation):
        use = options.edge_attribute_use()
        if use == "none":
            continue
        label = point_label(contender, point)
        if not task.edge_attributes:
            raise InputError(
                f"{source}: contenders.{contender}: {label} reads edge attributes, which "
                f"{task.title} does not pass to models yet; allowed: edge_features = false "
                "and a kind without edge attributes"
            )
        if use == "required" and declared is False:
            raise InputError(
                f"{source}: contenders.{contender}: {label} has edge_features = true, but "
                f"data source {suite.data.source!r} gives no edge attributes; allowed: "
                "edge_feature_columns or edge_feature_prefix (tables), edge_types >= 2 "
                "(synthetic), or edge_features = false"
            )


# Full attention over all nodes takes time growing with nodes squared: one layer's training
# step over 20,000 nodes (hidden 32, 4 heads) took 19 s on a 2-core machine (torch's fused
# attention keeps memory linear); above this many nodes a full-batch run is refused
FULL_ATTENTION_NODES = 30_000


def check_global_attention(suite: Suite, source: str) -> None:
    """Full attention over every node of a large graph in one batch is refused, naming the
    linear-attention alternative; sampled batches bound it by the batch."""
    size = suite.data.declared_size()
    if size is None or size.nodes <= FULL_ATTENTION_NODES:
        return
    for contender, point, options in configured_points(suite.contenders, suite.ablation):
        if not options.attended_pairs(size.nodes) or options.training.apply(suite.training).sampled:
            continue
        raise InputError(
            f"{source}: contenders.{contender}: {point_label(contender, point)} attends over "
            f"all {size.nodes} nodes in one batch ({options.attended_pairs(size.nodes):.1e} "
            f"scored pairs per layer, time growing with nodes squared); allowed: "
            f'attention_kind = "performer" (linear attention, Choromanski et al. 2021), '
            f'batching = "sampled", or at most {FULL_ATTENTION_NODES} nodes'
        )
