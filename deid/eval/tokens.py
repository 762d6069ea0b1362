"""The tokens that token-level leakage scores count.

Rule (kept deliberately simple so anyone can recount by hand):

* A *token* is a maximal run of letters and digits (``[^\\W_]+``, Unicode
  aware). Punctuation, spaces and underscores are never counted: a leaked
  hyphen identifies no one.
* Tokens are cut *inside a region*: the gold tokens of a note are the runs
  inside the union of its gold spans, clipped at the spans' edges. So when a
  gold span ends in the middle of a word (``45`` in ``age45``) only the part
  inside the span counts, and a prediction need not cover ``age`` as well.
* A token is *covered* by a set of spans only when the union of those spans
  contains every one of its characters. Partial cover counts as a leak: a
  recall-first reviewer treats ``Smi[...]`` as a leaked surname (common
  practice in de-identification evaluation, which errs towards recall).

>>> tokens_in("Pt Ann-Marie, 45y", [(3, 17)])
[(3, 6), (7, 12), (14, 17)]
>>> covered([(3, 6), (7, 12)], [(0, 6), (7, 10)])
[True, False]
"""

from __future__ import annotations

import re
from bisect import bisect_right
from collections.abc import Iterable, Sequence

TOKEN = re.compile(r"[^\W_]+")

Range = tuple[int, int]


def merge(ranges: Iterable[Range]) -> list[Range]:
    """Union of half-open ranges as sorted, disjoint ranges; touching ranges join.

    >>> merge([(5, 8), (0, 3), (3, 4), (7, 9)])
    [(0, 4), (5, 9)]
    """
    merged: list[Range] = []
    for start, end in sorted(ranges):
        if merged and start <= merged[-1][1]:
            if end > merged[-1][1]:
                merged[-1] = (merged[-1][0], end)
        else:
            merged.append((start, end))
    return merged


def tokens_in(text: str, ranges: Iterable[Range]) -> list[Range]:
    """The tokens of ``text`` inside the union of ``ranges``, clipped at its edges, in order."""
    found: list[Range] = []
    for start, end in merge(ranges):
        found.extend((start + m.start(), start + m.end()) for m in TOKEN.finditer(text[start:end]))
    return found


def covered(tokens: Sequence[Range], ranges: Iterable[Range]) -> list[bool]:
    """For each token, whether the union of ``ranges`` contains all its characters."""
    union = merge(ranges)
    starts = [start for start, _ in union]
    result: list[bool] = []
    for start, end in tokens:
        # The only range that can hold the token is the last one starting at or before it.
        index = bisect_right(starts, start) - 1
        result.append(index >= 0 and end <= union[index][1])
    return result
