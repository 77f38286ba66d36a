"""Reading: where user files enter, and the one-port at the plane where device and load meet.

Owns the safe, strict reading of Touchstone files (``touchstone``), the record of what was read
(``records``), reference-plane and two-port array functions (``planes``), turning the named
files into a prepared one-port (``preparation``) and putting two one-ports on one grid and one
reference impedance (``alignment``). scikit-rf objects stop here: everything leaving this room
is plain numpy arrays in SI units. It may not analyse, decide verdicts, print or write files.
"""
