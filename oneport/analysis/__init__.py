"""Analysis: arrays in, analysis records out — the mathematics the verdicts rest on.

Owns the Nyquist count and loop-gain features (``nyquist``), sampling diagnostics
(``diagnostics``), Kurokawa start-up estimates (``startup``), rational fits (``rational``) and
pole–zero identification (``pole_zero``), the device's character (``character``), the
small-gain bound (``small_gain``), reflection-amplifier figures (``amplifier``), two-port
terminations (``terminations``), the check vectorised over variants (``variants``), and the
check's judgement and result (``judgement``, ``result``). It may read nothing from disk, print,
plot or exit; frequency is on the last axis of every array, units are SI.
"""
