"""`run_survey`: many stars through one configuration, resumable.

Resume rules (per star, keyed by its absolute path): a star is run again
when it has no record, when the configuration hash, its per-star inputs or
the run seed differ from the record, or when the file changed (its size or
modification time differ and its checksum too). Done and skipped stars are
otherwise left alone; failed stars are retried only with
``retry_failed=True``.
"""

from __future__ import annotations

import os
import signal
import sys
import time
from collections import Counter
from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Any, TextIO

from ..config import AnalysisConfig
from ..errors import OptionError
from ..pipeline import file_checksum
from ..state import core_helium_burning
from .executors import DaskExecutor, Job, LocalExecutor, SerialExecutor
from .inputs import StarTask, collect_stars
from .ledger import STATUSES, Ledger, StarRecord, open_ledger

__all__ = ["SurveySummary", "run_survey", "summarize_ledger", "plan_survey",
           "CORE_HELIUM_UNKNOWN"]

#: Key of `SurveySummary.by_state` for undecided stars that are RC or 2CL.
CORE_HELIUM_UNKNOWN = "unknown (RC or 2CL)"


@dataclass
class SurveySummary:
    """What a survey run did and what the ledger holds.

    Attributes
    ----------
    n_inputs : int
        Stars listed in the inputs.
    n_run : int
        Stars analysed in this run.
    n_resumed : int
        Stars left alone because the ledger already held them.
    by_status : dict
        Ledger records by status (done, failed, skipped), for the listed stars.
    by_state : dict
        Done stars by evolutionary state; undecided stars that are certainly core-helium
        burning (flag ``state_core_helium_burning``) are counted apart, under
        `CORE_HELIUM_UNKNOWN`.
    slowest : list of (str, float)
        Paths and wall times (s) of the slowest stars.
    failure_reasons : list of (str, int)
        Most common ``"<class>: <message>"`` of failed stars, with counts.
    seconds : float
        Wall time of the run, s.
    executor : str
        Description of the executor.
    """

    n_inputs: int = 0
    n_run: int = 0
    n_resumed: int = 0
    by_status: dict[str, int] = field(default_factory=dict)
    by_state: dict[str, int] = field(default_factory=dict)
    slowest: list[tuple[str, float]] = field(default_factory=list)
    failure_reasons: list[tuple[str, int]] = field(default_factory=list)
    seconds: float = 0.0
    executor: str = ""

    def to_text(self) -> str:
        """A few lines for the terminal."""
        rate = self.n_run / self.seconds * 60 if self.seconds > 0 else 0.0
        lines = [
            f"survey: {self.n_inputs} stars; analysed {self.n_run} in {self.seconds:.1f} s "
            f"({rate:.1f} stars/min, {self.executor}); {self.n_resumed} already in the ledger",
            "  status   " + ", ".join(f"{k} {v}" for k, v in self.by_status.items()),
            "  state    " + (", ".join(f"{k} {v}" for k, v in self.by_state.items()) or "—"),
        ]
        if self.slowest:
            lines.append("  slowest  " + ", ".join(f"{Path(p).name} {s:.1f} s"
                                                   for p, s in self.slowest))
        for reason, n in self.failure_reasons:
            lines.append(f"  failed   {n} × {reason}")
        return "\n".join(lines)


def _short_reason(rec: StarRecord) -> str:
    message = rec.error_message or ""
    # Messages start with the path; leave it out so equal reasons group together.
    if message.startswith(rec.path):
        message = message[len(rec.path):].lstrip(": ")
    return f"{rec.error_class}: {message[:120]}"


def summarize_ledger(ledger: Ledger, paths: Sequence[str] | None = None, *, n_slowest: int = 5,
                     n_reasons: int = 5) -> SurveySummary:
    """Counts by status and state, slowest stars and common failures of a ledger.

    Parameters
    ----------
    ledger : Ledger
    paths : sequence of str, optional
        Restrict to these stars (default every record).
    n_slowest, n_reasons : int
        Lengths of the lists of slowest stars and failure reasons.

    Returns
    -------
    SurveySummary
    """
    wanted = None if paths is None else set(paths)
    records = [r for r in ledger.records() if wanted is None or r.path in wanted]
    by_status = dict.fromkeys(STATUSES, 0)
    states: Counter[str] = Counter()
    reasons: Counter[str] = Counter()
    for rec in records:
        by_status[rec.status] += 1
        if rec.status == "done":
            result = rec.result() or {}
            state = result.get("state") or "unknown"
            if state == "unknown" and core_helium_burning(state, result.get("flags") or ()):
                state = CORE_HELIUM_UNKNOWN  # RGB excluded, the clump undecided
            states[state] += 1
        elif rec.status == "failed":
            reasons[_short_reason(rec)] += 1
    slowest = sorted(records, key=lambda r: -r.seconds)[:n_slowest]
    return SurveySummary(
        n_inputs=len(records), by_status=by_status, by_state=dict(states.most_common()),
        slowest=[(r.path, r.seconds) for r in slowest if r.seconds > 0],
        failure_reasons=reasons.most_common(n_reasons),
    )


def _unchanged(rec: StarRecord, path: str) -> bool:
    try:
        info = os.stat(path)
    except OSError:
        return rec.checksum is None  # still missing, or gone since: keep the record
    if (info.st_size, info.st_mtime_ns) == (rec.size, rec.mtime_ns):
        return True
    try:
        return file_checksum(path) == rec.checksum
    except OSError:
        return False


def plan_survey(tasks: Sequence[StarTask], ledger: Ledger, config_hash: str, run_seed: int,
                retry_failed: bool = False) -> tuple[list[StarTask], int]:
    """Choose the stars to run (see the module docstring for the rules).

    Returns
    -------
    (list of StarTask, int)
        Stars to run, in input order, and the number left alone.
    """
    todo = []
    for task in tasks:
        rec = ledger.get(task.path)
        if (rec is None or rec.config_hash != config_hash or rec.inputs_key != task.key
                or rec.run_seed != run_seed or not _unchanged(rec, task.path)
                or (rec.status == "failed" and retry_failed)):
            todo.append(task)
    return todo, len(tasks) - len(todo)


class _Progress:
    """A bar on a terminal, a log line every ``every`` seconds otherwise, or nothing."""

    def __init__(self, total: int, mode: str, stream: TextIO, every: float = 10.0) -> None:
        self.total, self.stream, self.every = total, stream, every
        if mode == "auto":
            mode = "bar" if getattr(stream, "isatty", lambda: False)() else "log"
        self.mode = mode
        self.counts = {"done": 0, "failed": 0, "skipped": 0}
        self.start = self.last = time.monotonic()

    def _line(self) -> str:
        n = sum(self.counts.values())
        elapsed = time.monotonic() - self.start
        rate = n / elapsed if elapsed > 0 else 0.0
        left = (self.total - n) / rate if rate > 0 else float("nan")
        eta = "—" if left != left else f"{left / 60:.1f} min" if left > 90 else f"{left:.0f} s"
        return (f"{n}/{self.total} (done {self.counts['done']}, failed {self.counts['failed']})"
                f" {rate * 60:.1f} stars/min, {eta} left")

    def update(self, status: str) -> None:
        self.counts[status] = self.counts.get(status, 0) + 1
        now = time.monotonic()
        if self.mode == "bar":
            n = sum(self.counts.values())
            filled = int(30 * n / max(self.total, 1))
            self.stream.write(f"\r[{'#' * filled}{'.' * (30 - filled)}] {self._line()}  ")
            self.stream.flush()
        elif self.mode == "log" and (now - self.last >= self.every
                                     or sum(self.counts.values()) == self.total):
            self.last = now
            print(f"seismo survey: {self._line()}", file=self.stream, flush=True)

    def close(self) -> None:
        if self.mode == "bar" and self.total:
            self.stream.write("\n")
            self.stream.flush()


class _Terminated(Exception):
    pass


def _raise_terminated(signum: int, frame: Any) -> None:
    raise _Terminated()


def _jobs(todo: Sequence[StarTask], config: AnalysisConfig, seed: int,
          timeout: float | None) -> Iterator[Job]:
    for task in todo:
        star_config = config
        if task.star_id is not None:
            star_config = replace(config, read=replace(config.read, star_id=task.star_id))
        yield Job(task.path, star_config, task.inputs, seed, timeout)


def run_survey(
    inputs: str | Path | Sequence[StarTask],
    out_dir: str | Path,
    config: AnalysisConfig | None = None,
    *,
    workers: int | None = None,
    executor: str | Any = "local",
    timeout: float | None = None,
    retry_failed: bool = False,
    progress: str | bool = "auto",
    seed: int = 0,
    pattern: str | None = None,
    ledger: Ledger | None = None,
    catalog: str | Path | None = None,
    stream: TextIO | None = None,
) -> SurveySummary:
    """Analyse every star of a survey, recording each in the ledger as it finishes.

    Parameters
    ----------
    inputs : str, Path or sequence of StarTask
        Folder, text list or inputs table (`collect_stars`), or the stars.
    out_dir : str or Path
        Survey folder; holds the ledger (``ledger.sqlite``).
    config : AnalysisConfig, optional
        One configuration for the whole run (default settings otherwise).
    workers : int, optional
        Local worker processes, or the size of a Dask ``"local"`` cluster;
        default the number of cores.
    executor : str or executor object
        ``"local"`` (worker processes), ``"serial"`` (this process),
        ``"dask:local"`` (a Dask
        LocalCluster), ``"dask:<scheduler address>"``, or an object with a
        ``results(jobs)`` method (`LocalExecutor`, `DaskExecutor`).
    timeout : float, optional
        Per-star time limit, s (default none).
    retry_failed : bool
        Run stars recorded as failed again.
    progress : {"auto", "bar", "log", "quiet"} or bool
        ``"auto"`` draws a bar on a terminal and logs a line every 10 s
        otherwise; ``False`` or ``"quiet"`` is silent.
    seed : int
        Run seed; each star's seed derives from it and the file's checksum.
    pattern : str, optional
        File-name glob when ``inputs`` is a folder.
    ledger : Ledger, optional
        Storage (default the SQLite ledger in ``out_dir``); not closed here.
    catalog : str or Path, optional
        Also export a catalog there at the end (`write_catalog`).
    stream : file, optional
        Where progress goes (default ``sys.stderr``).

    Returns
    -------
    SurveySummary

    Raises
    ------
    InputError
        If the inputs cannot be listed.
    OptionError
        For an unknown executor, or Dask requested but not installed.
    KeyboardInterrupt
        On SIGINT or SIGTERM, after stopping the workers; every star that
        finished is in the ledger.
    """
    started = time.monotonic()
    config = config or AnalysisConfig()
    tasks = collect_stars(inputs, pattern) if isinstance(inputs, (str, Path)) else list(inputs)
    if isinstance(executor, str):
        if executor == "local":
            executor = LocalExecutor(workers)
        elif executor == "serial":
            executor = SerialExecutor()
        elif executor.startswith("dask:"):
            executor = DaskExecutor(executor[5:], workers)
        else:
            raise OptionError(f"unknown executor {executor!r}; allowed are 'local', "
                              "'dask:local' and 'dask:<scheduler address>'")
    own_ledger = ledger is None
    ledger = ledger if ledger is not None else open_ledger(out_dir)
    stream = stream or sys.stderr
    mode = "quiet" if progress is False or progress == "quiet" else (
        "auto" if progress is True else str(progress))
    previous = None
    try:
        config_hash = config.hash()
        ledger.set_meta("config", config.to_dict())
        ledger.set_meta("config_hash", config_hash)
        ledger.set_meta("run_seed", int(seed))
        todo, n_resumed = plan_survey(tasks, ledger, config_hash, int(seed), retry_failed)
        keys = {t.path: t for t in todo}
        bar = _Progress(len(todo), mode, stream)
        if threadsafe_main():
            previous = signal.signal(signal.SIGTERM, _raise_terminated)
        try:
            for outcome in executor.results(_jobs(todo, config, int(seed), timeout)):
                task = keys[outcome["path"]]
                rec = StarRecord(
                    path=task.path, status=outcome["status"], config_hash=config_hash,
                    inputs_key=task.key, run_seed=int(seed), star_id=task.star_id,
                    checksum=outcome.get("checksum"), size=outcome.get("size"),
                    mtime_ns=outcome.get("mtime_ns"), result_json=outcome.get("result_json"),
                    error_class=outcome.get("error_class"),
                    error_message=outcome.get("error_message"),
                    seconds=float(outcome.get("seconds") or 0.0),
                    worker=str(outcome.get("worker") or ""),
                )
                bar.update(ledger.record(rec).status)
        except _Terminated:
            raise KeyboardInterrupt("terminated") from None
        finally:
            bar.close()
        summary = summarize_ledger(ledger, [t.path for t in tasks])
        summary.n_run, summary.n_resumed = len(todo), n_resumed
        summary.seconds = time.monotonic() - started
        summary.executor = executor.describe() if hasattr(executor, "describe") else str(
            executor)
        if catalog is not None:
            from .catalog import write_catalog

            write_catalog(ledger, catalog)
        return summary
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)
        if own_ledger:
            ledger.close()


def threadsafe_main() -> bool:
    """True when signal handlers can be installed (the main thread of the process)."""
    import threading

    return threading.current_thread() is threading.main_thread()
