"""Wall time of `heedful run` on the demo suite with --jobs 1 and --jobs 2 (one torch thread
per process, the default), each into a fresh temporary store, then once more into the filled
store (every run reused). For comparison, one process with as many torch threads as cores.

Times are whole commands as a user sees them: start-up, data, training, storing, the table.
Run by hand (not a test):  .venv/bin/python benchmarks/demo_parallel.py [--suite FILE]
Goals: speed-up of --jobs 2 over --jobs 1 >= 1.6; the rerun finishes in seconds.
"""

from __future__ import annotations

import argparse
import os
import platform
import sqlite3
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(Path(__file__).resolve().parent))

from harness.baseline import cpu_model  # noqa: E402


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
    args = parser.parse_args()

    import torch  # imported here only to report its version

    usable = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    print(
        f"machine: {cpu_model()}, {os.cpu_count()} cores ({usable} usable), "
        f"torch {torch.__version__}, Python {platform.python_version()}"
    )
    print(f"suite: {args.suite}")
    rows = []
    with tempfile.TemporaryDirectory(prefix="heedful-bench-") as folder:
        one, runs_one = timed_run(args.suite, Path(folder) / "one.db", 1)
        rows.append(("--jobs 1, fresh store", one, runs_one))
        two, runs_two = timed_run(args.suite, Path(folder) / "two.db", 2)
        rows.append(("--jobs 2, fresh store", two, runs_two))
        again, runs_again = timed_run(args.suite, Path(folder) / "two.db", 1)
        rows.append(("rerun, all stored", again, runs_again))
        threaded, runs_threaded = timed_run(args.suite, Path(folder) / "threads.db", 1, usable)
        rows.append((f"--jobs 1 --threads {usable}", threaded, runs_threaded))
    print(f"{'command':<26}{'wall seconds':>14}{'runs stored':>13}")
    for label, seconds, stored in rows:
        print(f"{label:<26}{seconds:>14.1f}{stored:>13}")
    print(f"speed-up of --jobs 2 over --jobs 1: {one / two:.2f} (goal >= 1.6)")
    print(f"speed-up of --jobs 2 over --jobs 1 --threads {usable}: {threaded / two:.2f}")


if __name__ == "__main__":
    main()
