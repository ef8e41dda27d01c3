"""Former home of the run records, kept so older imports work: see :mod:`solvers.records`."""

from solvers.records import *  # noqa: F403
from solvers.records import __all__ as __all__
