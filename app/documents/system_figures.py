"""The convergence view of a system solve, drawn on a given matplotlib Axes (object API only),
shared by the window and the calculation sheet: ||F|| and the step length per iterate."""

from __future__ import annotations

import math
from collections.abc import Iterable
from typing import Any

from app.documents.figures import OKABE_ITO, iterate_axis
from app.documents.words import system_method_title

SYSTEM_METHOD_COLORS = {"newton": OKABE_ITO["blue"], "broyden": OKABE_ITO["vermillion"]}
_MARKERS = {"newton": "o", "broyden": "s"}


def series(run: Any, quantity: str) -> tuple[list[int], list[float]]:
    """(k, value) of ``residual_norm`` or ``step_norm`` that can go on a log axis."""
    ks, vs = [], []
    for s in run.steps:
        v = getattr(s, quantity)
        if math.isfinite(v) and v > 0:
            ks.append(s.k)
            vs.append(v)
    return ks, vs


def draw_system_convergence(ax: Any, runs: Iterable[Any]) -> None:
    """||F|| (solid, markers) and ||step|| (dotted) against k for every run, log y-axis; a
    run that did not converge is drawn dashed and says so in the legend."""
    drawn = False
    for run in runs:
        color = SYSTEM_METHOD_COLORS.get(run.method, OKABE_ITO["black"])
        title = system_method_title(run.method)
        ks, vs = series(run, "residual_norm")
        if ks:
            drawn = True
            ax.plot(ks, vs, color=color, marker=_MARKERS.get(run.method, "o"), markersize=4,
                    linewidth=1.4, linestyle="-" if run.converged else "--",
                    label=f"{title}: ||F||" + ("" if run.converged else " (did not converge)"))
        ks, vs = series(run, "step_norm")
        if ks:
            drawn = True
            ax.plot(ks, vs, color=color, linewidth=1.0, linestyle=":",
                    label=f"{title}: step length")
    if drawn:
        ax.set_yscale("log")
        # Headroom above the curves for the legend: a fast method's tail fills the lower
        # left and a slow one's the right, so no corner of the data is clear ("best" and
        # "lower left" both covered iterates). The top third of the axes is kept empty.
        low, high = ax.get_ylim()
        if low > 0 and high > low:
            ax.set_ylim(low, high * (high / low) ** 0.5)
        ax.legend(loc="upper right", fontsize="small", framealpha=0.85)
    else:
        ax.text(0.5, 0.5, "no iterates to show yet", transform=ax.transAxes, ha="center",
                va="center", color="#666666")
    iterate_axis(ax)
    ax.set_ylabel("||F||, step length")
    ax.grid(True, which="both", color="#E4E4E4", linewidth=0.6)
