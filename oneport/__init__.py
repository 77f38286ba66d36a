"""oneport: will this negative-resistance one-port oscillate into that load?

The public API is small: :func:`check` runs the small-signal stability check on a device and a
load (paths, scikit-rf Networks or :class:`OnePort` records) and returns a frozen
:class:`CheckResult`; :func:`read_one_port` reads a Touchstone one-port safely.
"""

from .analysis.result import CheckResult
from .errors import FileFormatError, InputError, NoOverlapError, OneportError
from .products.check import check
from .products.stabilise import stabilise
from .reading.touchstone import OnePort, read_one_port

__all__ = [
    "CheckResult",
    "FileFormatError",
    "InputError",
    "NoOverlapError",
    "OnePort",
    "OneportError",
    "check",
    "read_one_port",
    "stabilise",
]
__version__ = "0.1.0"
