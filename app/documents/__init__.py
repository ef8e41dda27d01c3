"""Documents: everything zerotrace writes or shows in words and pictures.

The worksheet file (JSON, limits, atomic saves), the words every front end prints, the
figures (data computed apart from drawing), CSV/JSON export and the PDF calculation
sheet. These modules turn the core's records (codes and numbers, from :mod:`solvers`)
into text, pictures and files; they import :mod:`solvers`, never the other way round.
"""
