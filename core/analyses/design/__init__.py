"""The design search: the best valid DC and AC designs the roof faces, modules and candidate converters allow.

One concern per file: :mod:`.spec` (the brief, from ``[design]`` or ``[expansion]``), :mod:`.strings` (equal-string
arrangements), :mod:`.candidates` (enumeration), :mod:`.costs`, :mod:`.build` (a design as a scenario, written
out), :mod:`.evaluate` (checks and batched simulation), :mod:`.rank` (order and reasons), :mod:`.search`.
"""

from core.analyses.design.search import SearchResult, best_designs, search, write_best  # noqa: F401
