"""The zerotrace desktop window (PySide6).

``MainWindow()`` builds the window with no arguments; ``main(argv=None)`` creates the
QApplication, shows the window with a bundled sample (or the worksheet named in argv)
and runs the event loop. Modules:

* ``main_window``  MainWindow and main(): composes the regions, wires panels and jobs
* ``document``  WorksheetDocument: worksheet, file, parsed equation, results, staleness
* ``file_actions``  open, save, recent, samples, CSV/PDF exports, recovery
* ``actions``   the actions, shortcuts and menus, as tables
* ``jobs``      solve, polish and scan jobs run off the UI thread
* ``roots``     roots list, scan summary and progress, design value
* ``equation_strip``  editor, typeset equation and derivative, unknown, status line
* ``inputs``    parameters table, start values, stopping rules, Solve / Scan range
* ``canvas``    embedded matplotlib plots (function with method path; convergence)
* ``lanes``     one lane per method: summary and iteration table
* ``models``    QAbstractTableModels over Run/Step, Root and parameters
* ``views``     table views that copy as tab-separated text
* ``workers``   job runner on Python threads (progress, cancel, newest-request-wins)
* ``recovery``  autosave of unsaved work, offered at the next start
* ``dialogs``   help, about (with the safety caution), calculation details

``app/gui_screenshots.py`` grabs the window at its main states (docs/screenshots).
"""

from __future__ import annotations

from typing import Any

__all__ = ["MainWindow", "main"]


def __getattr__(name: str) -> Any:
    # Imported on first use so `import app.window` stays light (the CLI imports it).
    if name in __all__:
        import importlib

        module = importlib.import_module("app.window.main_window")
        return getattr(module, name)
    raise AttributeError(name)
