"""Products: one function per command, from the user's inputs to one frozen result.

Each product (``check``, ``watch``, ``export``, ``oscillator``, ``sweep``) reads through
:mod:`oneport.reading` and :mod:`oneport.circuit`, analyses through :mod:`oneport.analysis`,
and returns a frozen result whose ``to_dict()`` is the command's JSON. It may not print, plot,
write reports or choose exit codes: rendering and the command line do that.
"""
