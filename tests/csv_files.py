"""Reading zerotrace's CSV files back as a script would: '#' metadata lines first, then
one header row and the rows (Python's csv module; floats are read back with float())."""

from __future__ import annotations

import csv
from pathlib import Path


def read_results(path: Path) -> tuple[list[str], list[dict[str, str]]]:
    """(the '#' lines, the rows as dicts by header). Every metadata line must start with
    '#' (never quoted) and come before the header: a reader skipping comment lines then
    sees the table alone."""
    lines = Path(path).read_text(encoding="utf-8").splitlines()
    meta = [line for line in lines if line.startswith("#")]
    assert lines[:len(meta)] == meta, "a line without '#' stands among the metadata lines"
    return meta, list(csv.DictReader(lines[len(meta):]))
