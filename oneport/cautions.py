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

#: Added to the cautions of stabilising advice (``oneport stabilise``).
STABILISER_CAUTIONS: tuple[str, ...] = (
    "A stabilising resistor in the bias path carries the bias current and heats: rate it for at"
    " least twice its DC dissipation (I²·R in series, V²/R across the port) plus the RF"
    " power it absorbs, keep it away from heat-sensitive parts, and remember that its DC drop"
    " moves the bias point: raise the bias slowly and re-check the current.",
    "Verify the network at the bench before full bias: a part's own parasitics (a resistor's"
    " lead inductance, a capacitor's self-resonance) differ from the ideal values analysed here.",
)
