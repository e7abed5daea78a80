"""Data sent to cluster workers (harness/execution/shipping.py): the submitter loads each data
section once and sends it; workers read no data file and cache in a folder of their own.

A pinned section keeps the digests of its files, whatever happens to them later. On real `dask
scheduler` and `dask worker` processes (tests/real_dask.py), each worker started in a mount
namespace of its own (`unshare`), so that at the path of the suite's folder one worker sees
nothing and the other sees different tables, and its working folder is read-only even to root:
the suite stores every run under the keys and with the figures of `--jobs 1` on the
submitter's tables.
"""

from __future__ import annotations

import pickle
import shlex
import subprocess
import tempfile
from collections.abc import Iterator
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import tests.real_dask
from harness.cli import main
from harness.data import keep_loaded, load_graph
from harness.planning import expand, load_suite
from harness.storage import store

FIGURES = ["val_metric", "test_metric", "test_accuracy", "epochs", "best_epoch", "curve"]

SUITE = """\
name = "harbour_cranes"
description = "Fictional harbour cranes: can their hand-over links tell which cargo each moves?"
seeds = 2
metric = "accuracy"

[data]
source = "tables"
nodes = "nodes.csv"
edges = "edges.csv"

[training]
epochs = 6
patience = 6

[contenders.two_hops]
model = "gat"
heads = 2
hidden = 4
hop_radius = 2

[contenders.features_only]
model = "mlp"
hidden = 4
"""


def write_tables(folder: Path, seed: int) -> None:
    """48 cranes in three cargo classes, each linked to four others, mostly of its own class;
    the seed draws labels, features and links."""
    generator = np.random.default_rng(seed)
    labels = generator.integers(0, 3, size=48)
    features = generator.normal(size=(48, 4)) + labels[:, None]
    nodes = pd.DataFrame(features, columns=[f"load_{n}" for n in range(4)])
    nodes.insert(0, "label", [f"cargo_{label}" for label in labels])
    nodes.insert(0, "id", [f"crane_{n}" for n in range(48)])
    links = [(n, int(generator.integers(0, 48))) for n in range(48) for _ in range(4)]
    edges = pd.DataFrame(
        [(f"crane_{a}", f"crane_{b}") for a, b in links if a != b], columns=["source", "target"]
    )
    folder.mkdir(parents=True, exist_ok=True)
    nodes.to_csv(folder / "nodes.csv", index=False)
    edges.to_csv(folder / "edges.csv", index=False)


def test_a_pinned_section_names_the_files_as_they_were_when_pinned(tmp_path):
    write_tables(tmp_path, seed=1)
    (tmp_path / "suite.toml").write_text(SUITE, encoding="utf-8")
    section = load_suite(tmp_path / "suite.toml").data
    before, edges = section.model_dump_json(), section.declared_edges()
    pinned = pickle.loads(pickle.dumps(section.pinned()))  # as a worker receives it
    write_tables(tmp_path, seed=2)  # other tables at the same paths
    assert section.model_dump_json() != before  # read afresh: another digest
    assert pinned.model_dump_json() == before and pinned.declared_edges() == edges
    (tmp_path / "nodes.csv").unlink()  # and no file at all
    assert pinned.model_dump_json() == before


def test_a_kept_graph_is_what_load_graph_gives_without_reading_a_file(tmp_path):
    write_tables(tmp_path, seed=1)
    (tmp_path / "suite.toml").write_text(SUITE, encoding="utf-8")
    pinned = load_suite(tmp_path / "suite.toml").data.pinned()
    graph = load_graph(pinned)
    (tmp_path / "nodes.csv").unlink()
    (tmp_path / "edges.csv").unlink()
    sent = pickle.loads(pickle.dumps((pinned, graph)))  # another object, as on a worker
    keep_loaded(*sent)
    assert load_graph(sent[0]) is sent[1]


def namespace_refusal() -> str | None:
    """Why this machine cannot give a process a mount namespace of its own, if it cannot."""
    with tempfile.TemporaryDirectory() as folder:
        quoted = shlex.quote(folder)
        probe = ["unshare", "-rm", "sh", "-c", f"mount --bind {quoted} {quoted} && echo ok"]
        try:
            done = subprocess.run(probe, capture_output=True, text=True, timeout=30)
        except FileNotFoundError:
            return "no unshare command"
    return None if done.stdout.strip() == "ok" else " ".join(done.stderr.split()) or "refused"


def in_namespace(mounts: dict[str, str]):  # noqa: ANN201 - a replacement for real_dask._spawn
    """real_dask._spawn, except that worker NAME first runs `mounts[NAME]` (shell commands) in
    a user and mount namespace of its own, without any HEEDFUL_CACHE of this process."""
    spawn = tests.real_dask._spawn

    def spawn_in_namespace(command, cwd, log, environment):  # noqa: ANN001, ANN202
        if "distributed.cli.dask_worker" in command:
            name = command[command.index("--name") + 1]
            # cd again: the working folder may have been mounted over
            script = f'{mounts[name]} && cd "$PWD" && unset HEEDFUL_CACHE && exec "$@"'
            command = ["unshare", "-rm", "sh", "-c", script, "sh", *command]
        return spawn(command, cwd, log, environment)

    return spawn_in_namespace


VIEWS = {"nothing": None, "other tables": 2}  # what a worker sees at the suite's folder


@pytest.fixture(scope="module")
def suite(tmp_path_factory) -> Path:
    """The suite file, beside its tables."""
    folder = tmp_path_factory.mktemp("harbour") / "suite"
    write_tables(folder, seed=1)
    (folder / "suite.toml").write_text(SUITE, encoding="utf-8")
    return folder / "suite.toml"


@pytest.fixture(scope="module")
def one_job(suite, tmp_path_factory) -> pd.DataFrame:
    """The suite's runs with `--jobs 1` on this machine's tables, by key."""
    store_file = tmp_path_factory.mktemp("one-job") / "one.db"
    assert main(["run", str(suite), "--quiet", "--jobs", "1", "--store", str(store_file)]) == 0
    return by_key(store_file)


@pytest.fixture(scope="module", params=sorted(VIEWS))
def blind_cluster(request, suite, tmp_path_factory) -> Iterator[tests.real_dask.RealCluster]:
    """One worker that sees, at the path of the suite's folder, nothing or other tables, and
    may not write its working folder: it reads and writes only what Dask gives it."""
    if (refusal := namespace_refusal()) is not None:
        pytest.skip(f"needs a mount namespace to show a worker another folder: {refusal}")
    base = tmp_path_factory.mktemp("blind")
    shown, folder = base / "shown", base / "worker-0"
    shown.mkdir()
    if VIEWS[request.param] is not None:
        write_tables(shown, seed=VIEWS[request.param])  # same paths, other labels and links
    suite_folder, folder_text = shlex.quote(str(suite.parent)), shlex.quote(str(folder))
    mount = f"mount --bind {shlex.quote(str(shown))} {suite_folder}"
    read_only = (
        f"mount --bind {folder_text} {folder_text} && mount -o remount,ro,bind {folder_text}"
    )
    with pytest.MonkeyPatch.context() as patch:
        patch.setattr(
            tests.real_dask, "_spawn", in_namespace({"worker-0": f"{mount} && {read_only}"})
        )
        with tests.real_dask.start_real_cluster(1, base / "dask", [folder]) as cluster:
            yield cluster


def by_key(store_file: Path) -> pd.DataFrame:
    return store.load_runs(store_file).set_index("key").sort_index()


def worker_view(suite: Path):  # noqa: ANN201 - a Callable[[], tuple[list[str], bool]]
    """A function telling, on the worker, the files it sees in the suite's folder and whether
    it may write its working folder (nested: it travels to the worker by value)."""

    def view() -> tuple[list[str], bool]:
        seen = sorted(p.name for p in suite.parent.iterdir())
        try:
            Path("probe").write_text("")
        except OSError:
            return seen, False
        return seen, True

    return view


@pytest.mark.slow
def test_a_worker_that_cannot_read_the_suite_folder_stores_what_one_job_stores(
    blind_cluster, suite, one_job, tmp_path
):
    """The worker finds no file, or other tables, at the tables' paths, and may not write its
    working folder; it trains on the submitter's tables: each run stored once, under its
    planned key, with the figures `--jobs 1` gives on the submitter."""
    from distributed import Client

    with Client(blind_cluster.address, timeout="10s") as client:
        (seen, writable), *_ = client.run(worker_view(suite)).values()
    assert not writable and "suite.toml" not in seen  # the namespace is as the test means
    store_file = tmp_path / "cluster.db"
    arguments = ["run", str(suite), "--quiet", "--cluster", blind_cluster.address, "--store"]
    assert main([*arguments, str(store_file)]) == 0, blind_cluster.output()
    on_cluster = by_key(store_file)
    assert list(on_cluster.index) == sorted(spec.key for spec in expand(load_suite(suite)))
    pd.testing.assert_frame_equal(on_cluster[FIGURES], one_job[FIGURES])


@pytest.mark.slow
def test_a_tuned_suite_on_a_worker_that_cannot_read_the_suite_folder_tunes_on_its_data(
    blind_cluster, suite, tmp_path, postgres_store
):
    """Tuning copies get the submitter's tables too. One worker tunes in the order one process
    does, with the same seeded sampler: the same repeats, keys and figures as `--jobs 1`."""
    tuned = suite.parent / "tuned.toml"
    tuned.write_text(SUITE + "\n[tuning]\ntrials = 2\nheartbeat_seconds = 1\n", encoding="utf-8")
    arguments = ["run", str(tuned), "--quiet", "--store"]
    assert main([*arguments, str(tmp_path / "one.db"), "--jobs", "1"]) == 0
    on_cluster = [*arguments, postgres_store, "--cluster", blind_cluster.address]
    assert main(on_cluster) == 0, blind_cluster.output()
    one_job = by_key(tmp_path / "one.db")
    repeats = store.load_runs(postgres_store).set_index("key").sort_index()
    assert len(repeats) == 4 and list(repeats.index) == list(one_job.index)
    pd.testing.assert_frame_equal(repeats[FIGURES], one_job[FIGURES])
