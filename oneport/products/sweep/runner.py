"""Run a sweep chunk by chunk, here or on a Dask cluster, into one per-variant table.

A chunk is the unit of work: a slice of the plan's variants, evaluated by a *variant source*
(a picklable callable: parameter arrays in, device and load reflections on the common grid
out, with the facts the single check would know of each variant) and judged by the one
judgement, :func:`oneport.analysis.judgement.judge`. Memory stays bounded by the
chunk size; the result is the same whichever way the chunks are run, since each chunk is
computed alone and the table is assembled in chunk order. Whatever stops a run — Ctrl-C, a
variant the netlist refuses, a lost worker, a bug — the chunks already finished are kept (the
longest run of them from the first, so rows stay in plan order) and the result says how it
ended, so the caller can write the partial table, mark it, and then report the failure.
"""

from __future__ import annotations

import contextlib
import itertools
import logging
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import FIRST_COMPLETED, Future, ThreadPoolExecutor, wait
from dataclasses import dataclass, field
from typing import Any, overload

import numpy as np

from ...analysis.judgement import Facts, judge
from ...analysis.variants import VERDICT_CODES
from .plan import SweepPlan

VariantSource = Callable[[dict[str, np.ndarray]], tuple[np.ndarray, np.ndarray]]

#: Complex samples (variants × points) per chunk: 16 MB per complex array (500 variants at
#: 2,001 points), the fastest of 100 to 2,000 variants per chunk measured here.
CHUNK_SAMPLES = 1_000_000


@dataclass(frozen=True)
class SweepRun:
    """The per-variant table (column name → array, one row per variant) and how it ended."""

    plan: SweepPlan
    frequency_hz: np.ndarray = field(repr=False)
    reference_impedance_ohm: float
    table: dict[str, np.ndarray] = field(repr=False)
    completed: int
    interrupted: bool
    #: What stopped the run before its end, other than Ctrl-C (re-raised by the caller once
    #: the finished chunks are written); None when nothing did.
    error: BaseException | None = field(default=None, repr=False, compare=False)

    @property
    def complete(self) -> bool:
        """Whether every variant of the plan was run."""
        return self.completed == self.plan.variants and not self.interrupted

    @property
    def verdicts(self) -> np.ndarray:
        """Verdict words of the completed variants."""
        return np.asarray(VERDICT_CODES, dtype=object)[self.table["verdict_code"]]


class ChunkBounds(Sequence[tuple[int, int]]):
    """(start, stop) of every chunk, made on demand: no list that grows with the variants."""

    def __init__(self, variants: int, size: int) -> None:
        self.variants = variants
        self.size = size

    def __len__(self) -> int:
        return -(-self.variants // self.size)

    @overload
    def __getitem__(self, index: int) -> tuple[int, int]: ...

    @overload
    def __getitem__(self, index: slice) -> list[tuple[int, int]]: ...

    def __getitem__(self, index: int | slice) -> Any:
        if isinstance(index, slice):
            return [self[i] for i in range(*index.indices(len(self)))]
        if index < 0:
            index += len(self)
        if not 0 <= index < len(self):
            raise IndexError(index)
        start = index * self.size
        return start, min(start + self.size, self.variants)


def chunk_bounds(variants: int, points: int, chunk_size: int | None = None) -> ChunkBounds:
    """(start, stop) of every chunk; ``chunk_size`` must be a positive number of variants."""
    if chunk_size is not None:
        from ..options import chunk_size as read_chunk_size

        chunk_size = read_chunk_size(chunk_size, "--chunk-size")
    size = chunk_size or max(1, CHUNK_SAMPLES // max(points, 1))
    return ChunkBounds(variants, size)


def run_chunk(
    source: VariantSource,
    parameters: dict[str, np.ndarray],
    frequency_hz: np.ndarray,
    reference_impedance_ohm: float,
    dc_sign: int | None,
) -> dict[str, np.ndarray]:
    """Evaluate and judge one chunk; return its table columns.

    A :class:`~oneport.products.sweep.sources.LoopSource` gives each variant's facts (P of
    netlist sides, DC facts, the load's own grid, …); another callable gets the facts of a
    measured load on this grid (or a netlist load when it says ``load_poles_known``).
    """
    gamma_device, gamma_load = source(parameters)
    rows = next(iter(parameters.values())).shape[0] if parameters else 1
    shape = np.broadcast_shapes(np.shape(gamma_device), np.shape(gamma_load))
    if len(shape) == 1:  # nothing the chunk varies reaches the reflections
        gamma_device = np.broadcast_to(gamma_device, (rows, shape[0]))
        gamma_load = np.broadcast_to(gamma_load, (rows, shape[0]))
    facts_of = getattr(source, "facts", None)
    if facts_of is not None:
        facts = facts_of(parameters, dc_sign)
    else:
        facts = Facts(
            dc_sign=dc_sign, load_is_netlist=bool(getattr(source, "load_poles_known", False))
        )
    analysis = judge(frequency_hz, gamma_device, gamma_load, facts).variant_analysis()
    columns = {name: np.asarray(values) for name, values in parameters.items()}
    for name in (
        "verdict_code",
        "encirclements",
        "count_known",
        "latch_up",
        "oscillation_frequency_hz",
        "oscillatory_modes",
        "min_distance",
        "min_distance_frequency_hz",
        "worst_loop_gain",
        "worst_loop_gain_frequency_hz",
    ):
        columns[name] = np.broadcast_to(getattr(analysis, name), (rows,)).copy()
    return columns


def run_sweep(
    plan: SweepPlan,
    source: VariantSource,
    frequency_hz: np.ndarray,
    reference_impedance_ohm: float,
    *,
    dc_sign: int | None = None,
    chunk_size: int | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
    threads: int | None = None,
    progress: Callable[[int], Any] | None = None,
) -> SweepRun:
    """Run every chunk of ``plan``; ``progress(n)`` is called with each finished chunk's size.

    ``scheduler`` (``tcp://host:port``) sends chunks to a running Dask cluster; ``workers``
    (one or more) starts a local one of that many worker processes. Without either, chunks
    run here on ``threads`` threads (default one: the netlist's closed form makes many short
    numpy calls with fresh temporaries, and two threads spent most of their time waiting for
    the interpreter lock on a 6-element load; measured in benchmarks/README.md). Every chunk
    is computed alone, so the table is the same in every case.
    """
    bounds = chunk_bounds(plan.variants, frequency_hz.size, chunk_size)
    finished: dict[int, dict[str, np.ndarray]] = {}
    interrupted = False
    error: BaseException | None = None
    try:
        for index, columns in _execute(
            plan,
            source,
            frequency_hz,
            reference_impedance_ohm,
            dc_sign,
            bounds,
            scheduler,
            workers,
            threads,
        ):
            finished[index] = columns
            if progress is not None:
                progress(bounds[index][1] - bounds[index][0])
    except KeyboardInterrupt:
        interrupted = True
    except Exception as failure:  # kept, and raised again by the caller after writing
        error = failure
    # Keep the longest run of finished chunks from the start, so rows stay in plan order.
    done = 0
    while done in finished:
        done += 1
    parts = [finished.pop(i) for i in range(done)]
    finished.clear()
    table = (
        {name: np.concatenate([part[name] for part in parts]) for name in parts[0]} if parts else {}
    )
    completed = bounds[done - 1][1] if done else 0
    return SweepRun(
        plan, frequency_hz, reference_impedance_ohm, table, completed, interrupted, error
    )


def _execute(
    plan: SweepPlan,
    source: VariantSource,
    frequency_hz: np.ndarray,
    reference_impedance_ohm: float,
    dc_sign: int | None,
    bounds: ChunkBounds,
    scheduler: str | None,
    workers: int | None,
    threads: int | None,
) -> Iterator[tuple[int, dict[str, np.ndarray]]]:
    arguments = (frequency_hz, reference_impedance_ohm, dc_sign)
    if scheduler is None and (workers is None or workers < 1):
        yield from _execute_here(plan, source, arguments, bounds, threads)
        return
    yield from _execute_on_dask(plan, source, arguments, bounds, scheduler, workers)


def _execute_here(
    plan: SweepPlan,
    source: VariantSource,
    arguments: tuple[Any, ...],
    bounds: ChunkBounds,
    threads: int | None,
) -> Iterator[tuple[int, dict[str, np.ndarray]]]:
    """Chunks in this process: on ``threads`` threads (numpy releases the GIL in its loops),
    with at most two chunks per thread in flight so memory stays bounded."""
    count = max(1, threads if threads is not None else 1)
    if count == 1 or len(bounds) == 1:
        for index, (start, stop) in enumerate(bounds):
            yield index, run_chunk(source, plan.chunk(start, stop), *arguments)
        return
    with ThreadPoolExecutor(max_workers=count) as pool:
        pending: dict[Future[dict[str, np.ndarray]], int] = {}
        upcoming = iter(enumerate(bounds))
        try:
            for index, (start, stop) in itertools.islice(upcoming, 2 * count):
                pending[pool.submit(run_chunk, source, plan.chunk(start, stop), *arguments)] = index
            while pending:
                done, _ = wait(pending, return_when=FIRST_COMPLETED)
                for future in done:
                    index = pending.pop(future)
                    yield index, future.result()
                    for next_index, (start, stop) in itertools.islice(upcoming, 1):
                        chunk = plan.chunk(start, stop)
                        pending[pool.submit(run_chunk, source, chunk, *arguments)] = next_index
        finally:
            for future in pending:
                future.cancel()


def _execute_on_dask(
    plan: SweepPlan,
    source: VariantSource,
    arguments: tuple[Any, ...],
    bounds: ChunkBounds,
    scheduler: str | None,
    workers: int | None,
) -> Iterator[tuple[int, dict[str, np.ndarray]]]:
    from ...errors import InputError

    try:
        import dask
        from distributed import Client, as_completed
        from distributed.utils import silence_logging_cmgr
    except ImportError:
        raise InputError(
            "--scheduler/--workers need Dask: pip install 'oneport[cluster]'"
        ) from None
    with dask.config.set(_QUIET_DASK), contextlib.ExitStack() as stack:
        # Routine lines about closing connections stay quiet, up to the cluster's last one.
        stack.enter_context(silence_logging_cmgr(logging.ERROR))
        if scheduler is None:
            cluster = stack.enter_context(_local_cluster(workers or 1))
            client = stack.enter_context(Client(cluster))
        else:
            try:
                client = stack.enter_context(Client(scheduler, timeout="10s"))
            except OSError as error:
                raise InputError(f"--scheduler {scheduler}: cannot reach it ({error})") from None
        shared = client.scatter(source, broadcast=True)
        shared_plan = client.scatter(plan, broadcast=True)
        slots = max(1, sum(client.nthreads().values()))
        futures = {}
        for group in _groups(len(bounds), slots):
            # The worker makes the chunks' parameter values itself: nothing here grows with
            # the number of variants.
            spans = [bounds[index] for index in group]
            task = client.submit(
                run_planned_chunks, shared, shared_plan, spans, *arguments, pure=False
            )
            futures[task] = group
        try:
            for future in as_completed(futures):
                yield from zip(futures[future], future.result(), strict=True)
        finally:
            # Stop what has not run (Ctrl-C, an error) before the cluster goes away, so no
            # worker is cut off in the middle of a chunk (that is what printed tracebacks).
            client.cancel(list(futures))


#: Tasks per worker thread on a cluster: enough that a slow worker does not hold up the end
#: of a run, few enough that the scheduler's work per task (about 10 ms of this process's
#: time) stays small next to the chunks'.
TASKS_PER_SLOT = 4


def _groups(chunks: int, slots: int) -> list[range]:
    """Chunk indices in consecutive groups, one task each: about TASKS_PER_SLOT per slot."""
    size = max(1, chunks // (TASKS_PER_SLOT * slots))
    return [range(start, min(start + size, chunks)) for start in range(0, chunks, size)]


def run_planned_chunks(
    source: VariantSource, plan: SweepPlan, spans: list[tuple[int, int]], *arguments: Any
) -> list[dict[str, np.ndarray]]:
    """Several chunks one after another (one cluster task), their values made by the plan
    here: memory stays that of one chunk and its table columns."""
    return [run_chunk(source, plan.chunk(start, stop), *arguments) for start, stop in spans]


#: Dask settings for a sweep: local workers are forked from this process, so they start with
#: the package already imported (about 0.2 s instead of several seconds for fresh
#: interpreters), and no memory monitor (a chunk's memory is bounded by its size).
_QUIET_DASK = {
    "distributed.worker.multiprocessing-method": "fork",
    "distributed.worker.memory.target": False,
    "distributed.worker.memory.spill": False,
    "distributed.worker.memory.pause": False,
    "distributed.worker.memory.terminate": False,
}


def _local_cluster(workers: int) -> Any:
    """A cluster of ``workers`` single-threaded worker processes on this machine."""
    from distributed import LocalCluster

    return LocalCluster(
        n_workers=workers,
        threads_per_worker=1,
        processes=True,
        dashboard_address=":0",
        memory_limit=0,
        silence_logs=logging.ERROR,
    )
