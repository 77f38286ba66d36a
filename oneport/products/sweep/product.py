"""The sweep product: devices, a load and what varies, as the user names them, to one frozen
:class:`~oneport.products.sweep.summary.SweepResult`.

Data flow: the one preparation (``sources.prepare_sweep``) → the plan (``plan``: a grid over
``vary``, Monte Carlo over ``tolerance``, or the device files themselves) → the chunked run
(``runner``) → the summary (``summary``) and, when asked, the table file. It never prints,
plots or exits.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from pathlib import Path
from typing import Any

from ...errors import InputError
from .plan import SweepPlan, grid_plan, monte_carlo_plan, parse_tolerance, parse_vary
from .summary import SweepResult, summarise

#: The distributions a Monte Carlo run draws from.
DISTRIBUTIONS = ("uniform", "normal")


def sweep(
    devices: Any,
    load: Any,
    *,
    vary: Any = (),
    log: Sequence[str] = (),
    tolerance: Any = (),
    samples: int = 1000,
    seed: int = 1,
    distribution: str = "uniform",
    measurement_impedance_ohm: float | str | None = None,
    device_dc_resistance_ohm: float | str | None = None,
    load_dc_resistance_ohm: float | str | None = None,
    frequency_hz: Any = None,
    output: str | Path | None = None,
    chunk_size: int | None = None,
    scheduler: str | None = None,
    workers: int | None = None,
    threads: int | None = None,
    progress: Callable[[int, int], Any] | None = None,
) -> SweepResult:
    """The check over a grid of netlist parameters, a Monte Carlo run over tolerances, or a list
    of measured devices, vectorised and chunked (``oneport sweep``).

    Parameters
    ----------
    devices : path, OnePort, Network or Circuit, or a list of them
        One device (a netlist may vary), or several device files (one variant each).
    load : path, OnePort, Network or Circuit
        The load: a Touchstone one-port or a netlist.
    vary : str, sequence of str, or mapping
        Grid: ``"R=1:100:41"`` (``NAME=START:STOP:COUNT``, netlist values such as ``3.3n``),
        or ``{"R": (1, 100, 41)}``; every combination is run.
    log : sequence of str
        The swept names spaced geometrically.
    tolerance : str, sequence of str, or mapping
        Monte Carlo: ``"R=20%"`` or ``{"R": 0.2}`` (a fraction) — each within ±tolerance of its
        netlist value.
    samples, seed, distribution
        The Monte Carlo's size (1 to 100,000,000), seed (0 to 2⁶⁴ − 1; the same seed gives the
        same variants) and ``"uniform"`` or ``"normal"`` (σ = tol/3, truncated at ±tol).
    measurement_impedance_ohm : float or str, optional
        The analysis impedance (``--reference-impedance``): for a netlist device its Z0 (default
        50 Ω), for device files what they were measured in (default: their own reference).
    device_dc_resistance_ohm, load_dc_resistance_ohm : float or str, optional
        DC facts, as for :func:`oneport.check`.
    frequency_hz : array_like, optional
        The grid when both sides are netlists (required then; :func:`oneport.frequency_grid`).
    output : str or Path, optional
        Write the per-variant table there (``.parquet`` or ``.csv``; CSV up to 200,000
        variants). Checked before any work: a file in an existing folder that can be written,
        not an input of the run, not a special file or a system folder. Written whole through
        a temporary file and a rename.
    chunk_size, scheduler, workers, threads
        Where and how the chunks run (:func:`~oneport.products.sweep.runner.run_sweep`).
    progress : callable, optional
        Called as ``progress(done, total)`` (variants) as chunks finish.

    Returns
    -------
    SweepResult
        Verdict, fractions, the stable bounds, the worst variant, the table; ``to_dict()`` is
        the command's JSON. A run stopped early — Ctrl-C, a variant the netlist refuses, a lost
        worker, a bug — returns the finished variants (written to ``output``, marked partial):
        ``complete`` is False, ``interrupted`` says Ctrl-C, and ``error`` holds any other
        failure (the command reports it after the partial results, with its exit code).

    Examples
    --------
    >>> import oneport
    >>> result = oneport.sweep(
    ...     "touchstone_examples/stable/device.s1p",
    ...     "touchstone_examples/circuits/series_load.cir",
    ...     vary=["R=1:100:5", "L=0.5n:8n:3"],
    ... )
    >>> result.verdict, result.summary.variants
    ('unstable', 15)
    """
    from ...rendering.sweep_table import check_table, write_table
    from .. import options
    from .sources import pair_source_is_netlist, prepare_sweep

    paths = list(devices) if isinstance(devices, list | tuple) else [devices]
    if not paths:
        raise InputError("sweep: give at least one device")
    specifications = _specifications(vary)
    tolerances = _tolerances(tolerance)
    if specifications and tolerances:
        raise InputError("sweep: give --vary (a grid) or --tolerance (Monte Carlo), not both")
    if distribution not in DISTRIBUTIONS:
        raise InputError(f"--distribution {distribution!r}: accepted: {', '.join(DISTRIBUTIONS)}")
    samples = options.samples(samples, "--samples")
    seed = options.seed(seed, "--seed")
    chunk_size = options.optional(options.chunk_size, chunk_size, "--chunk-size")
    workers = options.optional(options.workers, workers, "--workers")
    threads = options.optional(options.threads, threads, "--threads")
    scheduler = options.optional(options.scheduler, scheduler, "--scheduler")
    # The table's target is checked before anything is read or run: a writable place, never
    # an input of the run (nor a file a netlist or the load names), never a special file.
    target = options.output_targets({"--output": output}, [*paths, load]).get("--output")
    if target is not None:
        check_table(target, 0)  # its format now; CSV's row limit once the plan is known
    if frequency_hz is None and pair_source_is_netlist(paths[0]) and pair_source_is_netlist(load):
        raise InputError("give both --start and --stop (e.g. 1MHz and 6GHz)")
    arguments = options.pair_arguments(
        measurement_impedance_ohm=measurement_impedance_ohm,
        device_dc_resistance_ohm=device_dc_resistance_ohm,
        load_dc_resistance_ohm=load_dc_resistance_ohm,
        frequency_hz=frequency_hz,
        measurement_option="--reference-impedance",
    )
    del arguments["load_setup"], arguments["gamma_uncertainty"]
    prepared = prepare_sweep(paths, load, **arguments)
    plan = _plan(specifications, tolerances, log, prepared, samples, seed, distribution)
    if target is not None:
        check_table(target, plan.variants)
    from .runner import run_sweep

    done = [0]

    def advance(variants: int) -> None:
        done[0] += variants
        if progress is not None:
            progress(done[0], plan.variants)

    run = run_sweep(
        plan,
        prepared.source,
        prepared.source.frequency_hz,
        prepared.source.reference_impedance_ohm,
        chunk_size=chunk_size,
        scheduler=scheduler,
        workers=workers,
        threads=threads,
        progress=advance,
    )
    table_path = None
    if target is not None and run.completed:
        # Whatever stopped the run, the finished variants are written, marked partial.
        table_path = str(write_table(run.table, target, plan.variants))
    return SweepResult(
        run=run,
        summary=summarise(run, prepared.source),
        inputs=tuple(prepared.inputs),
        warnings=tuple(prepared.warnings),
        table_path=table_path,
    )


def _specifications(vary: Any) -> list[tuple[str, float, float, int]]:
    """``vary`` as (name, start, stop, count) tuples, read as ``--vary`` is."""
    if isinstance(vary, str):
        vary = [vary]
    if isinstance(vary, Mapping):
        texts = []
        for name, spec in vary.items():
            if isinstance(spec, str) or len(tuple(spec)) != 3:
                raise InputError(
                    f"--vary {name}: give (START, STOP, COUNT), e.g. {{'R': (1, 100, 41)}}"
                )
            start, stop, count = spec
            texts.append(f"{name}={start}:{stop}:{count}")
        vary = texts
    return [parse_vary(str(text)) for text in vary]


def _tolerances(tolerance: Any) -> list[tuple[str, float]]:
    """``tolerance`` as (name, fraction) pairs, read as ``--tolerance`` is."""
    if isinstance(tolerance, str):
        tolerance = [tolerance]
    if isinstance(tolerance, Mapping):
        texts = []
        for name, value in tolerance.items():
            if isinstance(value, str):
                texts.append(f"{name}={value.strip()}")
            elif isinstance(value, int | float) and not isinstance(value, bool):
                texts.append(f"{name}={value * 100!r}%")
            else:
                raise InputError(f"--tolerance {name}: give a fraction (0.05) or text ('5%')")
        tolerance = texts
    return [parse_tolerance(str(text)) for text in tolerance]


def _plan(
    specifications: list[tuple[str, float, float, int]],
    tolerances: list[tuple[str, float]],
    log: Sequence[str],
    prepared: Any,
    samples: int,
    seed: int,
    distribution: str,
) -> SweepPlan:
    """The variants: a grid (device files first), or a Monte Carlo run; names as the netlists
    spell them."""
    from .sources import DEVICE_INDEX

    known = {name.lower(): name for name in prepared.parameters}
    for name in [s[0] for s in specifications] + [t[0] for t in tolerances]:
        if name.lower() not in known:
            listed = ", ".join(prepared.parameters) or "none (no netlist parameters)"
            raise InputError(f"sweep: no netlist parameter {name!r} (known: {listed})")
    specifications = [(known[s[0].lower()], *s[1:]) for s in specifications]
    tolerances = [(known[t[0].lower()], t[1]) for t in tolerances]
    if prepared.devices > 1:
        specifications.insert(0, (DEVICE_INDEX, 0.0, prepared.devices - 1.0, prepared.devices))
        if tolerances:
            raise InputError("sweep: Monte Carlo over a list of device files is not supported")
    if tolerances:
        return monte_carlo_plan(tolerances, prepared.parameters, samples, seed, distribution)
    if not specifications:
        raise InputError(
            "sweep: nothing to vary: give --vary, --tolerance, or several device files"
        )
    return grid_plan(specifications, [known.get(n.lower(), n) for n in log])
