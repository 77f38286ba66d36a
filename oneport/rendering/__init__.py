"""Rendering: results to text, plots, HTML and files a person reads — and nothing else.

Every renderer formats what a frozen result holds; none computes an analysis. dB, degrees and
GHz appear here (and in ``oneport.units``), never inside results. matplotlib is imported inside
the drawing functions only, and figures are built without ``pyplot``, so importing the package
never touches the backend.
"""
