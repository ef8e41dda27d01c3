"""STUB: being written (root-finding methods)."""
from __future__ import annotations

def newton(f, x0, *, fprime=None, damping=1.0, **kw): raise NotImplementedError
def secant(f, x0, x1, **kw): raise NotImplementedError
def false_position(f, a, b, **kw): raise NotImplementedError
def illinois(f, a, b, **kw): raise NotImplementedError
def bisection(f, a, b, **kw): raise NotImplementedError
def brent(f, a, b, **kw): raise NotImplementedError
METHODS = {}
