"""zerotrace front ends: the ``zerotrace`` command (app.cli) and the window (app.window)."""

from __future__ import annotations

from pathlib import Path


def samples_dir() -> Path:
    """The folder of bundled sample worksheets (the checkout's samples/)."""
    return Path(__file__).resolve().parent.parent / "samples"
