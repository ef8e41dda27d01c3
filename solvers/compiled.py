"""The one way the core compiles its own loops: :data:`kernel`.

Most of the core is numpy over arrays. Where an element-wise method needs dozens of
numpy operations per iteration on every row (Brent's bracket update over a table, the
scan's passes over its samples), each operation costs a call and a pass over memory;
one compiled loop over the rows does the same arithmetic in one pass. numba compiles
such loops from plain Python:

* ``nogil=True``: a kernel releases the GIL, so a table solved in a worker thread leaves
  the window's thread free.
* ``error_model="numpy"``: a division by zero gives inf or NaN as numpy does (the
  methods test for them), never an exception raised from inside a loop.
* no fast-math: every operation is IEEE double arithmetic in the written order, so a
  kernel that transcribes a scalar method's formulas gives the scalar method's bits.
* ``cache=True``: compiled code is kept beside the module (or in numba's user cache when
  that is read-only) and reused by later processes; the first call in a fresh install
  pays the compilation once.

A kernel takes and returns numbers and numpy arrays only, never the user's f: f is
evaluated outside, vectorised, by the compiled numpy code of the equation.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

from numba import njit

_CACHED = njit(cache=True, nogil=True, error_model="numpy")
_IN_MEMORY = njit(nogil=True, error_model="numpy")


def kernel(loop: Callable[..., Any]) -> Any:
    """Decorator: compile a loop over numbers and arrays (see the module notes).

    Where numba finds no writable place for its cache (a read-only install with no
    writable home or cache folder: it refuses at decoration with a RuntimeError), the
    loop is compiled in memory instead, once per process: slower to start, never broken.
    """
    try:
        return _CACHED(loop)
    except RuntimeError:
        return _IN_MEMORY(loop)
