"""The safety cautions every report carries, in text and JSON alike.

They are general bench practice, not a substitute for local RF-exposure rules, electrical-safety
codes or the judgement of licensed practitioners, and they say so.
"""

from __future__ import annotations

CAUTIONS: tuple[str, ...] = (
    "An oscillating device can return more RF power than the VNA sends and compress or burn its"
    " receivers: keep the source power low, put attenuator pads and DC blocks at the ports,"
    " and raise bias slowly.",
    "RF burns can be deep and are not always felt at first: do not touch radiating or"
    " open-circuited lines, probes or antennas while the circuit is powered.",
    "Sequence and current-limit the bias supplies; a latched or oscillating negative-resistance"
    " device can draw unexpected current and heat up.",
    "A small-signal 'stable' verdict is not proof at full bias: watch the output on a spectrum"
    " analyser (through a pad) when bringing the circuit up.",
    "Local RF-exposure limits, electrical-safety codes and licensed practice come first; this"
    " tool's verdicts do not replace them.",
)
