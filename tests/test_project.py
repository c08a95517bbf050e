"""Projects of many specs (build-all, incremental) and sweeps, here, on process and thread
pools, and on a real local Dask cluster."""

from __future__ import annotations

import shutil
import signal
import subprocess
import sys
import time
from concurrent.futures import ProcessPoolExecutor, ThreadPoolExecutor
from pathlib import Path

import pytest
from test_verilog_tools import need_module

from fsmsynth.base.errors import SpecFileError
from fsmsynth.cli import main
from fsmsynth.flows.project import CACHE_NAME, build_project
from fsmsynth.flows.project_file import read_project
from fsmsynth.flows.sweep import COLUMNS, sweep
from fsmsynth.formats import read_table

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = ROOT / "examples"
PLANT = EXAMPLES / "plant" / "fsmsynth.toml"


def _project(tmp_path: Path, body: str, specs: tuple[str, ...] = (
        "greenhouse_vent.toml", "parcel_locker.toml", "rail_crossing.csv")) -> Path:
    for name in specs:
        shutil.copy(EXAMPLES / name, tmp_path / name)
    path = tmp_path / "fsmsynth.toml"
    path.write_text(body)
    return path


SIMPLE = 'out = "out"\nspecs = ["*.toml", "*.csv"]\n\n[defaults]\nunused = "safe"\n' \
         'testbench = true\n\n[spec.parcel_locker]\nstorage = "jk"\n'


def _files(out: Path) -> dict[str, tuple[bytes, int]]:
    return {p.name: (p.read_bytes(), p.stat().st_mtime_ns) for p in sorted(out.iterdir())}


def test_build_all_builds_each_spec_like_build_and_rebuilds_only_what_changed(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = _project(tmp_path, SIMPLE)
    assert main(["build-all", str(path), "--jobs", "2", "-q"]) == 0
    text = capsys.readouterr().out
    assert "3 designs: 3 rebuilt" in text and "parcel_locker" in text
    out = tmp_path / "out"
    # The same bytes as building each spec alone with the same options.
    single = tmp_path / "single"
    assert main(["build", str(tmp_path / "parcel_locker.toml"), "--storage", "jk",
                 "--unused", "safe", "--testbench", "-o", str(single), "-q"]) == 0
    for name in ("parcel_locker.v", "parcel_locker.json", "parcel_locker_tb.v"):
        assert (out / name).read_bytes() == (single / name).read_bytes()
    capsys.readouterr()

    before = _files(out)
    time.sleep(0.01)
    assert main(["build-all", str(path), "-q"]) == 0
    assert "3 designs: 3 up to date" in capsys.readouterr().out
    assert _files(out) == before  # nothing touched, not even the cache

    spec = tmp_path / "greenhouse_vent.toml"
    spec.write_text(spec.read_text().replace('name = "greenhouse_vent"',
                                             'name = "greenhouse_vent"\n# edited'))
    project = read_project(path)
    result = build_project(project, jobs=1)
    assert {o.spec: o.status for o in result.outcomes} == {
        "greenhouse_vent": "rebuilt", "parcel_locker": "up to date",
        "rail_crossing": "up to date"}
    # A comment changes the spec's bytes, not its logic: rebuilt, files equal, none written.
    assert result.outcomes[0].written == ()

    path.write_text(SIMPLE.replace('storage = "jk"', 'storage = "t"'))
    result = build_project(read_project(path), jobs=1)
    assert [o.status for o in result.outcomes] == ["up to date", "rebuilt", "up to date"]
    assert "parcel_locker.v" in result.outcomes[1].written


def test_a_new_fsmsynth_version_rebuilds_everything(tmp_path: Path,
                                                    monkeypatch: pytest.MonkeyPatch) -> None:
    import fsmsynth.flows.project

    project = read_project(_project(tmp_path, SIMPLE))
    assert {o.status for o in build_project(project, jobs=1).outcomes} == {"rebuilt"}
    assert {o.status for o in build_project(project, jobs=1).outcomes} == {"up to date"}
    monkeypatch.setattr(fsmsynth.flows.project, "__version__", "99.0")
    assert {o.status for o in build_project(project, jobs=1).outcomes} == {"rebuilt"}


def test_an_edited_or_deleted_output_is_rebuilt_and_check_names_it(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = _project(tmp_path, SIMPLE)
    assert main(["build-all", str(path), "-q", "--jobs", "1"]) == 0
    out = tmp_path / "out"
    (out / "rail_crossing.v").write_text("// edited by hand\n")
    capsys.readouterr()
    assert main(["build-all", str(path), "--check", "--jobs", "1"]) == 1
    text = capsys.readouterr().out
    assert "rail_crossing: stale" in text and "rail_crossing.v" in text
    assert "greenhouse_vent: current" in text
    assert (out / "rail_crossing.v").read_text() == "// edited by hand\n"  # check writes nothing
    (out / "parcel_locker.json").unlink()
    result = build_project(read_project(path), jobs=1)
    assert {o.spec: o.status for o in result.outcomes}["rail_crossing"] == "rebuilt"
    assert {o.spec: o.status for o in result.outcomes}["parcel_locker"] == "rebuilt"
    assert (out / "parcel_locker.json").is_file()
    assert main(["build-all", str(path), "--check", "--jobs", "1"]) == 0


def test_one_bad_spec_is_reported_with_its_line_and_the_others_are_built(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = _project(tmp_path, SIMPLE)
    bad = tmp_path / "greenhouse_vent.toml"
    lines = bad.read_text().splitlines()
    at = next(i for i, line in enumerate(lines) if line.strip().startswith("reset"))
    lines[at] = 'reset = "nowhere"'
    bad.write_text("\n".join(lines) + "\n")
    assert main(["build-all", str(path), "-q", "--jobs", "2"]) == 1
    text = capsys.readouterr().out
    assert "greenhouse_vent: FAILED: " in text and "nowhere" in text
    assert str(bad) in text
    assert (tmp_path / "out" / "parcel_locker.v").is_file()
    assert (tmp_path / "out" / "rail_crossing.v").is_file()
    assert "failed" in text.splitlines()[-1] or "1 failed" in text


@pytest.mark.parametrize("body, line, words", [
    ('out = "o"\nspecs = ["*.toml"]\ncolour = 1\n', 3, "unknown key 'colour'"),
    ('specs = ["nothing/*.toml"]\n', 1, "names no file"),
    ('specs = ["*.toml"]\n\n[defaults]\nstorage = 3\n', 4, "storage must be"),
    ('specs = ["*.toml"]\n\n[spec.parcel_locker]\nstorag = "jk"\n', 4, "unknown option"),
    ('specs = ["*.toml"]\n\n[spec.nobody]\nstorage = "jk"\n', 3, "no spec named 'nobody'"),
    ('specs = ["*.toml"]\n\n[defaults]\nhdl = ["verilog", "vhld"]\n', 4, "hdl"),
    # A bad value is located like an unknown key (it failed every design, unlocated).
    ('specs = ["*.toml"]\n\n[defaults]\nstorage = "jj"\n', 4, "storage 'jj'"),
    ('specs = ["*.toml"]\n\n[defaults]\nstorage = ["d", "kj"]\n', 4, "storage 'kj'"),
    ('specs = ["*.toml"]\n\n[defaults]\nencoding = "binery"\n', 4, "encoding 'binery'"),
    ('specs = ["*.toml"]\n\n[defaults]\nunused = "maybe"\n', 4, "unused 'maybe'"),
    ('specs = ["*.toml"]\n\n[defaults]\ntarget = "lut9"\n', 4, "lut9"),
    ('specs = ["*.toml"]\n\n[defaults]\njobs = 0\n', 4, "jobs 0"),
    ('specs = ["*.toml"]\n\n[spec.parcel_locker]\noutputs = "latched"\n', 4,
     "outputs 'latched'"),
    ('specs = ["*.toml"]\n\n[sweep]\nstorages = "d"\n', 4, "must be a list"),
])
def test_project_file_errors_name_the_file_and_line(tmp_path: Path, body: str, line: int,
                                                    words: str,
                                                    capsys: pytest.CaptureFixture[str]) -> None:
    path = _project(tmp_path, body)
    with pytest.raises(SpecFileError) as caught:
        read_project(path)
    assert str(caught.value).startswith(f"{path}:{line}: ") and words in str(caught.value)
    assert main(["build-all", str(path)]) == 2
    assert words in capsys.readouterr().err


def test_two_specs_of_one_machine_are_refused(tmp_path: Path) -> None:
    path = _project(tmp_path, 'out = "out"\nspecs = ["*.toml"]\n',
                    specs=("glass_kiln.toml", "glass_kiln_cubes.toml"))
    result = build_project(read_project(path), jobs=1)
    assert [o.status for o in result.outcomes] == ["rebuilt", "failed"]
    assert "machine 'glass_kiln' is also built from spec 'glass_kiln'" in \
        result.outcomes[1].error


def test_bundled_project_builds_then_has_nothing_to_do(tmp_path: Path) -> None:
    project = read_project(PLANT)
    assert len(project.specs) >= 6
    from dataclasses import replace
    project = replace(project, out=tmp_path / "build")
    first = build_project(project, jobs=2)
    assert first.ok and all(o.status == "rebuilt" and o.verified for o in first.outcomes)
    assert (tmp_path / "build" / CACHE_NAME).is_file()
    second = build_project(project, jobs=2)
    assert second.ok and all(o.status == "up to date" for o in second.outcomes)


def _tables() -> list:  # type: ignore[type-arg]
    return [read_table(spec.path) for spec in read_project(PLANT).specs]


def test_sweep_rows_in_task_order_the_same_on_every_executor() -> None:
    tables = _tables()[:3]
    here = sweep(tables, ["d", "jk"], ["binary", "one-hot"], ["two-level", "nand2"])
    assert len(here) == 3 * 2 * 2 * 2
    assert [(r.machine, r.storage, r.encoding, r.target) for r in here.rows] == [
        (t.name, s, e, g) for t in tables for s in ("d", "jk") for e in ("binary", "one-hot")
        for g in ("two-level", "nand2")]
    assert all(r.verified and not r.error and r.total is not None for r in here.rows)
    nand = [r for r in here.rows if r.target == "nand2"]
    assert all(r.cells and r.depth for r in nand)
    with ProcessPoolExecutor(2) as pool:
        processed = sweep(tables, ["d", "jk"], ["binary", "one-hot"], ["two-level", "nand2"],
                          executor=pool)
    with ThreadPoolExecutor(3) as pool:
        threaded = sweep(tables, ["d", "jk"], ["binary", "one-hot"], ["two-level", "nand2"],
                         executor=pool)
    assert here.to_csv() == processed.to_csv() == threaded.to_csv()
    assert here.to_json() == processed.to_json()
    header = here.to_csv().splitlines()[0].split(",")
    assert header == [c for c in COLUMNS if c != "seconds"]
    assert "seconds" in here.to_csv(times=True).splitlines()[0]
    assert set(here.records()[0]) == set(COLUMNS)


def test_sweep_keeps_a_failing_option_set_as_a_row(tmp_path: Path) -> None:
    table = _tables()[0]
    result = sweep([table], ["d", "nonsense"], ["binary"])
    assert result.rows[0].verified and not result.rows[0].error
    assert not result.rows[1].verified and "nonsense" in result.rows[1].error


def test_sweep_to_dataframe_when_pandas_is_there() -> None:
    pandas = pytest.importorskip("pandas")
    frame = sweep(_tables()[:1], ["d", "t"]).to_dataframe()
    assert isinstance(frame, pandas.DataFrame) and list(frame.columns) == list(COLUMNS)
    assert len(frame) == 2


def test_sweep_shows_a_progress_bar(capsys: pytest.CaptureFixture[str]) -> None:
    sweep(_tables()[:2], ["d", "t"], progress=True)
    err = capsys.readouterr().err
    assert "4/4" in err and "design" in err


def test_sweep_cli_writes_csv_and_json(tmp_path: Path,
                                       capsys: pytest.CaptureFixture[str]) -> None:
    csv_path, json_path = tmp_path / "s.csv", tmp_path / "s.json"
    assert main(["sweep", str(PLANT), "--storages", "d,jk", "--encodings", "binary",
                 "--targets", "two-level", "--csv", str(csv_path), "--json", str(json_path),
                 "--jobs", "2", "--no-progress"]) == 0
    rows = csv_path.read_text().splitlines()
    assert len(rows) == 1 + 2 * len(read_project(PLANT).specs)
    assert json_path.read_text().startswith("[")
    first = csv_path.read_bytes()
    assert main(["sweep", str(PLANT), "--storages", "d,jk", "--encodings", "binary",
                 "--targets", "two-level", "--csv", str(csv_path), "--jobs", "1",
                 "--no-progress"]) == 0
    assert csv_path.read_bytes() == first


def test_sweep_leaves_out_a_bad_spec_and_sweeps_the_others(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = _project(tmp_path, SIMPLE)
    (tmp_path / "parcel_locker.toml").write_text('name = "parcel_locker"\nkind = "moore"\n')
    out = tmp_path / "rows.csv"
    assert main(["sweep", str(path), "--csv", str(out), "--jobs", "1", "--no-progress"]) == 1
    err = capsys.readouterr().err
    assert f"fsmsynth: error: {tmp_path / 'parcel_locker.toml'}" in err
    machines = [line.split(",")[0] for line in out.read_text().splitlines()[1:]]
    assert machines == ["greenhouse_vent", "rail_crossing"]


def test_ctrl_c_stops_a_sweep_and_keeps_the_finished_rows(tmp_path: Path) -> None:
    out = tmp_path / "rows.csv"
    command = [sys.executable, "-m", "fsmsynth.cli", "sweep", str(PLANT), "--storages",
               "d,t,jk,sr", "--encodings", "binary,gray,one-hot,anneal", "--targets",
               "two-level,nand2,cmos,lut4", "--jobs", "1", "--csv", str(out), "--no-progress"]
    process = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                               text=True)
    try:
        time.sleep(6)
        process.send_signal(signal.SIGINT)
        _, err = process.communicate(timeout=120)
    finally:
        process.kill()
    assert process.returncode == 130, err
    assert "interrupted" in err and "Traceback" not in err
    rows = out.read_text().splitlines()
    assert 1 < len(rows) < 1 + 7 * 4 * 4 * 4


def test_sweep_and_build_all_on_a_local_dask_cluster_match_local_runs(
        tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    distributed = need_module("distributed", "cluster", "dask distributed")
    tables = _tables()
    here = sweep(tables, ["d", "jk", "t"], ["binary", "one-hot"])
    assert len(here) >= 20
    cluster = distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, dashboard_address=None)
    try:
        with distributed.Client(cluster) as client:
            remote = sweep(tables, ["d", "jk", "t"], ["binary", "one-hot"],
                           executor=client.get_executor())
        assert remote.to_csv() == here.to_csv()
        local_dir, remote_dir = tmp_path / "local", tmp_path / "remote"
        for folder, extra in ((local_dir, ["--jobs", "1"]),
                              (remote_dir, ["--scheduler", cluster.scheduler_address])):
            project = folder / "fsmsynth.toml"
            folder.mkdir()
            project.write_text(PLANT.read_text().replace('"../', f'"{EXAMPLES}/'))
            assert main(["build-all", str(project), "-q", *extra]) == 0
        assert "7 rebuilt" in capsys.readouterr().out
        names = sorted(p.name for p in (local_dir / "build").iterdir())
        assert names == sorted(p.name for p in (remote_dir / "build").iterdir())
        for name in names:
            assert ((local_dir / "build" / name).read_bytes()
                    == (remote_dir / "build" / name).read_bytes()), name
        assert main(["sweep", str(local_dir / "fsmsynth.toml"), "--scheduler",
                     cluster.scheduler_address, "--storages", "d", "--encodings", "binary",
                     "--targets", "two-level", "--csv", str(tmp_path / "r.csv"),
                     "--no-progress"]) == 0
    finally:
        cluster.close()


def test_a_sweep_row_equals_the_project_build_with_the_same_options(tmp_path: Path) -> None:
    """The plant project sets unused = "safe" (and registered outputs for the crossing): a
    sweep of it must build with those, as build-all does (it used the defaults instead)."""
    import csv
    from dataclasses import replace

    from fsmsynth.flows.project import synthesize_with

    out = tmp_path / "rows.csv"
    assert main(["sweep", str(PLANT), "--storages", "d", "--encodings", "binary",
                 "--targets", "two-level", "--csv", str(out), "--jobs", "1",
                 "--no-progress"]) == 0
    rows = {r["machine"]: float(r["total"]) for r in csv.DictReader(out.open())}
    differs = 0
    for spec in read_project(PLANT).specs:
        table = read_table(spec.path)
        options = replace(spec.options, storage="d", encoding="binary", target="two-level")
        assert rows[table.name] == synthesize_with(table, options).cost.total, table.name
        plain = replace(options, unused="dont-care", outputs="combinational")
        differs += synthesize_with(table, plain).cost.total != rows[table.name]
    assert differs >= 3  # the project's options matter for these machines
