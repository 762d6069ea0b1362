"""Every example of every pattern entry: must-match finds exactly the marked text, must-not-match finds nothing.

The examples are invented sentences written next to each entry in
``patterns/*.yaml``; the marked pieces (``[[...]]``) are what the entry has to
find, nothing more and nothing less.
"""

from __future__ import annotations

import pytest

from deid.config import Example, PatternSpec, load_pattern_specs
from deid.detectors.patterns import find_all

SPECS = load_pattern_specs()


def _cases() -> list[pytest.param]:
    cases = []
    for spec in SPECS:
        for i, example in enumerate(spec.must_match):
            cases.append(pytest.param(spec, example, id=f"{spec.file}:{spec.name}:match{i}"))
        for i, text in enumerate(spec.must_not_match):
            cases.append(pytest.param(spec, text, id=f"{spec.file}:{spec.name}:no_match{i}"))
    return cases


@pytest.mark.parametrize(("spec", "example"), _cases())
def test_pattern_example(spec: PatternSpec, example: Example | str) -> None:
    if isinstance(example, Example):
        found = find_all(spec, example.text)
        wanted = sorted(example.spans)
        assert found == wanted, [example.text[s:e] for s, e in found]
    else:
        found = find_all(spec, example)
        assert found == [], [example[s:e] for s, e in found]
