"""Wall time of `heedful run` on a Dask cluster against local processes (run by hand).

A suite long enough that start-up matters little (default: the ablation suite on 24 seeds,
about 5 minutes with --jobs 1 on an idle 2-core machine) runs into a fresh temporary store
with `--jobs 2`, `--cluster local:2`, `--cluster local:1` and on a real scheduler with two
`dask worker` processes of one thread each (started once by this script, as a user starts
them, with Dask's stack profiler off as docs/clusters.md advises; warm after the first round),
alternating over rounds so a slow spell of a shared machine touches all of them. Printed:
every round, medians, the load average before each command, and the ratios.

    .venv/bin/python benchmarks/cluster.py [--suite FILE] [--seeds 24] [--rounds 3]

Goals: local:2 and the real scheduler each at most 1.10x the wall time of `--jobs 2`;
local:1 / local:2 at least 1.7.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import os
import platform
import re
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
CONFIGURATIONS = {
    "--jobs 2": ["--jobs", "2"],
    "--cluster local:2": ["--cluster", "local:2"],
    "--cluster local:1": ["--cluster", "local:1"],
    "scheduler + 2 workers": ["--cluster", "ADDRESS"],  # the address once it is started
}
WORKER_SETTINGS = {"DASK_DISTRIBUTED__WORKER__PROFILE__ENABLED": "False"}


@contextlib.contextmanager
def real_cluster(folder: Path, workers: int = 2):  # noqa: ANN201 - yields the address
    """A `dask scheduler` and `workers` `dask worker` processes (one thread each) on this
    machine; stopped when the block ends."""
    environment = {**os.environ, **WORKER_SETTINGS}
    scheduler_file = folder / "scheduler.json"
    command = [sys.executable, "-m", "distributed.cli.dask_scheduler", "--host", "127.0.0.1"]
    command += ["--port", "0", "--no-dashboard", "--scheduler-file", str(scheduler_file)]
    logs = (folder / "cluster.log").open("w")
    processes = [subprocess.Popen(command, stdout=logs, stderr=logs, env=environment)]
    try:
        while not (scheduler_file.exists() and scheduler_file.read_text()):
            time.sleep(0.1)
        address = json.loads(scheduler_file.read_text())["address"]
        for _ in range(workers):
            command = [sys.executable, "-m", "distributed.cli.dask_worker", address]
            command += ["--nthreads", "1", "--no-dashboard", "--local-directory", str(folder)]
            processes.append(subprocess.Popen(command, stdout=logs, stderr=logs, env=environment))
        from distributed import Client

        with Client(address, timeout="60s") as client:
            client.wait_for_workers(workers, timeout=120)
        yield address
    finally:
        for process in reversed(processes):
            process.terminate()
            process.wait(timeout=60)
        logs.close()


def longer_suite(source: Path, seeds: int, folder: Path) -> Path:
    """The suite with `seeds = N`, written beside the temporary stores."""
    text = re.sub(r"^seeds = .*$", f"seeds = {seeds}", source.read_text(), flags=re.MULTILINE)
    path = folder / source.name
    path.write_text(text, encoding="utf-8")
    return path


def timed(suite: Path, store: Path, options: list[str]) -> float:
    command = [sys.executable, "-m", "harness.cli", "run", str(suite), *options]
    command += ["--quiet", "--store", str(store)]
    started = time.perf_counter()
    finished = subprocess.run(command, cwd=ROOT, capture_output=True, text=True)
    if finished.returncode != 0:
        sys.exit(f"{' '.join(options)} failed ({finished.returncode}): {finished.stderr}")
    return time.perf_counter() - started


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--suite", type=Path, default=ROOT / "suites" / "ablation.toml")
    parser.add_argument("--seeds", type=int, default=24)
    parser.add_argument("--rounds", type=int, default=3)
    args = parser.parse_args()
    print(
        f"{platform.processor() or platform.machine()}, {os.cpu_count()} cores, ",
        end="",
    )
    print(f"Python {platform.python_version()}, {time.strftime('%Y-%m-%d')}")
    seconds: dict[str, list[float]] = {name: [] for name in CONFIGURATIONS}
    with tempfile.TemporaryDirectory() as folder, real_cluster(Path(folder)) as address:
        suite = longer_suite(args.suite, args.seeds, Path(folder))
        for round_number in range(args.rounds):
            for index, (name, options) in enumerate(CONFIGURATIONS.items()):
                load = os.getloadavg()[0]
                store = Path(folder) / f"{round_number}-{index}.db"
                options = [address if option == "ADDRESS" else option for option in options]
                seconds[name].append(timed(suite, store, options))
                print(
                    f"round {round_number + 1}: {name}: {seconds[name][-1]:.1f} s (load {load:.1f})"
                )
    median = {name: statistics.median(values) for name, values in seconds.items()}
    for name, value in median.items():
        low, high = min(seconds[name]), max(seconds[name])
        print(f"median {name}: {value:.1f} s (rounds {low:.1f} to {high:.1f})")
    on_cluster, on_one = median["--cluster local:2"], median["--cluster local:1"]
    print(f"local:2 / jobs 2: {on_cluster / median['--jobs 2']:.2f} (goal <= 1.10)")
    real = median["scheduler + 2 workers"] / median["--jobs 2"]
    print(f"scheduler + 2 workers / jobs 2: {real:.2f} (goal <= 1.10)")
    print(f"local:1 / local:2: {on_one / on_cluster:.2f} (goal >= 1.7)")


if __name__ == "__main__":
    main()
