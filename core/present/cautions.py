"""Cautions said once: the clauses of several caution texts with every repeat taken out.

Design checks carry cautions that overlap one another and the page's standing safety notes
(:data:`core.present.safety.SAFETY_CAUTIONS`); shown side by side they would say the same thing two or three times.
"""

from __future__ import annotations

import re
from collections.abc import Iterable

# A clause ends at a full stop or semicolon, or before ", and " joining two demands in one sentence.
_SPLIT = re.compile(r"(?<=[.;])\s+|,\s+and\s+")
_WORD = re.compile(r"[a-z0-9'-]+")


def clauses(text: str) -> list[str]:
    """The clauses of a caution, without their closing punctuation."""
    return [c.strip().rstrip(".;,").strip() for c in _SPLIT.split(text) if c.strip().rstrip(".;,").strip()]


def _words(clause: str) -> frozenset[str]:
    return frozenset(_WORD.findall(clause.lower()))


def distinct_cautions(texts: Iterable[str], already: Iterable[str] = ()) -> list[str]:
    """The clauses of ``texts`` that say something new, each once, as sentences, in their first order.

    A clause is left out when every word of it is in another clause of ``texts`` (a longer one, or an earlier
    one with the same words) or in a clause of ``already`` (what the page says anyway).
    """
    said = [_words(c) for t in already for c in clauses(t)]
    items = [(c, _words(c)) for t in dict.fromkeys(texts) for c in clauses(t)]
    out: list[str] = []
    for i, (clause, words) in enumerate(items):
        if not words or any(words <= s for s in said):
            continue
        covered = any(words <= w and (len(w) > len(words) or (w == words and j < i))
                      for j, (_, w) in enumerate(items) if j != i)
        if covered:
            continue
        out.append(clause[:1].upper() + clause[1:] + ".")
    return out
