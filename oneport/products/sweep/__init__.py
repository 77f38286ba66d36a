"""Sweeps and tolerance analysis: the single check for thousands of variants at once.

``plan.py`` turns ``--vary`` and ``--tolerance`` into parameter arrays, ``runner.py`` evaluates
them chunk by chunk (in this process or on a Dask cluster) through
:func:`oneport.analysis.variants.analyse_variants` into one per-variant table, ``sources.py``
says where a variant's reflections come from and ``summary.py`` condenses the table. Writing
the table and drawing it are rendering (``oneport.rendering.sweep_table``, ``sweep_plots``).
"""

from .plan import SweepPlan, grid_plan, monte_carlo_plan
from .runner import SweepResult, run_sweep

__all__ = ["SweepPlan", "SweepResult", "grid_plan", "monte_carlo_plan", "run_sweep"]
