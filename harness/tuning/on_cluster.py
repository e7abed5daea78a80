"""A tuned suite on a Dask cluster: each worker of the cluster runs one tuning worker against
the shared Optuna storage (harness/tuning/workers.py); this process then stores every repeat,
so the result store keeps one writer."""

from __future__ import annotations

import uuid

import optuna
import torch

from harness.errors import InputError
from harness.execution.cluster import Cluster
from harness.schema.suite import Suite
from harness.storage import store
from harness.tuning.repeats import sync_repeats
from harness.tuning.storage import open_storage, parse_url, shown
from harness.tuning.study import repeats_study_name, tuning_plan
from harness.tuning.workers import WorkOutcome, work


def check_shared(address: str, storage_url: str) -> None:
    """Workers on other machines cannot reach an SQLite file of this one."""
    parsed = parse_url(storage_url)
    if parsed.get_backend_name() == "sqlite" and not address.startswith("local:"):
        raise InputError(
            f"--cluster {address}: tuning storage {shown(parsed)} is a file on this machine; "
            "allowed: --storage or --store with a PostgreSQL URL every worker reaches"
        )


def _tune_on_worker(suite: Suite, storage_url: str, threads: int) -> WorkOutcome:
    torch.set_num_threads(threads)
    return work(suite, None, storage_url)


def work_on_cluster(
    suite: Suite, store_path: store.Store, storage_url: str, cluster: Cluster, threads: int = 1
) -> WorkOutcome:
    """One tuning worker per cluster worker; then every repeat is copied into the store."""
    client = cluster.client
    count = max(1, len(client.scheduler_info()["workers"]))
    batch = uuid.uuid4().hex[:8]
    futures = [
        client.submit(_tune_on_worker, suite, storage_url, threads, key=f"heedful-tune-{batch}-{n}")
        for n in range(count)
    ]
    try:
        client.gather(futures)
    except BaseException:
        client.cancel(futures)
        raise
    tuning = suite.tuning
    storage = open_storage(storage_url, tuning.heartbeat_seconds, tuning.grace_seconds)
    name = repeats_study_name(suite, tuning_plan(suite))
    repeats = optuna.load_study(study_name=name, storage=storage)
    return WorkOutcome(sync_repeats(repeats, store_path))
