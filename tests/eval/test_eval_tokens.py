"""Tokenisation and full-cover rule used by token-level scores (deid/eval/tokens.py)."""

from __future__ import annotations

import doctest

import pytest

import deid.eval.tokens as tokens_module
from deid.eval.tokens import covered, merge, tokens_in


def test_doctests() -> None:
    assert doctest.testmod(tokens_module).failed == 0


# Expected values worked out by hand from the rule in the module docstring.
@pytest.mark.parametrize(
    ("text", "ranges", "expected"),
    [
        ("Ann Lee", [(0, 7)], [(0, 3), (4, 7)]),
        ("03/04/2021", [(0, 10)], [(0, 2), (3, 5), (6, 10)]),
        ("call 555-0142.", [(5, 14)], [(5, 8), (9, 13)]),
        ("age45", [(3, 5)], [(3, 5)]),  # clipped at the span's edge
        ("--/--", [(0, 5)], []),  # no letters or digits: nothing to leak
        ("snake_case", [(0, 10)], [(0, 5), (6, 10)]),  # underscore is punctuation here
        ("Zoë Ñúñez", [(0, 9)], [(0, 3), (4, 9)]),  # Unicode letters count
        ("Ann Lee", [(0, 3), (2, 7)], [(0, 3), (4, 7)]),  # overlapping spans count a token once
    ],
)
def test_tokens_in(text: str, ranges: list[tuple[int, int]], expected: list[tuple[int, int]]) -> None:
    assert tokens_in(text, ranges) == expected


@pytest.mark.parametrize(
    ("tokens", "ranges", "expected"),
    [
        ([(0, 5)], [(0, 5)], [True]),
        ([(0, 5)], [(0, 3)], [False]),  # partial cover is a leak
        ([(0, 5)], [(0, 3), (3, 5)], [True]),  # the union of two touching spans covers it
        ([(0, 5)], [(0, 2), (3, 5)], [False]),  # a gap of one character leaks
        ([(0, 3), (4, 7), (8, 9)], [(4, 9)], [False, True, True]),
        ([(4, 7), (0, 3)], [(0, 3)], [False, True]),  # order of tokens does not matter
        ([(0, 3)], [], [False]),
    ],
)
def test_covered_needs_full_cover(
    tokens: list[tuple[int, int]], ranges: list[tuple[int, int]], expected: list[bool]
) -> None:
    assert covered(tokens, ranges) == expected


def test_merge_joins_touching_and_overlapping() -> None:
    assert merge([(10, 12), (0, 2), (2, 4), (3, 6)]) == [(0, 6), (10, 12)]
