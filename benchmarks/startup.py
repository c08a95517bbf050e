"""Start-up figures (run: python benchmarks/startup.py).

A build step runs ``fsmsynth`` once per spec, so its start-up is the cost a designer feels.
Each figure is the median wall time of seven runs in fresh processes, measured in this same
run as a bare ``python -c pass`` (the reference), with bytecode caching on as a user has it.
Goals (issue 31): ``--version`` and ``--help`` under 0.15 s over the bare start, and a small
``build`` (the bundled parcel locker) under 0.35 s.  Also listed: the heavy libraries the
command line has loaded before a command runs (none).
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
HEAVY = ("sympy", "scipy", "numpy", "pyeda")


def seconds(argv: list[str], runs: int = 7) -> float:
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    subprocess.run(argv, capture_output=True, env=env, check=True)  # bytecode written once
    times = []
    for _ in range(runs):
        started = time.perf_counter()
        subprocess.run(argv, capture_output=True, env=env, check=True)
        times.append(time.perf_counter() - started)
    return statistics.median(times)


def main() -> None:
    python = sys.executable
    cli = [python, "-m", "fsmsynth"]
    bare = seconds([python, "-c", "pass"])
    with tempfile.TemporaryDirectory() as out:
        figures = {
            "--version": seconds([*cli, "--version"]),
            "--help": seconds([*cli, "--help"]),
            "build (parcel locker)": seconds([*cli, "build", str(ROOT / "examples" /
                                                             "parcel_locker.toml"),
                                              "-o", out, "-q"]),
        }
    print(f"bare python start: {bare:.3f} s")
    for name, value in figures.items():
        goal = 0.35 if name.startswith("build") else bare + 0.15
        print(f"{name:>24}: {value:.3f} s ({value - bare:+.3f} s over bare, "
              f"{value / bare:.1f}x; goal under {goal:.2f} s: "
              f"{'met' if value < goal else 'NOT met'})")
    loaded = subprocess.run([python, "-c", "import sys, fsmsynth.cli; print(' '.join("
                             "sorted(m for m in sys.modules if '.' not in m)))"],
                            capture_output=True, text=True, check=True).stdout.split()
    print(f"heavy libraries loaded by the command line itself: "
          f"{', '.join(h for h in HEAVY if h in loaded) or 'none'}")


if __name__ == "__main__":
    main()
