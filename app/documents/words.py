"""The safety caution every output of zerotrace carries, written once.

The README, the help and about pages, the calculation sheet, every CSV file and every
``--json`` document carry :data:`CAUTION` word for word; only the window's status bar,
which has room for one short line, shows :data:`CAUTION_LINE`, and the window's help and
about pages carry the full text.

The full text has no comma, so its CSV metadata line stays a plain ``# caution: ...``
line (a line with a comma must be quoted to stay one spreadsheet cell).
"""

from __future__ import annotations

CAUTION = (
    "zerotrace gives a numerical solution of the equation exactly as it was entered; it "
    "does not show that the equation is the right one for the design. Check the equation "
    "and every input and its units before relying on the result. The result must be "
    "reviewed by a qualified engineer; local codes and licensed engineering practice govern."
)

# The status bar's one-line form: the same three demands, no more.
CAUTION_LINE = (
    "Check the equation, inputs and units. Results need review by a qualified engineer; "
    "local codes and licensed engineering practice govern."
)
