"""The window's actions (menu entries with their shortcuts) and its menu bar, as tables.

Each action becomes ``window.<name>`` (a QAction added to the window, so its shortcut
works wherever the focus is) and calls the window method named in the table, looked up
when triggered.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import TYPE_CHECKING, Any

from PySide6.QtGui import QAction, QKeySequence

if TYPE_CHECKING:
    from app.window.main_window import MainWindow

K = QKeySequence.StandardKey
Slot = str | Callable[["MainWindow"], Any]  # a window method's name, or a call on the window

# name, text, slot, shortcut(s), tip
ACTIONS: tuple[tuple[str, str, Slot, Any, str], ...] = (
    ("new_action", "&New", "new_document", K.New, ""),
    ("open_action", "&Open…", "open_file", K.Open, ""),
    ("save_action", "&Save", "save", K.Save, ""),
    ("save_as_action", "Save &As…", "save_as", K.SaveAs, ""),
    ("export_runs_action", "Export &iteration log (CSV)…", "export_runs_csv", None,
     "Every iterate of every method, numbers written exactly"),
    ("export_roots_action", "Export roo&ts (CSV)…", "export_roots_csv", None, ""),
    ("export_pdf_action", "Export calculation s&heet (PDF)…", "export_report", None, ""),
    ("quit_action", "&Quit", "close", K.Quit, ""),
    ("calc_action", "Calculation &details…", "edit_calc_details", None, ""),
    ("solve_action", "&Solve", "solve", ("Ctrl+Return", "Ctrl+Enter"),
     "Run every method side by side"),
    ("scan_action", "Scan &range", "start_scan", ("Ctrl+Shift+Return", "Ctrl+Shift+Enter"),
     "Find every root, pole and jump in the scan range"),
    ("cancel_action", "&Cancel scan", "cancel_scan", "Esc", ""),
    ("system_action", "S&ystem of equations…", "open_system", "Ctrl+Shift+Y",
     "Several equations in several unknowns, solved side by side"),
    ("polish_action", "&Polish selected root", "polish_selected", None, ""),
    ("tables_action", "&Tables of inputs…", "open_tables", "Ctrl+T",
     "Solve the equation for every row of a table, or sweep a parameter"),
    ("design_action", "Take as &design value", "take_design_value", "Ctrl+D",
     "Record the selected root (or the converged root) as the design value"),
    ("function_view_action", "&Function plot", lambda w: w.plot.setCurrentIndex(0),
     "Ctrl+1", ""),
    ("convergence_view_action", "&Convergence plot", lambda w: w.plot.setCurrentIndex(1),
     "Ctrl+2", ""),
    ("more_digits_action", "&More significant figures", lambda w: w.step_digits(1),
     ("Ctrl+=", "Ctrl++"), ""),
    ("fewer_digits_action", "Fe&wer significant figures", lambda w: w.step_digits(-1),
     "Ctrl+-", ""),
    ("help_action", "&Using zerotrace", "show_help", K.HelpContents, ""),
    ("about_action", "&About zerotrace", "show_about", None, ""),
)

# menu title, entries: an action's name, None for a separator, or (submenu name, title)
MENUS: tuple[tuple[str, tuple[Any, ...]], ...] = (
    ("&File", ("new_action", "open_action", ("recent_menu", "Open &recent"),
               ("samples_menu", "Sa&mples"), None, "save_action", "save_as_action", None,
               "export_runs_action", "export_roots_action", "export_pdf_action", None,
               "quit_action")),
    ("&Edit", ("calc_action",)),
    ("&Run", ("solve_action", "scan_action", "cancel_action", "polish_action",
              "design_action", None, "system_action", "tables_action")),
    ("&View", ("function_view_action", "convergence_view_action", None,
               "more_digits_action", "fewer_digits_action")),
    ("&Help", ("help_action", "about_action")),
)


def _call(window: MainWindow, slot: Slot) -> None:
    if isinstance(slot, str):
        getattr(window, slot)()
    else:
        slot(window)


def build_actions(window: MainWindow) -> None:
    """Create every action of :data:`ACTIONS` as an attribute of ``window``."""
    for name, text, slot, shortcut, tip in ACTIONS:
        action = QAction(text, window)
        if isinstance(shortcut, tuple):
            action.setShortcuts([QKeySequence(s) for s in shortcut])
        elif shortcut is not None:
            action.setShortcut(QKeySequence(shortcut))
        if tip:
            action.setStatusTip(tip)
            action.setToolTip(tip)
        action.triggered.connect(lambda _checked=False, slot=slot: _call(window, slot))
        window.addAction(action)
        setattr(window, name, action)


def build_menus(window: MainWindow) -> None:
    """The menu bar of :data:`MENUS`; submenus become attributes of ``window``."""
    bar = window.menuBar()
    for title, entries in MENUS:
        menu = bar.addMenu(title)
        for entry in entries:
            if entry is None:
                menu.addSeparator()
            elif isinstance(entry, tuple):
                setattr(window, entry[0], menu.addMenu(entry[1]))
            else:
                menu.addAction(getattr(window, entry))
