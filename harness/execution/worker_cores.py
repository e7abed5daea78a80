"""Torch threads on a remote Dask cluster must fit each worker host's cores, as `--jobs x
--threads` must fit this machine's: the workers are asked their usable cores, and those on one
host (as the scheduler knows them) share that host's."""

from __future__ import annotations

from collections import defaultdict

from harness.errors import InputError
from harness.execution.cluster import Cluster
from harness.execution.pool import available_cores


def check_threads_on_workers(cluster: Cluster, threads: int) -> None:
    """Refuse `threads` torch threads per run where a host's worker threads (runs at once)
    x threads exceed its usable cores (the fewest any of its workers may use)."""
    if threads == 1:  # one thread per run: the cluster's own worker count decides
        return
    client = cluster.client
    cores = client.run(available_cores)  # worker address -> its usable cores
    slots: dict[str, int] = defaultdict(int)
    usable: dict[str, int] = {}
    workers = client.scheduler_info(n_workers=-1)["workers"]
    for address, count in cores.items():
        if (worker := workers.get(address)) is None:  # it left since it answered
            continue
        host = worker["host"]
        slots[host] += worker["nthreads"]
        usable[host] = min(usable.get(host, count), count)
    for host in sorted(slots):
        if slots[host] * threads > usable[host]:
            raise InputError(
                f"--threads: {threads} threads x {slots[host]} worker threads on host {host} "
                f"need {slots[host] * threads} cores, it has {usable[host]}; allowed: --threads "
                f"<= {max(1, usable[host] // slots[host])} on this cluster"
            )
