"""Compiled training: same numbers as eager within float tolerance, keys by the mode used, and a
failing compiler falls back to eager with the warning stored."""

from __future__ import annotations

from dataclasses import replace

import pytest
import torch

from harness.data import load_graph
from harness.data.splits import make_split
from harness.execution.runs import pending, record_of
from harness.models import build_model
from harness.planning import expand, load_suite
from harness.planning.run_choices import resolve_compile
from harness.schema.data import SyntheticData
from harness.schema.training import Training
from harness.storage import store
from harness.training import compiled
from harness.training.node_loss import fit_nodes
from harness.training.runs import perform

GRAPH = SyntheticData(source="synthetic", nodes=80, classes=3, average_degree=5, graph_seed=2)


@pytest.fixture(scope="module")
def tiny(tmp_path_factory, tiny_suite_text):
    path = tmp_path_factory.mktemp("compiled") / "tiny.toml"
    path.write_text(tiny_suite_text)
    specs = {(s.contender, s.seed): s for s in expand(load_suite(path))}
    return specs["attention", 0]


def trained(spec, compile_model: bool):
    """A short run; without dropout, since compiled code draws its masks from its own generator
    and the comparison is of the computation, not of two random streams."""
    spec = replace(spec, options=spec.options.model_copy(update={"dropout": 0.0}))
    training = spec.training.model_copy(update={"compile": compile_model, "epochs": 12})
    data = load_graph(spec.data)
    split = make_split(data, spec.split, spec.seed)
    torch.manual_seed(spec.seed)
    model = build_model(spec.options, data.num_features, int(data.y.max()) + 1)
    return model, fit_nodes(model, data, split, training, spec.metric), data


@pytest.mark.slow  # compiles, with the C++ compiler in processes of its own
def test_compiled_training_matches_eager(tiny):
    """Same logits within 1e-4 for the same weights; validation metric within 1 point."""
    eager_model, eager, data = trained(tiny, compile_model=False)
    compiled_model, result, _ = trained(tiny, compile_model=True)
    assert result.compiled and result.extras["compile"]["mode"] == "compiled"
    assert "warning" not in result.extras["compile"]
    assert result.extras["compile"]["seconds"] > 0
    assert abs(result.val_metric - eager.val_metric) * 100 <= 1.0
    compiled_model.eval()
    with torch.no_grad():
        by_compiled = torch.compile(compiled_model, dynamic=False)(data.x, data.edge_index)
        by_eager = compiled_model(data.x, data.edge_index)
    assert torch.allclose(by_compiled, by_eager, atol=1e-4, rtol=0)


def failing_backend(graph, example_inputs):
    raise RuntimeError("no C++ compiler on this platform")


def test_failing_compiler_falls_back_to_eager_and_is_stored_as_eager(tiny, tmp_path, monkeypatch):
    monkeypatch.setattr(compiled, "BACKEND", failing_backend)
    wanted = replace(tiny, training=tiny.training.model_copy(update={"compile": True}))
    eager = replace(tiny, training=tiny.training.model_copy(update={"compile": False}))
    result = perform(wanted)
    warning = result.extras["compile"]["warning"]
    assert result.extras["compile"]["mode"] == "eager" and not result.compiled
    assert "no C++ compiler on this platform" in warning and "\n" not in warning
    # the failure comes before any weight changes: the run is exactly an eager run
    assert result.curve == perform(eager).curve
    record = record_of(wanted, result)
    assert record["key"] == eager.key != wanted.key
    store_path = tmp_path / "runs.db"
    store.save_run(store_path, record)
    assert pending([wanted, eager], store_path) == []  # a failed compile is not retried


def test_compile_enters_the_key_only_when_used(tiny):
    keys = {
        mode: replace(tiny, training=tiny.training.model_copy(update={"compile": mode})).key
        for mode in ("auto", False, True)
    }
    assert keys["auto"] == keys[False] == tiny.key != keys[True]


def test_auto_compiles_attention_on_large_graphs_only():
    large = GRAPH.model_copy(update={"nodes": 100_000, "average_degree": 20})
    auto = Training()
    assert resolve_compile(auto, "gat", GRAPH).compile is False
    assert resolve_compile(auto, "gat", large).compile is True
    assert resolve_compile(auto, "mlp", large).compile is False
    assert resolve_compile(auto.model_copy(update={"epochs": 2}), "gat", large).compile is False
    assert resolve_compile(Training(compile=True), "gat", GRAPH).compile is True


def test_per_run_extras_record_threads_and_resident_memory(tiny):
    extras = perform(tiny).extras
    assert extras["threads"] == torch.get_num_threads()
    # a Python process with torch loaded holds well over 50 MiB; far below the machine's size
    assert 50 < extras["peak_resident_mb"] < 24 * 1024
