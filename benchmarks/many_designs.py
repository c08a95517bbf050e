"""Many designs at once (run: python benchmarks/many_designs.py).

Writes 50 random controllers (benchmarks/controllers.py) of 6 to 20 states as spec files
and a project file in a temporary folder, then prints:

* build-all cold, jobs 1 and jobs 2, and the speed-up jobs 1 / jobs 2 as a ratio;
* a warm run with nothing changed, in this process and as a fresh ``fsmsynth build-all``
  command (goal: under 2 s for 50 specs, files untouched);
* a 200-design sweep (50 machines x 2 storage kinds x 2 encodings) here, one by one, and on
  a 2-worker Dask LocalCluster (needs fsmsynth[cluster]), and the overhead cluster / local
  as a ratio (the cluster has two workers: below 1 means it paid off).
"""

from __future__ import annotations

import re
import subprocess
import sys
import tempfile
import time
from dataclasses import replace
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from controllers import controller

from fsmsynth.flows.project import build_project
from fsmsynth.flows.project_file import read_project
from fsmsynth.flows.sweep import sweep
from fsmsynth.formats import read_table
from fsmsynth.writers.spec_toml import write_spec

COUNT = 50


def write_project(folder: Path) -> Path:
    specs = folder / "specs"
    specs.mkdir()
    for k in range(COUNT):
        n = 6 + k * 15 // (COUNT - 1)
        text = write_spec(controller(n, 4 + k % 4, seed=k))
        text = re.sub(r'^name = ".*"$', f'name = "unit{k:02d}"', text, count=1, flags=re.M)
        (specs / f"unit{k:02d}.toml").write_text(text)
    project = folder / "fsmsynth.toml"
    project.write_text('out = "build"\nspecs = ["specs/*.toml"]\n\n[defaults]\n'
                       'unused = "safe"\ntestbench = true\n')
    return project


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        path = write_project(Path(tmp))
        project = read_project(path)
        cold = {}
        for jobs in (1, 2):
            fresh = replace(project, out=Path(tmp) / f"build{jobs}")
            started = time.perf_counter()
            result = build_project(fresh, jobs=jobs)
            cold[jobs] = time.perf_counter() - started
            assert result.ok, [o.error for o in result.outcomes if not o.ok]
            print(f"build-all cold, {len(result.outcomes)} specs, jobs {jobs}: "
                  f"{cold[jobs]:.2f} s")
        print(f"  speed-up jobs 1 / jobs 2: {cold[1] / cold[2]:.2f}")
        warm_project = replace(project, out=Path(tmp) / "build2")
        started = time.perf_counter()
        warm = build_project(warm_project, jobs=2)
        in_process = time.perf_counter() - started
        assert all(o.status == "up to date" for o in warm.outcomes)
        print(f"build-all warm (nothing changed), in this process: {in_process:.3f} s")
        (Path(tmp) / "fsmsynth.toml").write_text(
            path.read_text().replace('out = "build"', 'out = "build2"'))
        started = time.perf_counter()
        subprocess.run([sys.executable, "-m", "fsmsynth.cli", "build-all",
                        str(Path(tmp) / "fsmsynth.toml"), "-q"], check=True,
                       stdout=subprocess.DEVNULL)
        command = time.perf_counter() - started
        print(f"build-all warm, as a fresh command (interpreter and imports included): "
              f"{command:.2f} s (goal < 2 s)")

        tables = [read_table(spec.path) for spec in project.specs]
        started = time.perf_counter()
        here = sweep(tables, ["d", "jk"], ["binary", "one-hot"])
        local = time.perf_counter() - started
        print(f"sweep of {len(here)} designs here, one by one: {local:.2f} s")
        try:
            from distributed import Client, LocalCluster
        except ImportError:
            print("  (no dask distributed: pip install fsmsynth[cluster] for the cluster run)")
            return
        with LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                          dashboard_address=None) as cluster, Client(cluster) as client:
            client.run(lambda: __import__("fsmsynth.flows.sweep"))  # warm the workers' imports
            started = time.perf_counter()
            remote = sweep(tables, ["d", "jk"], ["binary", "one-hot"],
                           executor=client.get_executor())
            on_cluster = time.perf_counter() - started
        assert remote.to_csv() == here.to_csv()
        print(f"sweep on a 2-worker LocalCluster: {on_cluster:.2f} s, same rows")
        print(f"  cluster / local: {on_cluster / local:.2f}")


if __name__ == "__main__":
    main()
