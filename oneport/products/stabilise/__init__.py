"""Stabilising advice: which network, where, and how much, so the pair is stable with margin.

``stabilise(device, load, ...)`` scans families of lossy networks at the device's port (and
resistors inside a load netlist), finds the values for which the check says "stable", refines
the edges, recommends a value with the requested margin at the least cost, and verifies it with
the full check. See docs/stabilise.md.
"""

from .advice import stabilise
from .result import StabiliseResult, Suggestion

__all__ = ["StabiliseResult", "Suggestion", "stabilise"]
