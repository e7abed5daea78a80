"""Benchmark (run by hand): what pruning saves, and what a second worker buys.

1. Epochs trained while tuning the demo scenario (suites/tuned.toml) with the median pruner
   against no pruning, same sampler seed and budget, and the best validation score each finds.
   Goal: at least 40% fewer epochs at a best validation score within 0.5 points.
2. Wall time of the whole tuned suite (tuning and seeded repeats) with one worker process and
   with two on one SQLite storage; the speed-up is one's time over two's.

    .venv/bin/python benchmarks/pruning.py [--trials 20] [--contenders attention,convolution]
"""

from __future__ import annotations

import argparse
import copy
import os
import platform
import sys
import tempfile
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

import optuna  # noqa: E402
import torch  # noqa: E402

from harness.execution.executors import LocalExecutor  # noqa: E402
from harness.planning import load_suite, parse_suite  # noqa: E402
from harness.tuning.results import epochs_trained  # noqa: E402
from harness.tuning.storage import open_storage  # noqa: E402
from harness.tuning.workers import tune, tuning_studies, usage, work  # noqa: E402


def toml_text(raw: dict) -> str:
    """A minimal TOML writer for the suite shapes used here (tables of scalars and lists)."""

    def value(v: object) -> str:
        if isinstance(v, bool):
            return "true" if v else "false"
        if isinstance(v, str):
            return '"' + v.replace('"', '\\"') + '"'
        if isinstance(v, list):
            return "[" + ", ".join(value(x) for x in v) + "]"
        if isinstance(v, dict):
            return "{ " + ", ".join(f"{k} = {value(x)}" for k, x in v.items()) + " }"
        return repr(v)

    lines, tables = [], []

    def walk(prefix: str, table: dict) -> None:
        scalars = {
            k: v for k, v in table.items() if not isinstance(v, dict) or prefix.count(".") >= 2
        }
        if prefix:
            tables.append(f"[{prefix}]")
            tables.extend(f"{k} = {value(v)}" for k, v in scalars.items())
        else:
            lines.extend(f"{k} = {value(v)}" for k, v in scalars.items())
        for k, v in table.items():
            if isinstance(v, dict) and k not in scalars:
                walk(f"{prefix}.{k}" if prefix else k, v)

    walk("", raw)
    return "\n".join(lines + tables) + "\n"


def variant(
    raw: dict, name: str, contenders: list[str], trials: int, pruner: str, seeds: int
) -> dict:
    changed = copy.deepcopy(raw)
    changed["name"] = name
    changed["seeds"] = seeds
    changed["contenders"] = {k: v for k, v in raw["contenders"].items() if k in contenders}
    changed["tuning"]["trials"] = trials
    changed["tuning"]["pruner"] = pruner
    changed["tuning"]["space"] = {
        k: v for k, v in raw["tuning"].get("space", {}).items() if k in contenders
    }
    return changed


def tuning_epochs(raw: dict, folder: Path) -> dict[str, tuple[int, float, int, float]]:
    """Per contender: epochs trained, best validation, trials pruned, seconds (one worker)."""
    suite = parse_suite(raw, "benchmark")
    url = f"sqlite:///{folder / (raw['name'] + '.db')}"
    work(suite, folder / "runs.db", url)
    storage = open_storage(url, suite.tuning.heartbeat_seconds, suite.tuning.grace_seconds)
    _, studies, _ = tuning_studies(suite, storage)
    return {
        name: (epochs_trained(s), s.best_value, usage(s).pruned, usage(s).seconds)
        for name, s in studies.items()
    }


def wall_time(raw: dict, folder: Path, jobs: int) -> float:
    path = folder / f"{raw['name']}.toml"
    path.write_text(toml_text(raw))
    url = f"sqlite:///{folder / (raw['name'] + '-tuning.db')}"
    started = time.perf_counter()
    tune(load_suite(str(path)), folder / f"{raw['name']}.db", url, LocalExecutor(jobs, 1))
    return time.perf_counter() - started


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--trials", type=int, default=20)
    parser.add_argument("--contenders", default="attention,convolution")
    parser.add_argument("--speed-trials", type=int, default=10)
    parser.add_argument("--speed-seeds", type=int, default=2)
    parser.add_argument("--skip-speed", action="store_true")
    args = parser.parse_args()
    optuna.logging.set_verbosity(optuna.logging.ERROR)
    torch.set_num_threads(1)
    raw = tomllib.loads((ROOT / "suites" / "tuned.toml").read_text())
    contenders = args.contenders.split(",")
    print(
        f"machine: {platform.processor() or platform.machine()}, {os.cpu_count()} cores, "
        f"load average {os.getloadavg()[0]:.1f}; torch {torch.__version__}"
    )
    with tempfile.TemporaryDirectory() as folder:
        folder = Path(folder)
        results = {}
        for pruner in ("none", "median"):
            changed = variant(raw, f"bench-{pruner}", contenders, args.trials, pruner, 1)
            results[pruner] = tuning_epochs(changed, folder)
        print(f"\n1. pruning, demo scenario, {args.trials} trials per contender, one worker")
        print(
            f"{'contender':<16}{'epochs none':>12}{'epochs median':>14}{'fewer':>8}"
            f"{'best none':>11}{'best median':>12}{'diff pts':>10}{'pruned':>8}"
        )
        totals = [0, 0]
        for name in contenders:
            plain, pruned = results["none"][name], results["median"][name]
            totals[0] += plain[0]
            totals[1] += pruned[0]
            print(
                f"{name:<16}{plain[0]:>12}{pruned[0]:>14}{1 - pruned[0] / plain[0]:>8.0%}"
                f"{plain[1]:>11.4f}{pruned[1]:>12.4f}{100 * (pruned[1] - plain[1]):>+10.2f}"
                f"{pruned[2]:>8}"
            )
        print(f"{'all':<16}{totals[0]:>12}{totals[1]:>14}{1 - totals[1] / totals[0]:>8.0%}")
        if args.skip_speed:
            return
        changed = variant(raw, "speed", contenders, args.speed_trials, "median", args.speed_seeds)
        one = wall_time({**changed, "name": "speed-one"}, folder, 1)
        two = wall_time({**changed, "name": "speed-two"}, folder, 2)
        print(
            f"\n2. whole tuned suite ({args.speed_trials} trials per contender, "
            f"{args.speed_seeds} seeds): one worker {one:.1f} s, two workers {two:.1f} s, "
            f"speed-up {one / two:.2f}x"
        )


if __name__ == "__main__":
    main()
