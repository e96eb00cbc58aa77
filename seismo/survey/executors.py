"""Where the stars are analysed: local worker processes or a Dask cluster.

Every executor takes `Job`\\ s and yields one outcome dict per job as jobs
finish (in completion order), whatever happened to the job: the per-star
function `analyze_one` never raises, a star over its time limit becomes a
failed outcome, and a job whose worker died is run again (up to
``max_attempts`` times) before it is reported as failed.
"""

from __future__ import annotations

import concurrent.futures as cf
import hashlib
import multiprocessing
import os
import signal
import socket
import threading
import time
from collections import deque
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, replace
from typing import Any

from ..config import AnalysisConfig, StarInputs

__all__ = ["Job", "analyze_one", "star_seed", "SerialExecutor", "LocalExecutor", "DaskExecutor",
           "StarTimeoutError", "WorkerLostError", "QUIET_WORKER_CONFIG"]


class StarTimeoutError(BaseException):
    """The analysis of one star took longer than the per-star time limit.

    Derived from BaseException, like KeyboardInterrupt, because it is raised by a
    timer signal anywhere in the analysis: code that turns any Exception into its own
    error (the light-curve readers, third-party libraries) must not swallow it.
    """


class WorkerLostError(RuntimeError):
    """The process analysing a star died (killed, out of memory, crashed)."""


@dataclass(frozen=True)
class Job:
    """Arguments of one call of `analyze_one` (picklable).

    Attributes
    ----------
    path : str
        Light-curve file.
    config : AnalysisConfig
        Configuration, with ``read.star_id`` set when the inputs name the star.
    inputs : StarInputs
        Per-star inputs.
    run_seed : int
        Seed of the run.
    timeout : float or None
        Per-star time limit, s.
    """

    path: str
    config: AnalysisConfig
    inputs: StarInputs
    run_seed: int
    timeout: float | None = None


def star_seed(run_seed: int, checksum: str) -> int:
    """Seed of one star, derived from the run seed and the file's checksum.

    Parameters
    ----------
    run_seed : int
        Seed of the whole run.
    checksum : str
        ``"sha256:<hex>"`` of the input file.

    Returns
    -------
    int
        A 63-bit seed: the same file in the same run always gets the same
        seed, on any machine and in any order.
    """
    digest = hashlib.sha256(f"{int(run_seed)}|{checksum}".encode()).digest()
    return int.from_bytes(digest[:8], "little") >> 1


def _on_alarm(signum: int, frame: Any) -> None:
    raise StarTimeoutError("timed out")


def _worker_name() -> str:
    return f"{socket.gethostname()}:{os.getpid()}"


def _failure(path: str, error_class: str, message: str, started: float, **extra: Any
             ) -> dict[str, Any]:
    return {"path": path, "status": "failed", "checksum": None, "result_json": None,
            "error_class": error_class, "error_message": " ".join(str(message).split()),
            "seconds": time.perf_counter() - started, "worker": _worker_name(), **extra}


def analyze_one(path: str, config: AnalysisConfig, inputs: StarInputs, seed: int,
                timeout: float | None = None) -> dict[str, Any]:
    """Analyse one star and describe the outcome; never raises.

    Parameters
    ----------
    path : str
        Light-curve file.
    config : AnalysisConfig
        Configuration of the run.
    inputs : StarInputs
        Teff (K), its error (K), [Fe/H] (dex).
    seed : int
        Run seed; the star's seed is ``star_seed(seed, checksum)``, and both
        go into the result's provenance (``run_seed``, ``seed``).
    timeout : float, optional
        Time limit, s. Enforced with a timer signal when called in a
        process's main thread (the local executor); ignored otherwise.

    Returns
    -------
    dict
        ``path``, ``status`` (``"done"`` or ``"failed"``), ``checksum``,
        ``size`` and ``mtime_ns`` of the file, ``result_json`` (done),
        ``error_class`` and ``error_message`` (failed: the exception's class
        name and one-line message), ``seconds`` (wall time) and ``worker``
        (``host:pid``).
    """
    from ..pipeline import analyze, file_checksum

    started = time.perf_counter()
    use_alarm = (timeout is not None and timeout > 0
                 and threading.current_thread() is threading.main_thread()
                 and hasattr(signal, "setitimer"))
    stat: dict[str, Any] = {}
    try:
        if use_alarm:
            signal.signal(signal.SIGALRM, _on_alarm)
            signal.setitimer(signal.ITIMER_REAL, float(timeout))
        try:
            info = os.stat(path)
            stat = {"size": info.st_size, "mtime_ns": info.st_mtime_ns}
            checksum = file_checksum(path)
            stat["checksum"] = checksum
            child = star_seed(seed, checksum)
            result = analyze(path, config, inputs, rng=child).result
            provenance = {**result.provenance, "seed": child, "run_seed": int(seed)}
            result = replace(result, provenance=provenance)
            text = result.to_json()
        finally:
            if use_alarm:
                signal.setitimer(signal.ITIMER_REAL, 0)
    except StarTimeoutError:
        return _failure(path, "StarTimeoutError",
                        f"analysis exceeded the time limit of {timeout:g} s", started, **stat)
    except BaseException as err:  # noqa: BLE001 - one bad star must not stop the run
        if isinstance(err, (KeyboardInterrupt, SystemExit)):
            raise
        message = err.one_line() if hasattr(err, "one_line") else str(err)
        return _failure(path, type(err).__name__, message or repr(err), started, **stat)
    return {"path": path, "status": "done", "result_json": text, "error_class": None,
            "error_message": None, "seconds": time.perf_counter() - started,
            "worker": _worker_name(), **stat}


def _run_job(job: Job) -> dict[str, Any]:
    return analyze_one(job.path, job.config, job.inputs, job.run_seed, job.timeout)


def _watch_parent(parent: int) -> None:
    while os.getppid() == parent:
        time.sleep(1.0)
    os._exit(1)


def _worker_init(parent: int) -> None:
    # Ctrl-C reaches the whole process group; only the submitting process reacts.
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)  # not the submitter's handler, if forked
    # A worker outlives a submitting process killed with kill -9 unless it notices.
    threading.Thread(target=_watch_parent, args=(parent,), daemon=True).start()


class SerialExecutor:
    """Run jobs one after the other in this process (debugging, tests, tiny runs).

    The per-star time limit is enforced by the timer signal only, so a star
    stuck in compiled code is not interrupted.
    """

    workers = 1

    def describe(self) -> str:
        """One line naming the executor."""
        return "this process, serially"

    def results(self, jobs: Iterable[Job]) -> Iterator[dict[str, Any]]:
        """Run ``jobs``; yield one outcome per job (see `LocalExecutor.results`)."""
        for job in jobs:
            yield _run_job(job)


#: Dask settings for the workers of a local cluster: each worker's event loop otherwise
#: wakes every 10-20 ms (statistical profiler, loop-blocking tick) and samples the system
#: every 0.5 s, which on a machine with as many workers as cores takes ~15 % from the
#: analyses (measured with benchmarks/survey.py). Seismo's tasks are seconds long, so
#: coarse monitoring loses nothing; the memory monitor still runs every 2 s.
QUIET_WORKER_CONFIG: dict[str, Any] = {
    "distributed.worker.profile.enabled": False,
    "distributed.admin.tick.interval": "1s",
    "distributed.admin.system-monitor.interval": "10s",
    "distributed.worker.memory.monitor-interval": "2s",
}

#: Environment variables that make numerical libraries single-threaded in workers.
_THREAD_VARIABLES = ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS")


class LocalExecutor:
    """Run jobs on local worker processes.

    Parameters
    ----------
    workers : int, optional
        Number of processes; default the number of cores.
    max_attempts : int
        Times a job is started before a dying worker makes it a failure.
    grace : float
        Seconds past a job's time limit after which its worker process is
        killed (a star stuck in compiled code cannot be interrupted by the
        timer signal); the other jobs in flight are started again.

    Notes
    -----
    Workers are started with the "spawn" method, so a script that calls
    `run_survey` must do so under ``if __name__ == "__main__":``. Each
    worker's numerical libraries run single-threaded (``OMP_NUM_THREADS`` and
    friends default to 1 in the workers). At most ``workers`` jobs are in
    flight, so a job starts as soon as it is submitted and its time limit is
    measured from submission.
    """

    def __init__(self, workers: int | None = None, *, max_attempts: int = 2,
                 grace: float = 10.0) -> None:
        self.workers = max(1, int(workers or os.cpu_count() or 1))
        self.max_attempts = max(1, int(max_attempts))
        self.grace = float(grace)
        self._pool: cf.ProcessPoolExecutor | None = None

    def describe(self) -> str:
        """One line naming the executor."""
        return f"{self.workers} local worker process{'es' if self.workers > 1 else ''}"

    def _new_pool(self) -> cf.ProcessPoolExecutor:
        # "spawn", so that each worker loads its numerical libraries afresh, single-
        # threaded (see `_submit`); a forked worker would inherit the threads of the
        # submitting process and N workers would oversubscribe the cores.
        return cf.ProcessPoolExecutor(self.workers, mp_context=multiprocessing.get_context("spawn"),
                                      initializer=_worker_init, initargs=(os.getpid(),))

    def _kill_pool(self) -> None:
        pool, self._pool = self._pool, None
        if pool is None:
            return
        # ProcessPoolExecutor cannot cancel a running call: end its processes.
        for process in list(getattr(pool, "_processes", {}).values()):
            try:
                process.kill()
            except Exception:  # noqa: BLE001 - already gone
                pass
        pool.shutdown(wait=False, cancel_futures=True)

    def _submit(self, job: Job) -> cf.Future:
        # Worker processes start on demand inside submit() and take this environment.
        saved = {name: os.environ.get(name) for name in _THREAD_VARIABLES}
        for name in _THREAD_VARIABLES:
            os.environ.setdefault(name, "1")
        try:
            if self._pool is None:
                self._pool = self._new_pool()
            return self._pool.submit(_run_job, job)
        finally:
            for name, value in saved.items():
                if value is None:
                    os.environ.pop(name, None)

    def results(self, jobs: Iterable[Job]) -> Iterator[dict[str, Any]]:
        """Run ``jobs``; yield one outcome per job as it finishes.

        Parameters
        ----------
        jobs : iterable of Job
            Consumed lazily.

        Yields
        ------
        dict
            The outcome of `analyze_one` (or a failure outcome for a job over
            its time limit or whose worker died ``max_attempts`` times).
        """
        queue: deque[tuple[Job, int]] = deque()
        source = iter(jobs)
        inflight: dict[cf.Future, tuple[Job, int, float]] = {}
        self._pool = self._new_pool()
        breaks = 0  # pool breaks since the last finished job
        try:
            while True:
                while len(inflight) < self.workers:
                    if queue:
                        job, attempt = queue.popleft()
                    else:
                        job = next(source, None)
                        attempt = 1
                        if job is None:
                            break
                    future = self._submit(job)
                    inflight[future] = (job, attempt, time.monotonic())
                if not inflight:
                    return
                done, _ = cf.wait(inflight, timeout=0.5, return_when=cf.FIRST_COMPLETED)
                broken = False
                for future in done:
                    job, attempt, started = inflight.pop(future)
                    try:
                        outcome = future.result()
                    except cf.process.BrokenProcessPool:
                        broken = True
                        if attempt >= self.max_attempts:
                            yield _failure(job.path, "WorkerLostError",
                                           f"worker process died while analysing the star "
                                           f"({attempt} attempts)", time.perf_counter())
                        else:
                            queue.append((job, attempt + 1))
                    else:
                        breaks = 0
                        yield outcome
                if broken:
                    breaks += 1
                    if breaks > 3:
                        raise WorkerLostError(
                            "worker processes keep dying before finishing any star (a script "
                            "that starts a survey needs 'if __name__ == \"__main__\":'); run "
                            "with executor 'serial' to see why")
                stuck = [f for f, (job, _, t0) in inflight.items()
                         if job.timeout and time.monotonic() - t0 > job.timeout + self.grace]
                if stuck or broken:
                    for future in stuck:
                        job, attempt, t0 = inflight.pop(future)
                        yield _failure(job.path, "StarTimeoutError",
                                       f"analysis exceeded the time limit of {job.timeout:g} s "
                                       "(worker killed)", time.perf_counter())
                    # Innocent jobs in flight on the killed or broken pool start again.
                    for job, attempt, _ in inflight.values():
                        queue.appendleft((job, attempt))
                    inflight.clear()
                    self._kill_pool()
                    self._pool = self._new_pool()
        finally:
            self._kill_pool()


class DaskExecutor:
    """Run jobs on a Dask distributed cluster.

    Parameters
    ----------
    address : str
        Scheduler address (``"tcp://host:8786"``), or ``"local"`` to start a
        `distributed.LocalCluster` of worker processes on this machine.
    workers : int, optional
        Worker processes of the local cluster (default the number of cores).
    max_in_flight : int, optional
        Jobs submitted ahead of the results; default four per worker thread
        (at least 16), so a run of 10^6 stars does not flood the scheduler.

    Notes
    -----
    Dask reschedules the tasks of a lost worker on another worker (up to
    the scheduler's ``allowed-failures``); a task that keeps killing workers
    comes back as a failed ``WorkerLostError`` outcome. Dask runs tasks in
    threads, where the timer signal is not available: a star over its time
    limit is recorded as failed and the run moves on, but the worker thread
    stays busy until the star finishes.
    """

    def __init__(self, address: str, workers: int | None = None,
                 max_in_flight: int | None = None) -> None:
        self.address = address
        self.workers = max(1, int(workers or os.cpu_count() or 1))
        self.max_in_flight = max_in_flight

    def describe(self) -> str:
        """One line naming the executor."""
        if self.address == "local":
            return f"Dask LocalCluster with {self.workers} worker processes"
        return f"Dask cluster at {self.address}"

    def _connect(self) -> tuple[Any, Any]:
        try:
            from distributed import Client, LocalCluster
        except ImportError:
            from ..errors import OptionError

            raise OptionError("the Dask executor needs dask.distributed; install seismo[dask] "
                              "(pip install 'seismo[dask]')") from None
        if self.address == "local":
            # As for the local executor: single-threaded numerical libraries in each
            # worker process, or two workers oversubscribe two cores.
            saved = {name: os.environ.get(name) for name in _THREAD_VARIABLES}
            for name in _THREAD_VARIABLES:
                os.environ.setdefault(name, "1")
            try:
                import dask

                # Dask asks glibc to return freed memory eagerly (a 64 kB trim
                # threshold); each star allocates and frees many large arrays, so that
                # costs page faults on every stage. Use glibc's default instead.
                environ = dict(dask.config.get("distributed.nanny.pre-spawn-environ", {}))
                environ.pop("MALLOC_TRIM_THRESHOLD_", None)
                with dask.config.set({"distributed.nanny.pre-spawn-environ": environ,
                                      **QUIET_WORKER_CONFIG}):
                    cluster = LocalCluster(n_workers=self.workers, threads_per_worker=1,
                                           processes=True, host="127.0.0.1",
                                           dashboard_address=None)
            finally:
                for name, value in saved.items():
                    if value is None:
                        os.environ.pop(name, None)
                    else:
                        os.environ[name] = value
            return cluster, Client(cluster)
        return None, Client(self.address)

    def results(self, jobs: Iterable[Job]) -> Iterator[dict[str, Any]]:
        """Run ``jobs`` on the cluster; yield one outcome per job as it finishes.

        See `LocalExecutor.results`.
        """
        from distributed import wait
        from distributed.scheduler import KilledWorker

        cluster, client = self._connect()
        try:
            threads = sum(client.nthreads().values()) or 1
            limit = self.max_in_flight or max(16, 4 * threads)
            source = iter(jobs)
            meta: dict[Any, tuple[Job, float]] = {}

            def submit() -> None:
                while len(meta) < limit:
                    job = next(source, None)
                    if job is None:
                        return
                    meta[client.submit(_run_job, job, pure=False)] = (job, time.monotonic())

            submit()
            while meta:
                try:
                    done, _ = wait(list(meta), timeout=0.5, return_when="FIRST_COMPLETED")
                except TimeoutError:
                    done = set()
                for future in done:
                    job, _ = meta.pop(future)
                    try:
                        yield future.result()
                    except KilledWorker as err:
                        yield _failure(job.path, "WorkerLostError",
                                       f"workers died while analysing the star ({err})",
                                       time.perf_counter())
                    except Exception as err:  # noqa: BLE001 - e.g. a lost connection
                        yield _failure(job.path, type(err).__name__, str(err),
                                       time.perf_counter())
                now = time.monotonic()
                for future, (job, t0) in list(meta.items()):
                    # Time in the scheduler's queue counts too, hence the margin.
                    if job.timeout and now - t0 > job.timeout * 4 + 30:
                        meta.pop(future)
                        future.cancel()
                        yield _failure(job.path, "StarTimeoutError",
                                       f"analysis exceeded the time limit of {job.timeout:g} s",
                                       time.perf_counter())
                submit()
        finally:
            client.close()
            if cluster is not None:
                cluster.close()

