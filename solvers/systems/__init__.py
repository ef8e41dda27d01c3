"""Systems: n equations in n unknowns, with every iterate recorded.

``parse_system(text, unknowns=None, parameters=None) -> System`` reads the lines (equations
and definitions), builds the symbolic Jacobian and compiles F and J once;
``solve_system(system, x0, method="newton", ...) -> SystemRun`` runs Newton (line search on
||F||^2, Levenberg-Marquardt where J is singular) or Broyden block by block in the
block-triangular order of the incidence structure.

Modules: structure (matching, strongly connected blocks), model (System, parse_system),
iterate (the Newton and Broyden iterations, line search, stopping rules), records
(SystemStep, SystemRun, SystemCancelled), solve (SYSTEM_METHODS, solve_system).
"""

from solvers.systems.model import System, parse_system
from solvers.systems.records import SystemCancelled, SystemRun, SystemStep
from solvers.systems.solve import SYSTEM_METHODS, SystemMethod, solve_system
from solvers.systems.structure import block_order

__all__ = [
    "SYSTEM_METHODS",
    "System",
    "SystemCancelled",
    "SystemMethod",
    "SystemRun",
    "SystemStep",
    "block_order",
    "parse_system",
    "solve_system",
]
