"""Exit codes, and the one map from every product's verdict word to its exit code.

The contract (CONVENTIONS.md): 0 the property checked holds, 1 internal error (Python's own
crash code, never chosen here), 2 bad input or usage, 3 the property fails, 4 inconclusive,
130 interrupted. Results know nothing of it: each command hands its verdict word here.
"""

from __future__ import annotations

import enum


class ExitCode(enum.IntEnum):
    """Exit codes shared by every command."""

    HOLDS = 0
    INTERNAL_ERROR = 1
    BAD_INPUT = 2
    FAILS = 3
    INCONCLUSIVE = 4
    INTERRUPTED = 130


#: Every verdict word any product can give, with its exit code.
VERDICT_EXIT_CODES: dict[str, ExitCode] = {
    # stability of a pair (check, sweep, poles, amplifier with a port file, stabilise after)
    "stable": ExitCode.HOLDS,
    "unstable": ExitCode.FAILS,
    "inconclusive": ExitCode.INCONCLUSIVE,
    # a guarantee over a class of loads (return-loss bounds)
    "guaranteed": ExitCode.HOLDS,
    "not-guaranteed": ExitCode.FAILS,
    # stabilising advice (docs/stabilise.md)
    "stabilised": ExitCode.HOLDS,
    "no-change-needed": ExitCode.HOLDS,
    "not-stabilised": ExitCode.FAILS,
    # where an oscillator settles (docs/oscillator.md)
    "settles": ExitCode.HOLDS,
    "hard-excitation": ExitCode.FAILS,
    "mode-jumping": ExitCode.FAILS,
    "no-oscillation": ExitCode.FAILS,
    "latch-up": ExitCode.FAILS,
    "outside-data": ExitCode.INCONCLUSIVE,
}


def exit_code(verdict: str, *, interrupted: bool = False) -> int:
    """The exit code of a verdict word (130 when the run was interrupted)."""
    if interrupted:
        return int(ExitCode.INTERRUPTED)
    return int(VERDICT_EXIT_CODES[verdict])
