"""String arrangements: every way a count of modules forms equal strings in parallel.

Parallel strings on one MPPT input must be of equal length (common practice: unequal strings pull each other
off their maximum-power voltage), so ``n`` modules on one controller form ``s`` in series × ``p`` in parallel
with ``s · p = n`` exactly. Nothing is rounded: a count is arranged in full or not at all.
"""

from __future__ import annotations


def factorisations(count: int) -> list[tuple[int, int]]:
    """Every (modules per string, strings) with ``per × strings == count``, longest strings first."""
    if count <= 0:
        return []
    return [(per, count // per) for per in range(count, 0, -1) if count % per == 0]


def nearest_arrangements(count: int, modules_per_string: int) -> list[tuple[int, int]]:
    """The arrangements of all ``count`` modules whose string length is nearest ``modules_per_string``.

    One or two of them (one shorter, one longer, equally near); the longer comes first, as a longer string keeps
    its maximum-power voltage above a battery's in hot sun, the usual limit for a few modules on a 48 V bus.
    """
    options = factorisations(count)
    if not options:
        return []
    best = min(abs(per - modules_per_string) for per, _ in options)
    return [(per, strings) for per, strings in options if abs(per - modules_per_string) == best]


def describe(per: int, strings: int) -> str:
    """"2 strings of 3" in words."""
    return f"{strings} string{'s' if strings != 1 else ''} of {per}"
