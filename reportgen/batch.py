"""The month-end batch: every client's reports, the overview, summary.csv and manifest.json.

The parent process reads the roster once and hands one small, picklable
:class:`ClientTask` per client to :func:`process_client`, the single task
function shared by the in-process loop, the local process pool and a Dask
cluster.  The task reads that client's files, analyses them, renders both
PDFs, writes them crash-safely and returns only small data
(:class:`ClientOutcome`), so memory stays flat however many clients there are.
The parent then writes ``summary.csv``, ``overview.pdf``, ``methods.pdf`` and, last,
``manifest.json`` (whose presence means the month folder is complete).

Nothing is written outside ``OUT/<YYYY-MM>/``.  Reading, science and rendering
are not done here: this module calls ``reportgen.io``, ``reportgen.analysis``
and ``reportgen.report``.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import functools
import inspect
import multiprocessing
import os
import resource
import sys
import tempfile
import time
import traceback
from collections import deque
from collections.abc import Callable, Iterable, Iterator
from concurrent.futures import FIRST_COMPLETED, Future, ProcessPoolExecutor, wait
from concurrent.futures.process import BrokenProcessPool
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING

from reportgen.analysis import analyse_client
from reportgen.atomic import remove_temp_files, write_bytes_atomic
from reportgen.config import Config
from reportgen.io import guard
from reportgen.io.book import read_client, read_roster
from reportgen.io.model import Client, Phase, Problem
from reportgen.manifest import (
    MANIFEST_NAME,
    ClientEntry,
    build_manifest,
    hash_inputs,
    manifest_bytes,
    sha256_bytes,
)
from reportgen.month import InvalidMonth, ReportMonth
from reportgen.report import (
    make_overview_line,
    render_client_report,
    render_overview,
    render_practitioner_summary,
)
from reportgen.report.methods_doc import render_methods
from reportgen.report.overview_model import OverviewLine
from reportgen.report.wording import TemplateProblem
from reportgen.results import ClientAnalysis, MethodUsed
from reportgen.summary import SummaryRow, summary_csv, summary_rows

if TYPE_CHECKING:  # the cluster extra is optional at run time
    from dask.typing import Key
    from distributed import Client as DaskClient

OVERVIEW_NAME = "overview.pdf"
METHODS_NAME = "methods.pdf"
SUMMARY_NAME = "summary.csv"
DASK_CONNECT_TIMEOUT_S = 10.0


class BatchUsageError(ValueError):
    """The batch cannot start as asked (bad month, unknown client id, busy folder, no cluster)."""


def report_name(client_id: str) -> str:
    return f"{client_id}.pdf"


def practitioner_name(client_id: str) -> str:
    return f"{client_id}-practitioner.pdf"


def usable_cores() -> int:
    """Cores this process may run on (CPU affinity / container limits), at least 1."""
    try:
        return max(len(os.sched_getaffinity(0)), 1)
    except (AttributeError, OSError):  # pragma: no cover - not Linux
        return os.cpu_count() or 1


def report_month(month: ReportMonth | str) -> ReportMonth:
    """``month`` as a :class:`ReportMonth`; :class:`BatchUsageError` for anything else."""
    try:
        return ReportMonth(month)
    except InvalidMonth as exc:
        raise BatchUsageError(str(exc)) from None


@dataclass(frozen=True)
class ClientTask:
    """Everything one worker needs for one client (small and picklable)."""

    book_dir: str
    out_dir: str  # the month folder OUT/<YYYY-MM>
    month: ReportMonth
    client: Client
    phases: tuple[Phase, ...]
    roster_problems: tuple[Problem, ...]
    roster_inputs: dict[str, str]  # sha256 of the book-level files, hashed once by the parent
    config: Config
    today: dt.date | None = None


@dataclass(frozen=True)
class ClientOutcome:
    """What a task sends back: status, messages, hashes, summary rows, overview line."""

    client_id: str
    name: str
    status: str  # "ok" or "error"
    messages: tuple[str, ...] = ()
    warnings: tuple[dict[str, object], ...] = ()
    files: dict[str, dict[str, str]] = field(default_factory=dict)
    inputs: dict[str, str] = field(default_factory=dict)
    summary_rows: tuple[SummaryRow, ...] = ()
    overview_line: OverviewLine | None = None
    methods: tuple[MethodUsed, ...] = ()  # equations and models used, for methods.pdf
    traceback: str | None = None  # for unexpected exceptions only
    timings_s: dict[str, float] = field(default_factory=dict)
    peak_rss_mb: float | None = None
    pid: int | None = None

    @property
    def ok(self) -> bool:
        return self.status == "ok"

    @property
    def reason(self) -> str:
        """One line for the result table and the overview's list of failures."""
        if not self.messages:
            return ""
        more = len(self.messages) - 1
        return self.messages[0] + (f" (and {more} more)" if more else "")

    def manifest_entry(self) -> ClientEntry:
        return ClientEntry(
            status=self.status,
            name=self.name,
            messages=list(self.messages),
            warnings=list(self.warnings),
            files=self.files,
            inputs=self.inputs,
        )


def _peak_rss_mb() -> float:
    """This process's peak resident memory (VmHWM on Linux, ru_maxrss elsewhere)."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("VmHWM:"):
                    return int(line.split()[1]) / 1024.0
    except OSError:  # pragma: no cover - not Linux
        pass
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss  # pragma: no cover
    return rss / (1024.0 * 1024.0 if sys.platform == "darwin" else 1024.0)  # pragma: no cover


def _input_hashes(
    book: Path, used: tuple[str, ...], known: dict[str, str], parsed: dict[str, str]
) -> dict[str, str]:
    """sha256 of the files a record was read from.

    ``parsed`` holds the hashes of the exact bytes the readers parsed (see
    :func:`reportgen.io.guard.recording`); book-level files come from ``known`` (the
    parent's reading).  Only a file neither covers is hashed from disk.
    """
    have = {**parsed, **known}
    hashes = hash_inputs(book, tuple(rel for rel in used if rel not in have))
    hashes.update({rel: have[rel] for rel in used if rel in have})
    return dict(sorted(hashes.items()))


def _problem_line(p: Problem) -> str:
    return f"{p.location}: {p.message}"


def _remove_stale_outputs(out_dir: Path, client_id: str) -> None:
    """A client that fails this run must not keep last run's PDFs in the folder."""
    for name in (report_name(client_id), practitioner_name(client_id)):
        with contextlib.suppress(OSError):  # absent, or not ours to remove (a folder)
            (out_dir / name).unlink()


def _no_weigh_ins_warning(client_id: str, month: str) -> dict[str, object]:
    """The manifest's note for a month without a single weigh-in (the report says it too)."""
    return {
        "severity": "warning",
        "code": "no-weigh-ins-in-month",
        "client_id": client_id,
        "file": None,
        "row": None,
        "column": None,
        "value": month,
        "message": f"no weigh-ins in {month}: the report shows no change for the month, "
        "and no trend figures that were not measured",
    }


def process_client(task: ClientTask) -> ClientOutcome:
    """Read, analyse, render and write one client's two PDFs; never raises for that client.

    The same function runs in-process, in a local worker process and on a
    Dask worker.  Unexpected exceptions become the client's error entry,
    with the traceback kept for ``--verbose``.
    """
    client = task.client
    cid = client.client_id
    book = Path(task.book_dir)
    out_dir = Path(task.out_dir)
    timings: dict[str, float] = {}
    # Until the record says which files were used, the book-level files stand for the inputs.
    inputs: dict[str, str] = dict(task.roster_inputs)
    warnings: tuple[dict[str, object], ...] = ()

    cpu0 = time.process_time()

    def failed(messages: tuple[str, ...], tb: str | None = None) -> ClientOutcome:
        _remove_stale_outputs(out_dir, cid)
        timings["cpu"] = time.process_time() - cpu0
        return ClientOutcome(
            client_id=cid,
            name=client.name,
            status="error",
            messages=messages,
            warnings=warnings,
            inputs=inputs,
            traceback=tb,
            timings_s=timings,
            peak_rss_mb=_peak_rss_mb(),
            pid=os.getpid(),
        )

    try:
        t0 = time.perf_counter()
        with guard.recording() as parsed:  # hashes of the very bytes that are parsed
            record = read_client(
                book,
                client,
                task.phases,
                task.month.last_day,
                today=task.today,
                roster_problems=task.roster_problems,
                date_order=task.config.book.date_order_setting(),
            )
        inputs = _input_hashes(book, record.source_files, task.roster_inputs, parsed)
        warnings = tuple(p.as_dict() for p in record.warnings)
        t1 = time.perf_counter()
        timings["read"] = t1 - t0
        if not record.ok:
            return failed(tuple(_problem_line(p) for p in record.errors))

        analysis = analyse_client(record, task.month, task.config.analysis)
        if analysis.quality.weight_days == 0:
            warnings += (_no_weigh_ins_warning(cid, task.month),)
        t2 = time.perf_counter()
        timings["analyse"] = t2 - t1

        report_pdf = _render(render_client_report, analysis, task.config, timings, "report")
        practitioner_pdf = _render(
            render_practitioner_summary, analysis, task.config, timings, "practitioner"
        )
        t4 = time.perf_counter()

        rows = tuple(summary_rows(analysis))
        line = make_overview_line(analysis)
        files: dict[str, dict[str, str]] = {}
        for kind, name, data in (
            ("report", report_name(cid), report_pdf),
            ("practitioner", practitioner_name(cid), practitioner_pdf),
        ):
            write_bytes_atomic(out_dir / name, data)
            files[kind] = {"path": name, "sha256": sha256_bytes(data)}
        timings["write"] = time.perf_counter() - t4
        timings["cpu"] = time.process_time() - cpu0  # CPU seconds: comparable under load
    except TemplateProblem as exc:
        return failed((str(exc),))
    except Exception as exc:
        tb = traceback.format_exc()
        first = str(exc).strip().splitlines()[0] if str(exc).strip() else ""
        reason = f"unexpected error: {type(exc).__name__}" + (f": {first}" if first else "")
        return failed((reason,), tb)

    return ClientOutcome(
        client_id=cid,
        name=client.name,
        status="ok",
        messages=(),
        warnings=warnings,
        files=files,
        inputs=inputs,
        summary_rows=rows,
        overview_line=line,
        methods=analysis.methods,
        timings_s=timings,
        peak_rss_mb=_peak_rss_mb(),
        pid=os.getpid(),
    )


@functools.cache
def _takes_timing(fn: Callable[..., bytes]) -> bool:
    try:
        return "timing" in inspect.signature(fn).parameters
    except (TypeError, ValueError):  # pragma: no cover - builtins
        return False


def _render(
    fn: Callable[..., bytes],
    analysis: ClientAnalysis,
    config: Config,
    timings: dict[str, float],
    key: str,
) -> bytes:
    """Call a renderer; where it reports its chart and layout time, keep the split too."""
    t0 = time.perf_counter()
    if _takes_timing(fn):
        from reportgen.report.client import Timing

        timing = Timing()
        data = fn(analysis, config, timing=timing)
        timings[f"{key}_charts"] = timing.charts_s
        timings[f"{key}_layout"] = timing.layout_s
    else:
        data = fn(analysis, config)
    timings[key] = time.perf_counter() - t0
    return data


def _lost_outcome(task: ClientTask, why: str, tb: str | None = None) -> ClientOutcome:
    """An outcome for a task whose result never came back (worker died, result unpicklable)."""
    _remove_stale_outputs(Path(task.out_dir), task.client.client_id)
    return ClientOutcome(
        client_id=task.client.client_id,
        name=task.client.name,
        status="error",
        messages=(why,),
        inputs=dict(task.roster_inputs),
        traceback=tb,
    )


# --- executors -------------------------------------------------------------------------


def _worker_init() -> None:
    """Worker start-up: die with the parent (Linux), so a killed batch leaves no orphans."""
    if sys.platform.startswith("linux"):
        with contextlib.suppress(Exception):
            import ctypes
            import signal

            libc = ctypes.CDLL("libc.so.6", use_errno=True)
            pr_set_pdeathsig = 1
            libc.prctl(pr_set_pdeathsig, signal.SIGKILL)
            if os.getppid() == 1:  # parent already gone before prctl took effect
                os._exit(1)


def warm_up_matplotlib() -> None:
    """Build matplotlib's font cache and load its font once in the parent before forking.

    Workers that start cold at the same moment would each build the cache
    (matplotlib#5226); forked workers inherit the ready font list instead.
    """
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(1, 1), dpi=50)
    fig.text(0.5, 0.5, "0 kg")
    FigureCanvasAgg(fig).draw()


def _pool_context() -> multiprocessing.context.BaseContext:
    if sys.platform.startswith("linux"):
        return multiprocessing.get_context("fork")
    return multiprocessing.get_context("spawn")  # pragma: no cover - not Linux


def _pool(tasks: list[ClientTask], workers: int) -> Iterator[ClientOutcome]:
    """Run tasks in a fork-based process pool, yielding outcomes as they arrive.

    At most ``2 * workers`` tasks are in flight, so even a huge roster keeps
    the queues small.  If a worker process dies (killed, out of memory, a
    crash in a C library) the pool breaks: the tasks that were in flight are
    each retried alone in a fresh one-worker pool, so only the client that
    really kills its worker is reported as failed, and the rest go on in a new
    pool.
    """
    pending = deque(tasks)
    limit = max(2 * workers, workers + 1)
    while pending:
        suspects: list[ClientTask] = []
        with ProcessPoolExecutor(
            max_workers=workers, mp_context=_pool_context(), initializer=_worker_init
        ) as ex:
            inflight: dict[Future[ClientOutcome], ClientTask] = {}
            while pending or inflight:
                while pending and len(inflight) < limit:
                    task = pending.popleft()
                    try:
                        inflight[ex.submit(process_client, task)] = task
                    except BrokenProcessPool:
                        pending.appendleft(task)
                        break
                if not inflight:
                    break
                done, _ = wait(inflight, return_when=FIRST_COMPLETED)
                broken = False
                for fut in done:
                    task = inflight.pop(fut)
                    try:
                        yield fut.result()
                    except BrokenProcessPool:
                        suspects.append(task)
                        broken = True
                    except Exception as exc:
                        yield _lost_outcome(
                            task,
                            f"unexpected error: the result could not be sent back ({exc})",
                            traceback.format_exc(),
                        )
                if broken:
                    suspects.extend(inflight.values())
                    inflight.clear()
                    break
        for task in sorted(suspects, key=lambda t: t.client.client_id):
            yield _isolated(task)


def _client_files(task: ClientTask) -> list[str]:
    """The client's own input files that exist, to name in a message about a crash."""
    cid = task.client.client_id
    candidates = (f"logs/{cid}.csv", f"logs/{cid}.xlsx", f"skinfolds/{cid}.csv")
    return [rel for rel in candidates if os.path.lexists(Path(task.book_dir) / rel)]


def _isolated(task: ClientTask) -> ClientOutcome:
    """Run one task alone in a fresh one-worker pool (after a pool broke)."""
    with ProcessPoolExecutor(
        max_workers=1, mp_context=_pool_context(), initializer=_worker_init
    ) as ex:
        fut = ex.submit(process_client, task)
        try:
            return fut.result()
        except BrokenProcessPool:
            files = _client_files(task)
            return _lost_outcome(
                task,
                "the worker process stopped unexpectedly while making this client's reports"
                + (f" (from {', '.join(files)})" if files else ""),
            )
        except Exception as exc:
            return _lost_outcome(
                task,
                f"unexpected error: the result could not be sent back ({exc})",
                traceback.format_exc(),
            )


def connect_scheduler(address: str) -> DaskClient:
    """A Dask distributed client for ``address``; :class:`BatchUsageError` if unreachable."""
    try:
        from distributed import Client as DaskClient
    except ImportError as exc:  # pragma: no cover - the cluster extra is installed in tests
        raise BatchUsageError(
            "--scheduler needs Dask distributed: pip install 'reportgen[cluster]'"
        ) from exc
    try:
        return DaskClient(address, timeout=DASK_CONNECT_TIMEOUT_S, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as exc:
        raise BatchUsageError(f"cannot reach the Dask scheduler at {address}: {exc}") from exc


def _dask(tasks: list[ClientTask], dask: DaskClient) -> Iterator[ClientOutcome]:
    """Send the same task function to a Dask cluster, yielding outcomes as they arrive."""
    from distributed import as_completed

    by_key: dict[Key, ClientTask] = {}
    futures = []
    for task in tasks:
        fut = dask.submit(process_client, task, pure=False)
        by_key[fut.key] = task
        futures.append(fut)
    for fut in as_completed(futures, loop=dask.loop):
        task = by_key[fut.key]
        try:
            outcome = fut.result()
        except Exception as exc:
            outcome = _lost_outcome(
                task,
                f"unexpected error on the cluster: {type(exc).__name__}: {exc}",
                traceback.format_exc(),
            )
        fut.release()
        yield outcome


# --- the batch --------------------------------------------------------------------------


@dataclass
class BatchResult:
    month: ReportMonth
    month_dir: Path
    outcomes: list[ClientOutcome]  # sorted by client id
    files: dict[str, str]  # month-level file -> sha256
    errors: list[str] = field(default_factory=list)  # month-level problems (overview failed...)
    book_problems: list[dict[str, object]] = field(default_factory=list)

    @property
    def failed(self) -> list[ClientOutcome]:
        return [o for o in self.outcomes if not o.ok]

    @property
    def succeeded(self) -> list[ClientOutcome]:
        return [o for o in self.outcomes if o.ok]

    @property
    def exit_code(self) -> int:
        return 0 if not self.failed and not self.errors else 1


@contextlib.contextmanager
def _folder_lock(folder: Path) -> Iterator[None]:
    """Refuse to run two batches into the same month folder at once (advisory flock)."""
    try:
        import fcntl
    except ImportError:  # pragma: no cover - not POSIX
        yield
        return
    fd = os.open(folder, os.O_RDONLY)
    try:
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError as exc:
            raise BatchUsageError(f"another batch is writing {folder} right now") from exc
        yield
    finally:
        os.close(fd)


def prepare_month_dir(out_dir: Path, month: str) -> Path:
    """Create (or reuse) ``out_dir/<month>`` and make sure the batch can write there.

    Every way it cannot be used (the output folder is a file or sits under one, is
    read-only, or the month folder is a symbolic link that would send files elsewhere) is a
    :class:`BatchUsageError` with one line saying what to do.
    """
    month_dir = out_dir / month
    if month_dir.is_symlink():
        raise BatchUsageError(
            f"{month_dir} is a symbolic link; reportgen writes only inside the output folder "
            "itself. Remove the link or choose another --out"
        )
    for parent in (out_dir, *out_dir.parents):
        if parent.exists():
            if not parent.is_dir():
                raise BatchUsageError(
                    f"cannot use --out {out_dir}: {parent} is a file, not a folder"
                )
            break
    try:
        month_dir.mkdir(parents=True, exist_ok=True)
        if not month_dir.is_dir():
            raise NotADirectoryError(f"{month_dir} is not a folder")
        with tempfile.NamedTemporaryFile(dir=month_dir, prefix=".reportgen-probe-"):
            pass
    except OSError as exc:
        reason = exc.strerror or str(exc)
        raise BatchUsageError(f"cannot write to the output folder {month_dir} ({reason})") from None
    return month_dir


def _select_clients(clients: tuple[Client, ...], wanted: Iterable[str] | None) -> list[Client]:
    chosen = sorted(clients, key=lambda c: c.client_id)
    if wanted is None:
        return chosen
    wanted_ids = [w.strip() for w in wanted if w.strip()]
    known = {c.client_id for c in chosen}
    unknown = sorted(set(wanted_ids) - known)
    if unknown:
        raise BatchUsageError(f"no such client in the roster: {', '.join(unknown)}")
    keep = set(wanted_ids)
    return [c for c in chosen if c.client_id in keep]


def run_batch(
    book_dir: Path,
    month: ReportMonth | str,
    out_dir: Path,
    *,
    config: Config | None = None,
    workers: int | None = None,
    client_ids: Iterable[str] | None = None,
    scheduler: str | None = None,
    today: dt.date | None = None,
    on_start: Callable[[int], None] | None = None,
    on_outcome: Callable[[ClientOutcome], None] | None = None,
) -> BatchResult:
    """Make every selected client's reports for ``month`` under ``out_dir/<month>/``.

    Raises :class:`reportgen.io.model.InputError` when the book itself is
    unusable and :class:`BatchUsageError` when the batch cannot start as
    asked; everything that goes wrong for one client ends up in that client's
    :class:`ClientOutcome` instead.
    """
    month = report_month(month)
    config = config if config is not None else Config()
    book_dir = Path(book_dir).resolve()
    workers = workers if workers is not None else usable_cores()
    if workers < 1:
        raise BatchUsageError("--workers must be at least 1")

    with guard.recording() as parsed:
        roster = read_roster(book_dir)
    clients = _select_clients(roster.clients, client_ids)
    roster_ids = {c.client_id for c in roster.clients}
    book_problems = [
        p.as_dict() for p in roster.problems if p.client_id is None or p.client_id not in roster_ids
    ]
    roster_inputs = _input_hashes(book_dir, roster.source_files, {}, parsed)

    with contextlib.ExitStack() as stack:
        dask = stack.enter_context(connect_scheduler(scheduler)) if scheduler else None
        month_dir = prepare_month_dir(Path(out_dir), month)
        stack.enter_context(_folder_lock(month_dir))
        remove_temp_files(month_dir)
        # The manifest is the month's seal: remove it until this run has finished.
        with contextlib.suppress(FileNotFoundError):
            (month_dir / MANIFEST_NAME).unlink()

        tasks = [
            ClientTask(
                book_dir=str(book_dir),
                out_dir=str(month_dir),
                month=month,
                client=c,
                phases=tuple(roster.phases.get(c.client_id, ())),
                roster_problems=tuple(p for p in roster.problems if p.client_id == c.client_id),
                roster_inputs=roster_inputs,
                config=config,
                today=today,
            )
            for c in clients
        ]
        if on_start is not None:
            on_start(len(tasks))

        if dask is not None:
            stream = _dask(tasks, dask)
        elif not tasks:
            stream = iter(())
        elif workers == 1 or len(tasks) == 1:
            # Still a worker process, one client after the other: a file that crashes the
            # reader (a native abort, the out-of-memory killer) costs only its client.
            stream = _pool(tasks, 1)
        else:
            warm_up_matplotlib()
            stream = _pool(tasks, min(workers, len(tasks)))

        outcomes: list[ClientOutcome] = []
        for outcome in stream:
            outcomes.append(outcome)
            if on_outcome is not None:
                on_outcome(outcome)
        outcomes.sort(key=lambda o: o.client_id)

        result = BatchResult(
            month=month,
            month_dir=month_dir,
            outcomes=outcomes,
            files={},
            book_problems=book_problems,
        )
        _write_month_files(result, book_dir, config)
    return result


def _write_month_files(result: BatchResult, book_dir: Path, config: Config) -> None:
    """summary.csv, overview.pdf, methods.pdf, then manifest.json (last: it seals the month)."""
    month_dir = result.month_dir
    rows = [row for o in result.outcomes for row in o.summary_rows]
    summary = summary_csv(rows)
    write_bytes_atomic(month_dir / SUMMARY_NAME, summary)
    result.files[SUMMARY_NAME] = sha256_bytes(summary)

    lines = [o.overview_line for o in result.outcomes if o.overview_line is not None]
    failures = [(o.client_id, o.name, o.reason) for o in result.outcomes if not o.ok]
    try:
        overview = render_overview(lines, failures, result.month, config)
    except Exception as exc:
        result.errors.append(f"overview.pdf could not be made: {type(exc).__name__}: {exc}")
        with contextlib.suppress(FileNotFoundError):
            (month_dir / OVERVIEW_NAME).unlink()
    else:
        write_bytes_atomic(month_dir / OVERVIEW_NAME, overview)
        result.files[OVERVIEW_NAME] = sha256_bytes(overview)

    done = sorted((o for o in result.outcomes if o.ok), key=lambda o: o.client_id)
    try:
        methods = render_methods([o.methods for o in done], len(done), result.month, config)
    except Exception as exc:
        result.errors.append(f"methods.pdf could not be made: {type(exc).__name__}: {exc}")
        with contextlib.suppress(FileNotFoundError):
            (month_dir / METHODS_NAME).unlink()
    else:
        write_bytes_atomic(month_dir / METHODS_NAME, methods)
        result.files[METHODS_NAME] = sha256_bytes(methods)

    config_file = Path(config.source) if config.source else None
    manifest = build_manifest(
        month=result.month,
        book=book_dir,
        config_file=config_file,
        config=config.as_dict(),
        config_sha256=config.source_sha256,
        files=result.files,
        clients={o.client_id: o.manifest_entry() for o in result.outcomes},
        book_problems=result.book_problems,
    )
    if result.errors:
        manifest["errors"] = list(result.errors)
    write_bytes_atomic(month_dir / MANIFEST_NAME, manifest_bytes(manifest))
