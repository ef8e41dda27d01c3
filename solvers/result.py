"""Former home of the run records (now :mod:`solvers.records`).

Nothing in the tree imports it; it stays only so that branches written before the move
still import. Delete it once no branch does.
"""

from solvers.records import *  # noqa: F403
from solvers.records import __all__ as __all__
