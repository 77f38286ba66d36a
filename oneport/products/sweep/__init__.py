"""Sweeps and tolerance analysis: the single check for thousands of variants at once.

``product.py`` is the product, :func:`sweep` (``oneport.sweep``): it prepares, plans, runs and
summarises into a frozen ``SweepResult`` (``summary.py``), whose ``to_dict()`` is the command's
JSON. ``plan.py`` turns ``--vary`` and ``--tolerance`` into parameter arrays, ``runner.py``
evaluates them chunk by chunk (in this process or on a Dask cluster) through
:func:`oneport.analysis.variants.analyse_variants` into one per-variant table, ``sources.py``
says where a variant's reflections come from and ``summary.py`` condenses the table. Writing
the table and drawing it are rendering (``oneport.rendering.sweep_table``, ``sweep_plots``).
"""

from .plan import SweepPlan, grid_plan, monte_carlo_plan
from .product import sweep
from .runner import SweepRun, run_sweep
from .summary import SweepResult, SweepSummary

__all__ = [
    "SweepPlan",
    "SweepResult",
    "SweepRun",
    "SweepSummary",
    "grid_plan",
    "monte_carlo_plan",
    "run_sweep",
    "sweep",
]
