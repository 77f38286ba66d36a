"""Products: one function per command, from the user's inputs to one frozen result.

Each product (``check``, ``poles``, ``amplifier``, ``oscillator``, ``sweep``, ``terminations``,
``export``, ``stabilise``, ``watch``; exported as ``oneport.<name>``) reads through
:mod:`oneport.reading` and :mod:`oneport.circuit`, analyses through :mod:`oneport.analysis`,
and returns a frozen result whose ``to_dict()`` is the command's JSON. Its arguments are read
by ``options.py``, the one reading the commands share. It may not print or choose exit codes;
the files it is asked to write (``export``'s Touchstone file, ``sweep``'s table, ``watch``'s
reports) are drawn by :mod:`oneport.rendering`, and the command line renders the rest.
"""
