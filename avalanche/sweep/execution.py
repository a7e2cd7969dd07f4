"""Batch sweeps: every grid point of a run file computed as an independent task, on local worker processes (one per
core by default) or on a Dask cluster, and committed point by point into a crash-safe results file.

Each point's seed comes from the master seed and the point's coordinates (:func:`avalanche.sweep.runfile.point_seed`),
and each point runs on a fixed number of numba threads, so the numbers do not depend on the number of workers, on
Dask, or on the order in which points finish. A worker process that dies (killed, out of memory, crashed) has its
point retried on a fresh worker up to ``max_retries`` times, after which the point is recorded as failed with the
reason and the sweep goes on; an exception raised by the computation itself is deterministic and fails the point at
once. Failures go to stderr and to ``<output>.failures.log``.
"""

from __future__ import annotations

import contextlib
import ctypes
import datetime as _dt
import multiprocessing
import multiprocessing.connection
import os
import signal
import socket
import sys
import threading
import time
import traceback
import uuid
import warnings
from collections import deque
from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass, field
from functools import partial
from pathlib import Path
from typing import Any

from ..errors import AvalancheError, ConfigError
from ..store.sweep_file import ResultsWriter, headline_values
from .gap_sweep import GapRunFile, load_sweep_runfile
from .runfile import DEFAULT_MODE, MixtureSpec, RunFile

DEFAULT_MAX_RETRIES = 2
"""A point whose worker process dies is tried at most 1 + DEFAULT_MAX_RETRIES times."""


def default_workers() -> int:
    """Number of cores available to this process (one worker per core)."""
    try:
        return len(os.sched_getaffinity(0))
    except AttributeError:  # pragma: no cover - not Linux
        return os.cpu_count() or 1


# ------------------------------------------------------------------------------------------------- the task

def _set_numba_threads(threads: int) -> None:
    import numba

    numba.set_num_threads(max(1, min(int(threads), numba.config.NUMBA_NUM_THREADS)))


def point_task(runfile: RunFile, point, threads: int | None = 1) -> dict:
    """The plain-data task of one grid point, as sent to a worker (see :func:`compute_point`)."""
    mixture = runfile.mixtures[point.mixture_index]
    species = runfile.mixture_checksums[point.mixture_index]
    return {"index": point.index, "mixture": {"composition": mixture.composition, "parameters": mixture.parameters,
                                              "penning": mixture.penning},
            "temperature_K": runfile.temperature_K, "pressure_Pa": runfile.pressure_Pa,
            "number_density_m3": runfile.number_density_m3, "reduced_field_Td": point.reduced_field_Td,
            "frequency_Hz": point.frequency_Hz, "mode": runfile.mode, "seed": point.seed,
            "engine": dict(runfile.engine), "checksums": species, "threads": threads,
            "magnetic": point.magnetic_options(runfile.magnetic_unit)}


def compute_point(task: dict) -> dict:
    """Compute one grid point with :func:`avalanche.engine.time_of_flight.swarm`, or :func:`avalanche.sst.townsend` in
    steady-state-townsend mode (runs on a worker).

    Parameters
    ----------
    task : dict
        From :func:`point_task`.

    Returns
    -------
    dict
        ``result`` (the ``SwarmResult`` or ``TownsendResult``) and ``warnings`` (the distinct warning messages
        the run raised).

    Raises
    ------
    ConfigError
        When the worker's cross sections differ from the coordinator's (another installation or library).
    """
    from ..engine.time_of_flight import swarm

    run = swarm
    if task.get("threads"):
        _set_numba_threads(task["threads"])
    spec = MixtureSpec(**task["mixture"])
    mixture = spec.build(task["temperature_K"], task["pressure_Pa"], task["number_density_m3"])
    if mixture.checksums() != task["checksums"]:
        raise ConfigError(f"the cross sections on worker {socket.gethostname()} differ from the coordinator's "
                          f"({mixture.checksums()} vs {task['checksums']}); install the same avalanche and gas "
                          "library on every node")
    options = dict(task["engine"])
    if task["frequency_Hz"]:
        options["frequency_Hz"] = task["frequency_Hz"]
    options.update(task.get("magnetic") or {})
    if task["mode"] == "steady-state-townsend":
        from ..engine.townsend import townsend as run
    elif task["mode"] != DEFAULT_MODE:
        options["mode"] = task["mode"]
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = run(mixture, task["reduced_field_Td"], seed=task["seed"], **options)
    messages = list(dict.fromkeys(f"{w.category.__name__}: {w.message}" for w in caught))
    return {"result": result, "warnings": messages}


# ------------------------------------------------------------------------------------------------ executors

@dataclass
class Outcome:
    """The end of one task: its value, or why it failed."""

    key: Any
    ok: bool
    value: Any = None
    reason: str = ""
    detail: str = ""
    attempts: int = 1
    wall_seconds: float = float("nan")
    worker: str = ""


def _worker_name() -> str:
    return f"{socket.gethostname()}:{os.getpid()}"


def run_task(fn: Callable, payload) -> tuple[Any, float, str]:
    """Run ``fn(payload)``; return ``(value, wall_seconds, worker)`` (worker = ``host:pid``)."""
    start = time.perf_counter()
    value = fn(payload)
    return value, time.perf_counter() - start, _worker_name()


def _describe(exc: BaseException) -> tuple[str, str]:
    return f"{type(exc).__name__}: {exc}", "".join(traceback.format_exception(exc))


def _die_with_parent(parent_pid: int) -> None:
    """End this worker when the coordinator is gone (e.g. killed with SIGKILL)."""
    if sys.platform.startswith("linux"):
        with contextlib.suppress(OSError, AttributeError):
            ctypes.CDLL(None, use_errno=True).prctl(1, signal.SIGKILL)  # PR_SET_PDEATHSIG

    def watch():
        while os.getppid() == parent_pid:
            time.sleep(0.5)
        os._exit(1)

    threading.Thread(target=watch, daemon=True).start()


def _worker_main(conn, parent_pid: int) -> None:
    """Loop of a local worker process: receive ``(key, fn, payload)``, send back the outcome."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # the coordinator handles Ctrl-C and stops the workers
    _die_with_parent(parent_pid)
    while True:
        try:
            message = conn.recv()
        except (EOFError, OSError):
            return
        if message is None:
            return
        key, fn, payload = message
        try:
            value, seconds, worker = run_task(fn, payload)
            conn.send(("ok", key, value, seconds, worker))
        except Exception as exc:  # reported to the coordinator, which records the point as failed
            conn.send(("error", key, *_describe(exc), _worker_name()))


def _death(exitcode: int | None) -> str:
    if exitcode is None:
        return "no exit status"
    if exitcode < 0:
        try:
            return f"killed by {signal.Signals(-exitcode).name}"
        except ValueError:
            return f"killed by signal {-exitcode}"
    return f"exit code {exitcode}"


class LocalPool:
    """Worker processes on this machine, started fresh (``spawn``), one task at a time each.

    Parameters
    ----------
    workers : int
        Number of worker processes.
    threads_per_worker : int, optional
        Sets ``NUMBA_NUM_THREADS`` (and ``OMP_NUM_THREADS``) of each worker; None leaves the environment alone.
    max_retries : int
        A task whose worker process dies is given to a fresh worker at most this many more times.
    """

    def __init__(self, workers: int, *, threads_per_worker: int | None = 1, max_retries: int = DEFAULT_MAX_RETRIES):
        if int(workers) < 1:
            raise ConfigError(f"workers = {workers}: give at least 1 worker process")
        if int(max_retries) < 0:
            raise ConfigError(f"max_retries = {max_retries} must be >= 0")
        self.workers = int(workers)
        self.threads_per_worker = threads_per_worker
        self.max_retries = int(max_retries)
        self._context = multiprocessing.get_context("spawn")
        self.description = f"{self.workers} local worker process{'es' if self.workers > 1 else ''}"

    def _start(self):
        parent, child = self._context.Pipe()
        env = {}
        if self.threads_per_worker:
            env = {"NUMBA_NUM_THREADS": str(self.threads_per_worker), "OMP_NUM_THREADS": str(self.threads_per_worker)}
        saved = {k: os.environ.get(k) for k in env}
        os.environ.update(env)  # a spawned child copies the environment at start
        try:
            process = self._context.Process(target=_worker_main, args=(child, os.getpid()), daemon=True,
                                            name="avalanche-worker")
            process.start()
        finally:
            for k, v in saved.items():
                if v is None:
                    os.environ.pop(k, None)
                else:
                    os.environ[k] = v
        child.close()
        return {"process": process, "conn": parent, "task": None, "started": 0.0}

    def map_unordered(self, fn: Callable, tasks: Iterable[tuple[Any, Any]]) -> Iterator[Outcome]:
        """Run ``fn(payload)`` for every ``(key, payload)``; yield an :class:`Outcome` per task as each ends.

        ``fn`` must be importable by name (a module-level function), since workers are fresh processes.
        """
        queue = deque((key, payload, 0) for key, payload in tasks)
        if not queue:
            return
        pool = [self._start() for _ in range(min(self.workers, len(queue)))]
        try:
            while queue or any(w["task"] is not None for w in pool):
                for i, w in enumerate(pool):
                    if w["task"] is None and queue:
                        if not w["process"].is_alive():  # ended while idle: replace it, no task is lost
                            w["conn"].close()
                            w = pool[i] = self._start()
                        key, payload, deaths = queue.popleft()
                        w["task"] = (key, payload, deaths)
                        w["started"] = time.perf_counter()
                        w["conn"].send((key, fn, payload))
                busy = [w for w in pool if w["task"] is not None]
                ready = multiprocessing.connection.wait([w["conn"] for w in busy] +
                                                        [w["process"].sentinel for w in busy])
                for i, w in enumerate(pool):
                    if w["task"] is None or (w["conn"] not in ready and w["process"].sentinel not in ready):
                        continue
                    outcome = self._receive(w)
                    if outcome is None:  # the worker died: replace it, retry or fail its task
                        key, payload, deaths = w["task"]
                        w["process"].join(timeout=5)
                        how = _death(w["process"].exitcode)
                        w["conn"].close()
                        pool[i] = self._start()
                        deaths += 1
                        if deaths <= self.max_retries:
                            queue.appendleft((key, payload, deaths))
                            continue
                        outcome = Outcome(key=key, ok=False, attempts=deaths,
                                          reason=f"worker process died ({how}) in each of {deaths} attempt"
                                                 f"{'s' if deaths > 1 else ''}",
                                          wall_seconds=time.perf_counter() - w["started"])
                    else:
                        w["task"] = None
                    yield outcome
        finally:
            self._stop(pool)

    def _receive(self, w) -> Outcome | None:
        """The outcome a worker sent, or None when it died instead."""
        key, _, deaths = w["task"]
        try:
            if not w["conn"].poll():
                return None
            message = w["conn"].recv()
        except (EOFError, OSError):
            return None
        if message[0] == "ok":
            _, _, value, seconds, worker = message
            return Outcome(key=key, ok=True, value=value, attempts=deaths + 1, wall_seconds=seconds, worker=worker)
        _, _, reason, detail, worker = message
        return Outcome(key=key, ok=False, reason=reason, detail=detail, attempts=deaths + 1,
                       wall_seconds=time.perf_counter() - w["started"], worker=worker)

    @staticmethod
    def _stop(pool) -> None:
        for w in pool:
            if w["task"] is None and w["process"].is_alive():
                with contextlib.suppress(OSError):
                    w["conn"].send(None)
        deadline = time.monotonic() + 5.0
        for w in pool:
            w["process"].join(timeout=max(0.0, deadline - time.monotonic()))
            if w["process"].is_alive():
                w["process"].terminate()
                w["process"].join(timeout=5)
            w["conn"].close()


class DaskExecutor:
    """Tasks on a Dask distributed cluster through a ``distributed.Client``.

    A worker that dies is handled by the scheduler: it reschedules the task on another worker, at most
    ``distributed.scheduler.allowed-failures`` times (Dask's setting, default 3), then reports the task as
    failed (``KilledWorker``), which becomes the point's failure reason. Exceptions raised by the computation
    fail the point at once.
    """

    def __init__(self, client):
        self.client = client
        self.description = f"Dask scheduler {client.scheduler.address}"

    def map_unordered(self, fn: Callable, tasks: Iterable[tuple[Any, Any]]) -> Iterator[Outcome]:
        """As :meth:`LocalPool.map_unordered`."""
        from distributed import as_completed

        token = uuid.uuid4().hex[:12]
        futures = {}
        for key, payload in tasks:
            future = self.client.submit(run_task, fn, payload, key=f"avalanche-point-{token}-{key}", pure=False,
                                        retries=0)
            futures[future] = key
        if not futures:
            return
        try:
            for future in as_completed(list(futures)):
                key = futures.pop(future)
                if future.status == "finished":
                    value, seconds, worker = future.result()
                    yield Outcome(key=key, ok=True, value=value, wall_seconds=seconds, worker=worker)
                else:
                    exc = future.exception()
                    reason, detail = _describe(exc)
                    if type(exc).__name__ == "KilledWorker":
                        reason = f"Dask worker died while computing the point, on every allowed attempt ({exc})"
                    yield Outcome(key=key, ok=False, reason=reason, detail=detail)
                future.release()
        finally:
            for future in futures:
                future.cancel()


def dask_client(scheduler: str, timeout_s: float = 30.0):
    """A ``distributed.Client`` for a scheduler address (``tcp://host:8786``) or a scheduler file (JSON),
    waiting at most ``timeout_s`` [s] for the connection."""
    try:
        from distributed import Client
    except ImportError:
        raise AvalancheError("--scheduler needs Dask distributed: pip install \"avalanche[cluster]\"") from None
    try:
        if Path(scheduler).is_file():
            return Client(scheduler_file=scheduler, timeout=timeout_s)
        return Client(scheduler, timeout=timeout_s)
    except (OSError, TimeoutError) as exc:
        raise AvalancheError(f"cannot reach the Dask scheduler at '{scheduler}': {exc}; check the address "
                             "(tcp://HOST:PORT) or the scheduler file") from None


def jobqueue_cluster(settings: dict, directives: tuple[str, ...] = (), prologue: tuple[str, ...] = ()):
    """A dask-jobqueue cluster (Slurm or PBS) from a run file's ``[cluster]`` table, not yet scaled.

    Parameters
    ----------
    settings : dict
        :attr:`avalanche.sweep.runfile.RunFile.cluster`: ``kind``, ``cores``, ``processes``, ``memory``,
        ``walltime``, optional ``queue`` and ``account``, and ``options`` passed on to the cluster class.
    directives, prologue : tuple of str
        Batch-system directive lines and shell lines run before the worker starts, given on the command line
        (``--job-directive``, ``--job-prologue``); a run file cannot add job-script lines.
    """
    try:
        import dask_jobqueue
    except ImportError:
        raise AvalancheError("--cluster needs dask-jobqueue: pip install \"avalanche[cluster]\"") from None
    cls = {"slurm": dask_jobqueue.SLURMCluster, "pbs": dask_jobqueue.PBSCluster}[settings["kind"]]
    kwargs = {k: settings[k] for k in ("cores", "processes", "memory", "walltime", "queue", "account")
              if k in settings}
    kwargs.update(settings.get("options", {}))
    for name, lines in (("job_extra_directives", directives), ("job_script_prologue", prologue)):
        if any("\n" in line or "\r" in line for line in lines):
            raise ConfigError(f"--{name}: give one line per flag (no line breaks)")
        if lines:
            kwargs[name] = list(lines)
    try:
        return cls(**kwargs)
    except (TypeError, ValueError) as exc:
        raise ConfigError(f"[cluster]: dask-jobqueue rejected the settings {kwargs}: {exc}") from None


# ---------------------------------------------------------------------------------------------------- the sweep

@dataclass
class SweepReport:
    """What a sweep did, and how long it took.

    Attributes
    ----------
    path : Path
        The results file.
    points, computed, skipped : int
        Grid points; points finished in this run; points already finished in the file (``--resume``).
    failed : list of dict
        ``index``, ``reason``, ``attempts`` of the points that failed in this run.
    not_converged : list of dict
        ``index`` and ``notes`` of the points computed in this run whose result is marked not converged (not
        relaxed, or a NaN estimate; see ``SwarmResult.converged``). They are stored, and counted apart.
    wall_seconds : float
        Wall-clock time of the whole sweep [s] (start-up of workers included).
    compute_seconds : float
        Sum of the points' wall-clock times on their workers [s].
    cpu_seconds : float
        Sum of the results' ``cpu_seconds`` [s].
    events : int
        Sum of the results' ``events``.
    executor : str
        Where the points ran.
    point_seconds : dict
        Point index → wall-clock time on its worker [s].
    """

    path: Path
    points: int
    computed: int = 0
    skipped: int = 0
    failed: list = field(default_factory=list)
    not_converged: list = field(default_factory=list)
    wall_seconds: float = 0.0
    compute_seconds: float = 0.0
    cpu_seconds: float = 0.0
    events: int = 0
    executor: str = ""
    point_seconds: dict = field(default_factory=dict)

    @property
    def complete(self) -> bool:
        """True when every point of the grid is finished."""
        return self.computed + self.skipped == self.points

    def summary(self) -> str:
        """One line: points computed, already done and failed, the wall-clock time and the file."""
        unconverged = f" ({len(self.not_converged)} of them not converged)" if self.not_converged else ""
        return (f"{self.computed} computed, {self.skipped} already done, {len(self.failed)} failed, of {self.points} "
                f"points{unconverged}, in {self.wall_seconds:.1f} s -> {self.path}")


def _progress_text(runfile: RunFile, point, result) -> str:
    """The latest point's headline numbers for the progress bar."""
    parts = []
    if len(runfile.mixtures) > 1:
        parts.append(runfile.mixtures[point.mixture_index].label)
    if len(runfile.frequencies_Hz) > 1 or runfile.frequencies_Hz[0]:
        parts.append(f"{point.frequency_Hz:.4g} Hz")
    if runfile.magnetic:
        parts.append(f"B {point.magnetic_field:.4g} {runfile.magnetic_unit} at {point.field_angle_deg:g} deg")
    parts.append(f"E/N {point.reduced_field_Td:.4g} Td")
    values = headline_values(result)
    for name, short in (("mean_energy_eV", "<eps>"), ("drift_velocity_bulk", "W"), ("alpha_N", "alpha/N"),
                        ("eta_N", "eta/N")):
        if name in values and (name not in ("alpha_N", "eta_N") or values[name][0]):
            value, _, units = values[name]
            parts.append(f"{short} {value:.4g} {units}")
    return "  ".join(parts)


def _log_failure(log_path: Path, runfile: RunFile, point, outcome: Outcome) -> str:
    if isinstance(runfile, GapRunFile):
        coordinates = f"{runfile.describe_point(point)}, "
    else:
        mixture = runfile.mixtures[point.mixture_index].label
        magnetic = (f"magnetic field {point.magnetic_field:g} {runfile.magnetic_unit} at "
                    f"{point.field_angle_deg:g} deg, " if runfile.magnetic else "")
        coordinates = (f"mixture {mixture}, E/N {point.reduced_field_Td:g} Td, frequency {point.frequency_Hz:g} Hz, "
                       f"{magnetic}")
    line = (f"point {point.index} ({coordinates}seed {point.seed}) failed after {outcome.attempts} attempt"
            f"{'s' if outcome.attempts != 1 else ''}: {outcome.reason}")
    stamp = _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")
    try:
        with open(log_path, "a") as log:
            log.write(f"{stamp} {line}\n")
            if outcome.detail:
                log.write("".join(f"    {row}\n" for row in outcome.detail.rstrip().splitlines()))
    except OSError as exc:
        from ..store.files import disk_error

        raise disk_error(exc, log_path, "logging a failed point (the results file holds the failure)") from None
    return line


def run_sweep(runfile: str | Path | RunFile, *, workers: int | None = None, scheduler: str | None = None,
              cluster: bool = False, out: str | Path | None = None, resume: bool = False, quiet: bool = False,
              threads_per_worker: int = 1, max_retries: int = DEFAULT_MAX_RETRIES,
              executor=None, compute: Callable = compute_point, job_directives: tuple[str, ...] = (),
              job_prologue: tuple[str, ...] = ()) -> SweepReport:
    """Compute every missing point of a run file's grid and commit each into the results file as it finishes.

    Parameters
    ----------
    runfile : str, Path or RunFile
        The run file (validated before anything is computed).
    workers : int, optional
        Local worker processes; default one per core (:func:`default_workers`), at most one per point.
    scheduler : str, optional
        A Dask scheduler address (``tcp://host:8786``) or scheduler file; the points then run on that cluster.
    cluster : bool
        Start the dask-jobqueue cluster of the run file's ``[cluster]`` table and run the points on it.
    out : str or Path, optional
        The results file; default the run file's ``[sweep] output``.
    resume : bool
        Continue an existing results file: only points not finished yet (missing, interrupted or failed) are
        computed. Refused when the run file's configuration or the cross sections changed.
    quiet : bool
        No progress bar (failures are still written under the bar on stderr and logged); the command line
        prints :meth:`SweepReport.summary` unless quiet.
    threads_per_worker : int
        numba threads of each point's computation (results do not depend on it); default 1.
    max_retries : int
        Local workers: a point whose worker process dies is retried at most this many times.
    executor : optional
        An object with ``map_unordered(fn, tasks)`` and ``description`` (e.g. a :class:`LocalPool` or
        :class:`DaskExecutor` you configured); overrides ``workers``, ``scheduler`` and ``cluster``.
    job_directives, job_prologue : tuple of str
        With ``cluster``: batch-system directive lines and shell lines added to the job script (the command line's
        ``--job-directive`` and ``--job-prologue``; a run file cannot add them).
    compute : callable
        The per-point computation, a module-level function of :func:`point_task`'s dict returning
        ``{"result": ..., "warnings": [...]}``; default :func:`compute_point` (the engine).

    Returns
    -------
    SweepReport

    Raises
    ------
    ConfigError
        For a malformed run file, an existing output file without ``resume``, or a refused resume.
    """
    from tqdm import tqdm

    start = time.perf_counter()
    rf = runfile if isinstance(runfile, (RunFile, GapRunFile)) else load_sweep_runfile(runfile)
    own = isinstance(rf, GapRunFile)  # a mode with its own tasks, computation, writer and texts (gap sweeps)
    if own and compute is compute_point:
        compute = rf.compute
    choices = [name for name, given in (("workers", workers is not None), ("scheduler", scheduler is not None),
                                        ("cluster", cluster), ("executor", executor is not None)) if given]
    if len(choices) > 1 and "executor" not in choices:
        raise ConfigError(f"choose one of --workers, --scheduler and --cluster, not {' and '.join(choices)}")
    if cluster and rf.cluster is None:
        raise ConfigError(f"{rf.source}: --cluster needs a [cluster] table in the run file (kind, jobs, cores, "
                          "memory, walltime, ...)")
    if int(threads_per_worker) < 1:
        raise ConfigError(f"threads_per_worker = {threads_per_worker} must be >= 1")
    if workers is not None and (isinstance(workers, bool) or int(workers) < 1):
        raise ConfigError(f"--workers {workers}: give at least 1 worker process (leave --workers out for one per "
                          "core)")
    path = Path(out) if out is not None else rf.output
    report = SweepReport(path=path, points=len(rf.points))
    with contextlib.ExitStack() as stack:
        writer = stack.enter_context(rf.writer(path, resume) if own else ResultsWriter(path, rf, resume=resume))
        todo = [p for p in rf.points if p.index not in writer.finished]
        report.skipped = len(rf.points) - len(todo)
        if executor is None:
            if scheduler is not None or cluster:
                if cluster:
                    jq = stack.enter_context(jobqueue_cluster(rf.cluster, tuple(job_directives),
                                                              tuple(job_prologue)))
                    jq.scale(jobs=rf.cluster["jobs"])
                    client = stack.enter_context(dask_client(jq.scheduler_address))
                else:
                    client = stack.enter_context(dask_client(scheduler))
                executor = DaskExecutor(client)
            else:
                executor = LocalPool(min(workers or default_workers(), max(1, len(todo))),
                                     threads_per_worker=threads_per_worker, max_retries=max_retries)
        report.executor = executor.description
        tasks = [(p.index, (rf.point_task if own else partial(point_task, rf))(p, threads_per_worker)) for p in todo]
        bar = stack.enter_context(tqdm(total=len(rf.points), initial=report.skipped, unit="point",
                                       disable=quiet, file=sys.stderr, dynamic_ncols=True,
                                       desc=rf.name, smoothing=0.1))
        if writer.restarted:
            bar.write(f"avalanche sweep: {path} was incomplete ({writer.restarted}); started afresh", file=sys.stderr)
        if not quiet:
            where = "all points already finished" if not todo else f"{len(todo)} points on {report.executor}"
            bar.write(f"avalanche sweep {rf.source} -> {path}: {where}", file=sys.stderr)
            for note in rf.notes if own else ():
                bar.write(f"avalanche sweep: {note}", file=sys.stderr)
        log_path = path.with_suffix(".failures.log")
        outcomes = stack.enter_context(contextlib.closing(executor.map_unordered(compute, tasks)))
        for outcome in outcomes:
            point = rf.points[outcome.key]
            info = {"attempts": outcome.attempts, "wall_seconds": outcome.wall_seconds, "worker": outcome.worker}
            if outcome.ok:
                result = outcome.value["result"]
                writer.commit(point, result, {**info, "warnings": outcome.value.get("warnings", [])})
                report.computed += 1
                report.point_seconds[point.index] = outcome.wall_seconds
                report.compute_seconds += outcome.wall_seconds
                report.cpu_seconds += float(getattr(result, "cpu_seconds", 0.0) or 0.0)
                report.events += int(getattr(result, "events", 0) or 0)
                if not getattr(result, "converged", True):
                    notes = list(getattr(result, "convergence_notes", []))
                    report.not_converged.append({"index": point.index, "notes": notes})
                    bar.write(f"avalanche sweep: point {point.index} (E/N {point.reduced_field_Td:g} Td, "
                              f"{point.frequency_Hz:g} Hz) not converged: {'; '.join(notes)}", file=sys.stderr)
                bar.set_postfix_str((rf.progress_text if own else partial(_progress_text, rf))(point, result),
                                    refresh=False)
            else:
                writer.commit_failure(point, outcome.reason, info)
                report.failed.append({"index": point.index, "reason": outcome.reason, "attempts": outcome.attempts})
                line = _log_failure(log_path, rf, point, outcome)
                bar.write(f"avalanche sweep: {line} (logged in {log_path})", file=sys.stderr)
            bar.update(1)
    report.wall_seconds = time.perf_counter() - start
    return report
