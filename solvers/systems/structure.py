"""Block-triangular order of a square system from its incidence structure.

Which unknowns each equation uses is a bipartite graph. A perfect matching pairs each
equation with one unknown it uses (augmenting paths, Kuhn's algorithm: the systems typed
by hand have tens of equations, not thousands); equation i then depends on equation k when
i uses the unknown matched to k. The strongly connected parts of that dependency graph
(Tarjan's algorithm) are the blocks, and Tarjan emits a block only after every block it
depends on: the order in which the blocks can be solved one after another (the
Dulmage-Mendelsohn fine decomposition of a structurally nonsingular square system).
Pure Python on index lists; no numerics.
"""

from __future__ import annotations

from collections.abc import Sequence

Block = tuple[tuple[int, ...], tuple[int, ...]]  # (equation indices, unknown indices)


def perfect_matching(incidence: Sequence[Sequence[bool]]) -> list[int] | None:
    """unknown matched to each equation (a list over equations), or None when no perfect
    matching exists (the system is structurally singular: its Jacobian is singular for
    every value of the unknowns)."""
    n = len(incidence)
    owner: list[int | None] = [None] * n  # unknown j -> equation matched to it
    uses = [[j for j, on in enumerate(row) if on] for row in incidence]

    def augment(i: int, seen: list[bool]) -> bool:
        for j in uses[i]:
            if not seen[j]:
                seen[j] = True
                k = owner[j]
                if k is None or augment(k, seen):
                    owner[j] = i
                    return True
        return False

    for i in range(n):
        if not augment(i, [False] * n):
            return None
    match = [0] * n
    for j, i in enumerate(owner):
        match[i] = j  # type: ignore[index]
    return match


def block_order(incidence: Sequence[Sequence[bool]]) -> tuple[Block, ...]:
    """The blocks of a square system in an order they can be solved in, one after another.

    Each block is (equation indices, unknown indices), both sorted. A structurally singular
    system (no perfect matching) is one block of everything: no order would be honest.
    """
    n = len(incidence)
    match = perfect_matching(incidence)
    if match is None:
        return ((tuple(range(n)), tuple(range(n))),)
    equation_of = {j: i for i, j in enumerate(match)}
    depends = [[equation_of[j] for j, on in enumerate(row) if on and equation_of[j] != i]
               for i, row in enumerate(incidence)]
    index = [-1] * n
    low = [0] * n
    on_stack = [False] * n
    stack: list[int] = []
    blocks: list[Block] = []
    counter = 0
    for root in range(n):  # iterative Tarjan: no recursion limit on long chains
        if index[root] >= 0:
            continue
        work = [(root, 0)]
        while work:
            v, pos = work.pop()
            if pos == 0:
                index[v] = low[v] = counter
                counter += 1
                stack.append(v)
                on_stack[v] = True
            for p in range(pos, len(depends[v])):
                w = depends[v][p]
                if index[w] < 0:
                    work.append((v, p + 1))
                    work.append((w, 0))
                    break
                if on_stack[w]:
                    low[v] = min(low[v], index[w])
            else:
                if low[v] == index[v]:
                    members = []
                    while True:
                        w = stack.pop()
                        on_stack[w] = False
                        members.append(w)
                        if w == v:
                            break
                    eqs = tuple(sorted(members))
                    blocks.append((eqs, tuple(sorted(match[i] for i in eqs))))
                if work:
                    parent = work[-1][0]
                    low[parent] = min(low[parent], low[v])
    return tuple(blocks)
