"""Veto candidate spans that are clinical numbers: blood pressures, strengths, doses, scores, times.

Regex and NER detectors see "120/80", "5/5", "2/6", "1:100" or "2019" as
possible dates or ids. This suppressor looks at the text around a candidate
and vetoes it when a clinical number shape (kept as data in
``deid/data/clinical_numbers.yaml``, with examples) covers the whole span.
Covering matters: "BP 120/80" vetoes a candidate "120/80" but never the date
"3/4/2019" sitting next to it.

Spans from label-value fields (``field.v1``) and rosters are never vetoed;
the resolver guarantees that, and this class checks it again for safety.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

from deid.config import Example, parse_example
from deid.detectors.base import detector_of
from deid.errors import ConfigError
from deid.model import LABELS, Note, Span
from deid.registry import detectors
from deid.resources import data_file

NAME = "clinical_numbers.v1"
#: Detectors whose spans no suppressor may veto.
PROTECTED_DETECTORS = frozenset({"field.v1", "roster.v1"})
_FLAGS = {"IGNORECASE": re.IGNORECASE, "MULTILINE": re.MULTILINE}


@dataclass(frozen=True, slots=True)
class Shape:
    """One clinical number shape with its examples."""

    name: str
    patterns: tuple[re.Pattern[str], ...]
    source: str
    suppress: tuple[Example, ...]
    keep: tuple[Example, ...]


@dataclass(frozen=True, slots=True)
class ShapeTable:
    """The loaded data file: which labels to consider, how far to look, which shapes."""

    labels: frozenset[str]
    window: int
    shapes: tuple[Shape, ...]


def _fail(file: str, entry: str, reason: str) -> ConfigError:
    return ConfigError(f"clinical number file {file}: entry {entry}: {reason}")


def _examples(raw: Any, file: str, entry: str, key: str) -> tuple[Example, ...]:
    if not isinstance(raw, list) or not raw:
        raise _fail(file, entry, f"examples.{key} must be a non-empty list of strings")
    out: list[Example] = []
    for i, item in enumerate(raw):
        if not isinstance(item, str):
            raise _fail(file, entry, f"examples.{key} item {i} is not a string")
        try:
            example = parse_example(item)
        except ValueError as exc:
            raise _fail(file, entry, f"examples.{key} item {i}: {exc}") from None
        if not example.spans:
            raise _fail(file, entry, f"examples.{key} item {i} marks no candidate with [[...]]")
        out.append(example)
    return tuple(out)


def _shape(raw: Any, file: str, index: int, units: str) -> Shape:
    if not isinstance(raw, Mapping):
        raise _fail(file, f"#{index}", "is not a mapping")
    name = raw.get("name")
    entry = repr(name) if isinstance(name, str) else f"#{index}"
    allowed = {"name", "regex", "flags", "source", "examples"}
    for key in raw:
        if key not in allowed:
            raise _fail(file, entry, f"unknown key {key!r}; known: {', '.join(sorted(allowed))}")
    for key in ("name", "regex", "source", "examples"):
        if key not in raw:
            raise _fail(file, entry, f"missing key {key!r}")
    regexes = [raw["regex"]] if isinstance(raw["regex"], str) else raw["regex"]
    if not isinstance(regexes, list) or not all(isinstance(r, str) for r in regexes) or not regexes:
        raise _fail(file, entry, "regex must be a string or a list of strings")
    flags = 0
    for flag in raw.get("flags", []):
        if flag not in _FLAGS:
            raise _fail(file, entry, f"unknown flag {flag!r}")
        flags |= _FLAGS[flag]
    patterns: list[re.Pattern[str]] = []
    for i, source in enumerate(regexes):
        try:
            patterns.append(re.compile(source.replace("{UNITS}", units), flags))
        except re.error as exc:
            raise _fail(file, entry, f"regex {i} does not compile: {exc}") from None
    examples = raw["examples"]
    if not isinstance(examples, Mapping) or set(examples) != {"suppress", "keep"}:
        raise _fail(file, entry, "examples must be a mapping with exactly 'suppress' and 'keep'")
    return Shape(str(name), tuple(patterns), str(raw["source"]),
                 _examples(examples["suppress"], file, entry, "suppress"),
                 _examples(examples["keep"], file, entry, "keep"))


def load_shapes(path: Path | None = None) -> ShapeTable:
    """Load and check the clinical number data file (default: the built-in one).

    Raises:
        ConfigError: Naming the file, the entry and the reason of the first problem.
    """
    path = path or data_file("clinical_numbers.yaml")
    file = path.name
    try:
        doc = yaml.safe_load(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise ConfigError(f"clinical number file {file} cannot be read ({type(exc).__name__})") from None
    except yaml.YAMLError:
        raise ConfigError(f"clinical number file {file}: not valid YAML") from None
    if not isinstance(doc, Mapping) or set(doc) != {"labels", "window", "units", "shapes"}:
        raise ConfigError(f"clinical number file {file}: needs exactly labels, window, units and shapes")
    labels = doc["labels"]
    if not isinstance(labels, list) or any(label not in LABELS for label in labels):
        raise ConfigError(f"clinical number file {file}: labels must be a list of known labels")
    window = doc["window"]
    if isinstance(window, bool) or not isinstance(window, int) or window < 0:
        raise ConfigError(f"clinical number file {file}: window must be a whole number >= 0")
    units = doc["units"]
    if not isinstance(units, list) or not units or not all(isinstance(u, str) and u for u in units):
        raise ConfigError(f"clinical number file {file}: units must be a list of strings")
    # NOTE: longest first, so "mg/dL" wins over "mg" in the alternation.
    alternation = "|".join(re.escape(u) for u in sorted(set(units), key=len, reverse=True))
    shapes = doc["shapes"]
    if not isinstance(shapes, list):
        raise ConfigError(f"clinical number file {file}: shapes must be a list")
    return ShapeTable(frozenset(labels), window,
                      tuple(_shape(raw, file, i, alternation) for i, raw in enumerate(shapes)))


class ClinicalNumberSuppressor:
    """A :class:`~deid.detectors.base.Suppressor` for clinical number shapes.

    Args:
        table: The loaded shapes (see :func:`load_shapes`).
    """

    name = NAME

    def __init__(self, table: ShapeTable) -> None:
        self.table = table

    def covering_shape(self, text: str, start: int, end: int) -> str | None:
        """Name of the first shape whose match covers ``text[start:end]``, or ``None``."""
        lo = max(0, start - self.table.window)
        hi = min(len(text), end + self.table.window)
        for shape in self.table.shapes:
            for pattern in shape.patterns:
                # NOTE: pos/endpos instead of slicing, so \b and look-behinds
                # still see the characters just outside the window.
                for match in pattern.finditer(text, lo, hi):
                    if match.start() <= start and match.end() >= end:
                        return shape.name
                    if match.start() > start:
                        break
        return None

    def suppresses(self, note: Note, span: Span) -> bool:
        """True when ``span`` is one of the clinical number shapes in ``note``."""
        if span.label not in self.table.labels or detector_of(span.source) in PROTECTED_DETECTORS:
            return False
        return self.covering_shape(note.text, span.start, span.end) is not None


@detectors.register(NAME)
def make_clinical_numbers(path: Path | None = None) -> ClinicalNumberSuppressor:
    """Factory registered as ``clinical_numbers.v1``; ``path`` overrides the built-in data file."""
    return ClinicalNumberSuppressor(load_shapes(path))


def shape_names(table: ShapeTable) -> Sequence[str]:
    """Names of the shapes in ``table``, in file order."""
    return [shape.name for shape in table.shapes]
