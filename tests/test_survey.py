"""Survey runs: inputs, ledger backends, resume, kill safety, executors, catalogs.

Stars are the team's own 60-day synthetic light curves (seismo.simulate);
the broken files are written by hand. Results are compared between runs,
not against frozen numbers.
"""

from __future__ import annotations

import dataclasses
import json
import os
import signal
import socket
import sqlite3
import subprocess
import sys
import threading
import time
from pathlib import Path

import astropy.units as u
import numpy as np
import pytest
from astropy.table import Table

from seismo.cli import main
from seismo.config import AnalysisConfig, ScalingOptions, StarInputs
from seismo.errors import InputError, OptionError
from seismo.results import MEASUREMENT_FIELDS, StarResult
from seismo.simulate import OBSERVATIONS, PRESETS, simulate, write_simulation
from seismo.survey import (
    CORE_HELIUM_UNKNOWN,
    LEDGER_NAME,
    Job,
    LocalExecutor,
    MemoryLedger,
    SQLiteLedger,
    StarRecord,
    analyze_one,
    catalog_tables,
    collect_stars,
    load_config,
    open_ledger,
    run_survey,
    star_seed,
    summarize_ledger,
    write_catalog,
)

N_GOOD = 6
BROKEN = {
    "empty.fits": "UnreadableFileError",
    "corrupt.fits": "UnreadableFileError",
    "wrong_columns.csv": "ColumnError",
    "all_nan.csv": "NoFiniteDataError",
}


def _write_stars(folder: Path) -> None:
    folder.mkdir(parents=True, exist_ok=True)
    observation = dataclasses.replace(OBSERVATIONS["long-cadence-4yr"], duration=60.0)
    presets = ["rgb-mid", "rgb-high", "secondary-clump"]
    for i in range(N_GOOD):
        star = dataclasses.replace(PRESETS[presets[i % 3]], id=f"TEST-{i:02d}")
        write_simulation(simulate(star, observation, rng=500 + i), folder / f"star{i:02d}.fits")
    (folder / "empty.fits").write_bytes(b"")
    (folder / "corrupt.fits").write_bytes(b"SIMPLE  =                    T" + b"\0" * 400)
    (folder / "wrong_columns.csv").write_text("a,b\n1,2\n3,4\n")
    (folder / "all_nan.csv").write_text(
        "time,flux\n" + "".join(f"{0.02 * i:.2f},nan\n" for i in range(1000)))


@pytest.fixture(scope="module")
def star_dir(tmp_path_factory: pytest.TempPathFactory) -> Path:
    folder = tmp_path_factory.mktemp("survey_stars") / "stars"
    _write_stars(folder)
    return folder


@pytest.fixture(scope="module")
def reference(star_dir: Path, tmp_path_factory: pytest.TempPathFactory) -> dict[str, StarRecord]:
    """An uninterrupted run on two local worker processes."""
    out = tmp_path_factory.mktemp("reference")
    run_survey(star_dir, out, workers=2, progress=False)
    with open_ledger(out, readonly=True) as ledger:
        return {rec.path: rec for rec in ledger.records()}


def get_test_ledgers() -> list[str]:
    return ["memory", "sqlite"]


@pytest.fixture(params=get_test_ledgers())
def ledger(request: pytest.FixtureRequest, tmp_path: Path):
    backend = MemoryLedger() if request.param == "memory" else SQLiteLedger(tmp_path / "l.db")
    yield backend
    backend.close()


def _same_results(records: dict[str, StarRecord], ref: dict[str, StarRecord]) -> None:
    assert sorted(records) == sorted(ref)
    for path, rec in ref.items():
        got = records[path]
        assert (got.status, got.checksum, got.error_class) == (
            rec.status, rec.checksum, rec.error_class), path
        assert got.result() == rec.result(), path


# --- ledger backends -------------------------------------------------------------------

def test_ledger_put_get_replace(ledger) -> None:
    assert ledger.get("/a") is None
    ledger.put(StarRecord("/a", "failed", "h1", error_class="X", error_message="bad"))
    ledger.put(StarRecord("/b", "done", "h1", checksum="sha256:1", result_json='{"id": "b"}'))
    ledger.put(StarRecord("/a", "done", "h1", checksum="sha256:2", result_json='{"id": "a"}'))
    assert [r.path for r in ledger.records()] == ["/a", "/b"]
    assert ledger.get("/a").status == "done" and ledger.get("/a").result() == {"id": "a"}
    assert ledger.get("/a").finished_at > 0
    assert ledger.counts() == {"done": 2, "failed": 0, "skipped": 0}
    ledger.set_meta("config", {"x": [1, 2]})
    assert ledger.get_meta("config") == {"x": [1, 2]} and ledger.get_meta("none") is None


def test_summary_counts_undecided_core_helium_burners_apart(ledger) -> None:
    # A star undecided between RC and 2CL is still certainly not on the RGB
    # (seismo.state: flag state_core_helium_burning); the summary says so.
    rows = [("/a", "RC", []), ("/b", "unknown", ["state_ambiguous", "state_core_helium_burning"]),
            ("/c", "unknown", ["state_without_dpi1"]), ("/d", "RC", [])]
    for path, state, flags in rows:
        ledger.put(StarRecord(path, "done", "h", checksum=f"sha256:{path}",
                              result_json=json.dumps({"state": state, "flags": flags})))
    summary = summarize_ledger(ledger)
    assert summary.by_state == {"RC": 2, CORE_HELIUM_UNKNOWN: 1, "unknown": 1}
    assert f"{CORE_HELIUM_UNKNOWN} 1" in summary.to_text()


@pytest.mark.parametrize("order", [("/b", "/a"), ("/a", "/b")])
def test_ledger_duplicate_content_is_skipped_in_any_order(ledger, order) -> None:
    for path in order:
        ledger.record(StarRecord(path, "done", "h", checksum="sha256:same", result_json="{}"))
    assert ledger.get("/a").status == "done"
    assert ledger.get("/b").status == "skipped"
    assert "same content as /a" in ledger.get("/b").error_message


def test_ledger_rejects_unknown_status() -> None:
    with pytest.raises(OptionError, match="status must be one of"):
        StarRecord("/a", "lost", "h")


def test_survey_with_broken_files_resume_and_config_change(ledger, star_dir: Path,
                                                           tmp_path: Path) -> None:
    summary = run_survey(star_dir, tmp_path, executor="serial", ledger=ledger, progress=False)
    assert summary.n_run == N_GOOD + len(BROKEN)
    assert summary.by_status == {"done": N_GOOD, "failed": len(BROKEN), "skipped": 0}
    for name, error_class in BROKEN.items():
        rec = ledger.get(str((star_dir / name).resolve()))
        assert rec.status == "failed" and rec.error_class == error_class, name
        assert rec.error_message and "\n" not in rec.error_message
    stars, failures = catalog_tables(ledger.records())
    assert len(stars) == N_GOOD and len(set(stars["path"])) == N_GOOD
    assert sorted(stars["id"]) == [f"TEST-{i:02d}" for i in range(N_GOOD)]
    assert sorted(Path(p).name for p in failures["path"]) == sorted(BROKEN)
    assert sum(n for _, n in summary.failure_reasons) == len(BROKEN)

    # Resume: nothing to do; failed stars only with retry_failed.
    before = {r.path: r for r in ledger.records()}
    again = run_survey(star_dir, tmp_path, executor="serial", ledger=ledger, progress=False)
    assert again.n_run == 0 and again.n_resumed == N_GOOD + len(BROKEN)
    assert {r.path: r for r in ledger.records()} == before
    retry = run_survey(star_dir, tmp_path, executor="serial", ledger=ledger, progress=False,
                       retry_failed=True)
    assert retry.n_run == len(BROKEN)

    # A changed file is re-run; an untouched one is not.
    changed = star_dir / "star00.fits"
    original = changed.read_bytes()
    try:
        changed.write_bytes((star_dir / "star01.fits").read_bytes())
        rerun = run_survey(star_dir, tmp_path, executor="serial", ledger=ledger,
                           progress=False)
        assert rerun.n_run == 1
        assert ledger.get(str(changed.resolve())).status in ("done", "skipped")
    finally:
        changed.write_bytes(original)
        run_survey(star_dir, tmp_path, executor="serial", ledger=ledger, progress=False)

    # A new configuration re-runs every star and records its hash.
    config = AnalysisConfig(scaling=ScalingOptions(n_draws=500))
    new = run_survey(star_dir, tmp_path, config, executor="serial", ledger=ledger,
                     progress=False)
    assert new.n_run == N_GOOD + len(BROKEN)
    assert {r.config_hash for r in ledger.records()} == {config.hash()}
    assert ledger.get_meta("config_hash") == config.hash()


def test_serial_and_local_processes_agree(reference, star_dir: Path, tmp_path: Path) -> None:
    ledger = MemoryLedger()
    run_survey(star_dir, tmp_path, executor="serial", ledger=ledger, progress=False)
    _same_results({r.path: r for r in ledger.records()}, reference)


def test_seeds_are_derived_per_star_and_recorded(reference) -> None:
    for rec in reference.values():
        if rec.status == "done":
            provenance = rec.result()["provenance"]
            assert provenance["run_seed"] == 0
            assert provenance["seed"] == star_seed(0, rec.checksum)
            assert provenance["input_checksum"] == rec.checksum
    assert star_seed(0, "sha256:x") != star_seed(1, "sha256:x")


def test_timeout_becomes_failed_record(star_dir: Path) -> None:
    job = Job(str(star_dir / "star00.fits"), AnalysisConfig(), StarInputs(), 0, timeout=0.01)
    (outcome,) = list(LocalExecutor(1).results([job]))
    assert outcome["status"] == "failed" and outcome["error_class"] == "StarTimeoutError"
    assert "time limit of 0.01 s" in outcome["error_message"]


def _pool_processes(executor: LocalExecutor) -> list:
    pool = executor._pool
    return list(getattr(pool, "_processes", {}).values()) if pool is not None else []


def _signal_workers(executor: LocalExecutor, sig: int, times: int, stop: threading.Event,
                    delay: float = 0.3) -> list[int]:
    """Send ``sig`` to the first ``times`` worker processes that appear (a killed node)."""
    hit: list[int] = []
    while not stop.is_set() and len(hit) < times:
        for process in _pool_processes(executor):
            if process.pid and process.pid not in hit and process.is_alive():
                time.sleep(delay)  # let it pick up the job
                try:
                    os.kill(process.pid, sig)
                except ProcessLookupError:
                    continue
                hit.append(process.pid)
        time.sleep(0.02)
    return hit


def _run_with_signals(executor: LocalExecutor, jobs: list[Job], sig: int, times: int,
                      delay: float = 0.3) -> tuple[list[dict], list[int]]:
    stop = threading.Event()
    hit: list[int] = []
    thread = threading.Thread(
        target=lambda: hit.extend(_signal_workers(executor, sig, times, stop, delay)), daemon=True)
    thread.start()
    try:
        outcomes = list(executor.results(jobs))
    finally:
        stop.set()
        thread.join(timeout=10)
    return outcomes, hit


def test_lost_worker_job_is_run_again(reference, star_dir: Path) -> None:
    # common practice: a worker killed mid-task (kill -9, OOM killer) must not lose the star
    path = str(star_dir / "star00.fits")
    job = Job(path, AnalysisConfig(), StarInputs(), 0)
    (outcome,), hit = _run_with_signals(LocalExecutor(1, max_attempts=2), [job],
                                        signal.SIGKILL, 1)
    assert len(hit) == 1
    assert outcome["status"] == "done"
    assert outcome["worker"] != f"{socket.gethostname()}:{hit[0]}"
    assert json.loads(outcome["result_json"]) == reference[path].result()


def test_worker_dying_on_every_attempt_becomes_failed_record(star_dir: Path) -> None:
    job = Job(str(star_dir / "star00.fits"), AnalysisConfig(), StarInputs(), 0)
    (outcome,), hit = _run_with_signals(LocalExecutor(1, max_attempts=2), [job],
                                        signal.SIGKILL, 2)
    assert len(hit) == 2
    assert outcome["status"] == "failed" and outcome["error_class"] == "WorkerLostError"
    assert "2 attempts" in outcome["error_message"]


def test_stuck_worker_is_killed_and_the_run_goes_on(reference, star_dir: Path) -> None:
    # A stopped process never runs its timer handler: the stand-in for a star stuck in
    # compiled code. The executor must kill it after timeout + grace and carry on.
    jobs = [Job(str(star_dir / f"star0{i}.fits"), AnalysisConfig(), StarInputs(), 0,
                timeout=30.0 if i else 1.0) for i in range(2)]
    executor = LocalExecutor(1, grace=0.5)
    outcomes, hit = _run_with_signals(executor, jobs, signal.SIGSTOP, 1, delay=0.0)
    assert len(hit) == 1
    by_path = {o["path"]: o for o in outcomes}
    stuck, good = by_path[jobs[0].path], by_path[jobs[1].path]
    assert stuck["status"] == "failed" and stuck["error_class"] == "StarTimeoutError"
    assert "worker killed" in stuck["error_message"]
    assert good["status"] == "done"
    assert json.loads(good["result_json"]) == reference[jobs[1].path].result()


# --- inputs and configuration --------------------------------------------------------------

def test_collect_stars_from_folder_list_and_table(star_dir: Path, tmp_path: Path) -> None:
    assert len(collect_stars(star_dir)) == N_GOOD + len(BROKEN)
    assert len(collect_stars(star_dir, "star*.fits")) == N_GOOD
    listing = tmp_path / "stars.lst"
    listing.write_text(f"# two stars\n{star_dir / 'star00.fits'}\n{star_dir / 'star01.fits'}\n"
                       f"{star_dir / 'star00.fits'}\n")
    assert [Path(t.path).name for t in collect_stars(listing)] == ["star00.fits", "star01.fits"]
    table = Table({"path": [str(star_dir / "star00.fits"), str(star_dir / "star01.fits")],
                   "id": ["A", "B"], "teff": [4800.0, np.nan]})
    table.write(tmp_path / "stars.ecsv")
    tasks = collect_stars(tmp_path / "stars.ecsv")
    assert [t.star_id for t in tasks] == ["A", "B"]
    assert tasks[0].inputs.teff == 4800.0 and tasks[0].inputs.teff_err == 100.0
    assert tasks[1].inputs.teff is None
    Table({"file": ["x"]}).write(tmp_path / "bad.csv")
    with pytest.raises(InputError, match="no 'path' column"):
        collect_stars(tmp_path / "bad.csv")
    with pytest.raises(InputError, match="no files matching"):
        collect_stars(star_dir, "*.nothing")


def test_table_inputs_reach_the_analysis(star_dir: Path, tmp_path: Path) -> None:
    Table({"path": [str(star_dir / "star01.fits")], "id": ["NAMED"], "teff": [4950.0],
           "teff_err": [80.0]}).write(tmp_path / "in.csv")
    ledger = MemoryLedger()
    run_survey(tmp_path / "in.csv", tmp_path, executor="serial", ledger=ledger, progress=False)
    (rec,) = list(ledger.records())
    result = rec.result()
    assert result["id"] == "NAMED"
    assert result["details"]["inputs"]["teff"] == 4950.0


def test_load_config(tmp_path: Path) -> None:
    good = tmp_path / "good.toml"
    good.write_text('[condition]\nhighpass_uhz = 5.0\n[scaling]\nn_draws = 1000\n')
    config = load_config(good)
    assert config.condition.highpass_uhz == 5.0 and config.scaling.n_draws == 1000
    assert config.spectrum == AnalysisConfig().spectrum
    for text, match in [("[scaling]\nrefrence = 'x'\n", r"unknown keys \['refrence'\]"),
                        ("[plots]\nx = 1\n", "unknown configuration sections"),
                        ("[spectrum]\noversample = 0.5\n", r"\[spectrum\]: oversample"),
                        ("not toml = = 1", "not valid TOML")]:
        bad = tmp_path / "bad.toml"
        bad.write_text(text)
        with pytest.raises(OptionError, match=match):
            load_config(bad)


# --- catalogs ------------------------------------------------------------------------------

@pytest.mark.parametrize("suffix", [".ecsv", ".fits", ".csv"])
def test_catalog_round_trip(reference, tmp_path: Path, suffix: str) -> None:
    ledger = MemoryLedger()
    for rec in reference.values():
        ledger.put(rec)
    path, failed, n_stars, n_failed = write_catalog(ledger, tmp_path / f"cat{suffix}")
    assert (n_stars, n_failed) == (N_GOOD, len(BROKEN))
    table = Table.read(path)
    assert len(table) == N_GOOD and len(Table.read(failed)) == len(BROKEN)
    expected = {"numax": u.uHz, "dnu": u.uHz, "dpi1": u.s, "mass": u.Msun,
                "radius": u.Rsun, "q": u.dimensionless_unscaled}
    if suffix == ".ecsv":
        expected["logg"] = u.dex(u.cm / u.s**2)
    for name, unit in expected.items():
        if suffix != ".csv":
            assert table[name].unit == unit, name
            assert table[f"{name}_err"].unit == unit, name
    for row in table:
        result = reference[str(row["path"])].result()
        for name in MEASUREMENT_FIELDS:
            m = result[name]
            if m is None:
                assert np.isnan(row[name])
            else:
                assert float(row[name]) == pytest.approx(m["value"], rel=1e-12)
        flags = "" if np.ma.is_masked(row["flags"]) else str(row["flags"])
        assert flags.split(";") if flags else [] == result["flags"]
        assert row["state"] == result["state"]


def test_catalog_parquet_needs_pyarrow(reference, tmp_path: Path) -> None:
    ledger = MemoryLedger()
    for rec in reference.values():
        ledger.put(rec)
    try:
        import pyarrow  # noqa: F401
    except ImportError:
        with pytest.raises(OptionError, match="needs pyarrow"):
            write_catalog(ledger, tmp_path / "cat.parquet")
    else:
        path = write_catalog(ledger, tmp_path / "cat.parquet")[0]
        assert len(Table.read(path)) == N_GOOD


# --- command line and kill safety -----------------------------------------------------------

def test_cli_survey_and_catalog(star_dir: Path, tmp_path: Path, capsys) -> None:
    out = tmp_path / "run"
    bad = tmp_path / "bad.toml"
    bad.write_text("[detection]\nfalse_alarms = 0.1\n")
    assert main(["survey", str(star_dir), "--out", str(out), "--config", str(bad)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "false_alarms" in err and "Traceback" not in err
    assert main(["survey", str(star_dir), "--out", str(out), "--workers", "2",
                 "--pattern", "star0[01].fits", "--catalog", str(tmp_path / "c.fits")]) == 0
    captured = capsys.readouterr()
    assert "done 2, failed 0" in captured.out
    assert len(Table.read(tmp_path / "c.fits")) == 2
    assert main(["catalog", str(out), "--out", str(tmp_path / "c2.ecsv")]) == 0
    assert len(Table.read(tmp_path / "c2.ecsv")) == 2
    assert main(["catalog", str(tmp_path / "nothing")]) == 2
    assert "no survey ledger" in capsys.readouterr().err


def _done_count(db: Path) -> int:
    try:
        with sqlite3.connect(f"file:{db}?mode=ro", uri=True, timeout=5) as con:
            return con.execute("SELECT COUNT(*) FROM stars").fetchone()[0]
    except sqlite3.Error:
        return 0


@pytest.mark.parametrize("signum", [signal.SIGTERM, signal.SIGKILL])
def test_kill_and_resume_equals_uninterrupted_run(reference, star_dir: Path, tmp_path: Path,
                                                  signum: int) -> None:
    out = tmp_path / "run"
    command = [sys.executable, "-m", "seismo", "survey", str(star_dir), "--out", str(out),
               "--workers", "1", "--quiet"]
    env = {**os.environ, "PYTHONWARNINGS": "ignore"}
    log = tmp_path / "stderr.txt"
    with open(log, "wb") as handle:  # not a pipe: it would wait for the workers too
        process = subprocess.Popen(command, env=env, stdout=subprocess.DEVNULL, stderr=handle)
    deadline = time.monotonic() + 60
    while _done_count(out / LEDGER_NAME) < 5 and process.poll() is None:
        assert time.monotonic() < deadline, "survey made no progress"
        time.sleep(0.02)
    process.send_signal(signum)
    process.wait(timeout=60)
    stderr = log.read_bytes()
    n_killed = _done_count(out / LEDGER_NAME)
    assert n_killed < N_GOOD + len(BROKEN), "the run finished before it could be killed"
    if signum == signal.SIGTERM:
        assert process.returncode == 130 and b"Traceback" not in stderr
    with sqlite3.connect(out / LEDGER_NAME) as con:
        assert con.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    resumed = subprocess.run(command, env=env, capture_output=True, timeout=120)
    assert resumed.returncode == 1, resumed.stderr  # 1: some inputs failed, as they should
    with open_ledger(out, readonly=True) as ledger:
        records = {rec.path: rec for rec in ledger.records()}
        assert len(list(ledger.records())) == len(records)
    _same_results(records, reference)


def test_dask_local_cluster_matches_local_executor(reference, star_dir: Path,
                                                   tmp_path: Path) -> None:
    pytest.importorskip("distributed")
    summary = run_survey(star_dir, tmp_path, executor="dask:local", workers=2, progress=False)
    assert summary.by_status["done"] == N_GOOD
    with open_ledger(tmp_path, readonly=True) as ledger:
        records = {rec.path: rec for rec in ledger.records()}
    _same_results(records, reference)
    workers = {rec.worker for rec in records.values()}
    assert len(workers) >= 1 and all(":" in w for w in workers)


def test_results_parse_as_star_results(reference) -> None:
    for rec in reference.values():
        if rec.status == "done":
            assert StarResult.from_json(rec.result_json).to_dict() == json.loads(rec.result_json)


def test_timeout_while_reading_is_not_an_unreadable_file(star_dir: Path, monkeypatch) -> None:
    # The reader turns any Exception from astropy into "not a readable FITS light curve";
    # a time limit that runs out while the file is read (a slow disk, a busy node) must
    # still be recorded as a timeout, not as a damaged file. Common practice: a timer
    # signal's exception must not be caught by ordinary error handling (like Ctrl-C).
    from astropy.io import fits

    real_open = fits.open

    def slow_open(*args, **kwargs):
        time.sleep(0.2)  # the 0.05-s alarm fires in here
        return real_open(*args, **kwargs)

    monkeypatch.setattr(fits, "open", slow_open)
    outcome = analyze_one(str(star_dir / "star00.fits"), AnalysisConfig(), StarInputs(), 0,
                          timeout=0.05)
    assert outcome["error_class"] == "StarTimeoutError", outcome["error_message"]
