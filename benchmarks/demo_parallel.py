"""Wall time of `heedful run` on the demo suite with --jobs 1 and --jobs 2 (one torch thread
per process, the default), each into a fresh temporary store, then once more into a filled
store (every run reused). For comparison, one process with as many torch threads as cores.
The configurations alternate over several rounds, so a slow spell of a shared machine
touches all of them; medians and every round are printed.

Times are whole commands as a user sees them: start-up, data, training, storing, the table.
Run by hand (not a test):  .venv/bin/python benchmarks/demo_parallel.py [--suite FILE]
Goals: speed-up of --jobs 2 over --jobs 1 >= 1.6; the rerun finishes in seconds.
"""

from __future__ import annotations

import argparse
import compileall
import os
import platform
import sqlite3
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(Path(__file__).resolve().parent))

from harness.gate.baseline import cpu_model  # noqa: E402


def timed_run(suite: str, store: Path, jobs: int, threads: int = 1) -> tuple[float, int]:
    """Seconds of one `heedful run` and the runs stored afterwards; stops on failure."""
    command = [sys.executable, "-m", "harness.cli", "run", suite, "--jobs", str(jobs)]
    command += ["--threads", str(threads), "--quiet", "--store", str(store)]
    started = time.perf_counter()
    finished = subprocess.run(command, cwd=ROOT, capture_output=True, text=True)
    seconds = time.perf_counter() - started
    if finished.returncode != 0:
        sys.exit(f"heedful run --jobs {jobs} failed ({finished.returncode}): {finished.stderr}")
    with sqlite3.connect(store) as connection:
        stored = connection.execute("SELECT count(*) FROM runs").fetchone()[0]
    return seconds, stored


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--suite", default=str(ROOT / "suites" / "demo.toml"))
    parser.add_argument("--repeats", type=int, default=3, help="alternating rounds")
    args = parser.parse_args()

    import torch  # imported here only to report its version

    usable = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    print(
        f"machine: {cpu_model()}, {os.cpu_count()} cores ({usable} usable), "
        f"torch {torch.__version__}, Python {platform.python_version()}"
    )
    print(f"suite: {args.suite}; {args.repeats} rounds, each command into a fresh store")
    # as after a first run: bytecode cached (PYTHONDONTWRITEBYTECODE would recompile each time)
    compileall.compile_dir(str(ROOT / "harness"), quiet=1)
    configurations = [
        ("--jobs 1", 1, 1),
        ("--jobs 2", 2, 1),
        (f"--jobs 1 --threads {usable}", 1, usable),
    ]
    seconds: dict[str, list[float]] = {label: [] for label, _, _ in configurations}
    stored: dict[str, int] = {}
    rerun: list[float] = []
    with tempfile.TemporaryDirectory(prefix="heedful-bench-") as folder:
        for round_ in range(args.repeats):
            for label, jobs, threads in configurations:
                store = Path(folder) / f"{round_}-{jobs}-{threads}.db"
                took, stored[label] = timed_run(args.suite, store, jobs, threads)
                seconds[label].append(took)
            rerun.append(timed_run(args.suite, store, 1)[0])
    print(f"{'command':<26}{'median s':>10}  {'each round (s)'}")
    for label, values in seconds.items():
        each = ", ".join(f"{value:.1f}" for value in values)
        print(f"{label:<26}{statistics.median(values):>10.1f}  {each}  ({stored[label]} runs)")
    each = ", ".join(f"{value:.1f}" for value in rerun)
    print(f"{'rerun, all stored':<26}{statistics.median(rerun):>10.1f}  {each}")
    one, two = seconds["--jobs 1"], seconds["--jobs 2"]
    ratios = [a / b for a, b in zip(one, two, strict=True)]
    print(
        f"speed-up of --jobs 2 over --jobs 1: median {statistics.median(ratios):.2f} "
        f"(rounds: {', '.join(f'{r:.2f}' for r in ratios)}; goal >= 1.6)"
    )
    threaded = seconds[configurations[2][0]]
    print(
        f"speed-up of --jobs 2 over --jobs 1 --threads {usable}: median "
        f"{statistics.median(a / b for a, b in zip(threaded, two, strict=True)):.2f}"
    )


if __name__ == "__main__":
    main()
