"""A mechanical engineer's trial of the window, each finding pinned with real key and
mouse events on the real widgets (pytest-qt, offscreen); numbered as in
tests/test_trial_mechanical.py.

Invented scenario: the first forward critical speed of an overhung fan disc, the speed N
typed in rpm. Outside references: numpy.roots on the disc's quadratic in w^2, NIST SP 811
for the rpm (1 rpm = 1.047198E-01 rad/s).
"""

from __future__ import annotations

import pytest
from PySide6.QtCore import Qt
from PySide6.QtTest import QTest

pytest.register_assert_rewrite("gui_helpers")
from gui_helpers import solve_by_keys, type_equation, type_into  # noqa: E402
from test_gui_trial_thermal import (  # noqa: E402
    choose_unknown_by_keys,
    fill_values,
    set_unknown_unit,
)
from test_trial_mechanical import DISC, DISC_VALUES, RPM, disc_critical_rad_s  # noqa: E402

pytest_plugins = ("gui_helpers",)


def type_disc(qtbot, w, speed: str) -> None:
    """The disc's frequency equation typed in with w = ``speed``, its values with their
    units, the unknown N chosen by keys and rpm typed into the unit box."""
    type_equation(qtbot, w, DISC.format(w=speed))
    choose_unknown_by_keys(qtbot, w, "N")
    fill_values(qtbot, w, DISC_VALUES)
    set_unknown_unit(qtbot, w, "rpm")


# 1 (the window). w = 2*pi*N/60 with N in rpm solved to 34,594 rpm and the window said
# nothing; the status line now names the product with pi, and w = N solves to the
# critical speed of numpy.roots.
def test_1_the_status_line_names_rpm_converted_twice(qtbot, window):
    w = window
    type_disc(qtbot, w, "2*pi*N/60")
    qtbot.waitUntil(lambda: "converts it a second time" in w.strip.status.text(),
                    timeout=10_000)
    # a warning, not beside a tick: the root it leads to is 9.55 times off
    assert w.strip.status.text().startswith("⚠ ")
    type_disc(qtbot, w, "N")
    qtbot.waitUntil(lambda: "converts it a second time" not in w.strip.status.text(),
                    timeout=10_000)
    assert "rad/s" in w.strip.status.text()
    assert w.strip.status.text().startswith("✓ ")
    type_into(qtbot, w.inputs.fields["x0"], "3000")
    QTest.keyClick(w.inputs.fields["x0"], Qt.Key.Key_Return)
    solution = solve_by_keys(qtbot, w)
    expected = disc_critical_rad_s() / RPM  # numpy.roots, NIST SP 811's rpm
    converged = [r for r in solution.runs if r.converged]
    assert converged
    for run in converged:
        assert run.root == pytest.approx(expected, rel=1e-6)


# 11 (the window). Changing the unknown's unit box from rpm to Hz turned a start value of
# 3000 rpm into 314.159 Hz (SI's reading: rpm in rad/s, Hz in 1/s); a shaft's speed of
# 3000 rev/min is 50 rev/s, 50 Hz (NIST SP 811: 1 r/min = 1/60 r/s). A revolution is now
# counted as one cycle, and the status bar says so.
def test_11_rpm_to_hz_in_the_unit_box_counts_a_revolution_as_a_cycle(qtbot, window):
    w = window
    type_disc(qtbot, w, "N")
    type_into(qtbot, w.inputs.fields["x0"], "3000")
    QTest.keyClick(w.inputs.fields["x0"], Qt.Key.Key_Return)
    type_into(qtbot, w.strip.unit_box, "Hz")
    QTest.keyClick(w.strip.unit_box, Qt.Key.Key_Return)
    qtbot.waitUntil(lambda: w.inputs.fields["x0"].value() is not None
                    and abs(w.inputs.fields["x0"].value() - 50.0) < 1e-9, timeout=10_000)
    assert "a revolution counted as one cycle" in w.statusBar().currentMessage()
