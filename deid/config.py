"""Load and check the regex pattern files (``patterns/*.yaml``) into frozen, typed specs.

Pattern file schema
===================

Every ``*.yaml`` file in the patterns folder holds a YAML list of entries. Files
are grouped by theme (``dates.yaml``, ``ids.yaml`` ...); the grouping carries no
meaning for the loader. Each entry is a mapping with these keys:

``name`` (required, string)
    Unique across all files: ``[a-z][a-z0-9_]*``. Becomes the detail part of
    ``Span.source`` (``regex.v1/<name>`` or ``field.v1/<name>``).
``label`` (required)
    One of :data:`deid.model.LABELS`.
``score`` (required, number in [0, 1])
    Confidence of a match. When a ``validator`` accepts the match the score is
    raised (see :mod:`deid.detectors.patterns`); a failed check never removes it.
``regex`` (required, string or non-empty list of strings)
    Python :mod:`re` syntax. Several regexes behave like one alternation.
``group`` (optional, string)
    Name of a ``(?P<name>...)`` group present in *every* regex of the entry;
    only that group becomes the span (``MRN: 0012345`` -> ``0012345``). Matches
    where the group did not take part are ignored.
``context`` (optional, list of strings)
    Words that raise the score when they occur just before the match
    (Presidio's context enhancer reads them).
``validator`` (optional, string)
    Name of a checksum in :data:`deid.detectors.validators.VALIDATORS`.
``field`` (optional, bool, default false)
    The entry reads a label-value header field ("DOB: ...", "Acct #: ...").
    Its spans carry the source ``field.v1/<name>`` and are never vetoed by a
    suppressor.
``flags`` (optional, list of strings)
    Any of ``IGNORECASE``, ``MULTILINE``, ``DOTALL``, ``VERBOSE``, ``ASCII``.
    Default: no flags; scoped inline flags such as ``(?i:...)`` work too.
``examples`` (required mapping)
    ``match``: list (at least two) of strings in which every piece of text
    the entry must find is wrapped in double square brackets, e.g.
    ``"MRN: [[0012345]]"``. The entry must find exactly the marked pieces,
    nothing more and nothing less. ``no_match``: list (at least two) of
    strings in which the entry must find nothing. Examples are invented.

Any problem (bad YAML, unknown or missing key, unknown label, regex that does
not compile, unknown validator, duplicate name, group missing from a regex,
example that is not a string or lacks markers ...) raises
:class:`~deid.errors.ConfigError` naming the file, the entry (name, or index
when the name is missing) and the reason; never the example text.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from dataclasses import field as dc_field
from pathlib import Path
from typing import Any

import yaml

from deid.errors import ConfigError
from deid.model import LABELS
from deid.resources import patterns_dir

#: The example marker: ``[[`` opens, ``]]`` closes a piece of text that must be found.
MARK_OPEN, MARK_CLOSE = "[[", "]]"
MIN_EXAMPLES = 2

_FLAGS: dict[str, re.RegexFlag] = {
    "IGNORECASE": re.IGNORECASE,
    "MULTILINE": re.MULTILINE,
    "DOTALL": re.DOTALL,
    "VERBOSE": re.VERBOSE,
    "ASCII": re.ASCII,
}
_REQUIRED = ("name", "label", "score", "regex", "examples")
_OPTIONAL = ("group", "context", "validator", "field", "flags")
_NAME_RE = re.compile(r"[a-z][a-z0-9_]*\Z")


@dataclass(frozen=True, slots=True)
class Example:
    """One must-match example with its markers removed.

    Attributes:
        text: The example text without markers.
        spans: ``(start, end)`` offsets into ``text`` of every marked piece.
    """

    text: str
    spans: tuple[tuple[int, int], ...]


@dataclass(frozen=True, slots=True)
class PatternSpec:
    """One checked entry of a pattern file. Build with :func:`load_pattern_specs`."""

    name: str
    label: str
    score: float
    regexes: tuple[str, ...]
    file: str
    group: str | None = None
    context: tuple[str, ...] = ()
    validator: str | None = None
    field: bool = False
    flags: int = 0
    must_match: tuple[Example, ...] = ()
    must_not_match: tuple[str, ...] = ()
    #: The regexes compiled once with ``flags`` (not part of equality).
    compiled: tuple[re.Pattern[str], ...] = dc_field(default=(), compare=False, repr=False)


def parse_example(raw: str) -> Example:
    """Strip ``[[...]]`` markers from ``raw`` and remember where they were.

    >>> parse_example("MRN: [[0012345]] seen")
    Example(text='MRN: 0012345 seen', spans=((5, 12),))

    Raises:
        ValueError: On nested, unclosed, stray or empty markers.
    """
    out: list[str] = []
    spans: list[tuple[int, int]] = []
    pos, length = 0, 0
    while pos < len(raw):
        opening = raw.find(MARK_OPEN, pos)
        closing = raw.find(MARK_CLOSE, pos)
        if closing != -1 and (opening == -1 or closing < opening):
            raise ValueError("']]' without an opening '[['")
        if opening == -1:
            out.append(raw[pos:])
            break
        out.append(raw[pos:opening])
        length += opening - pos
        end = raw.find(MARK_CLOSE, opening + 2)
        if end == -1:
            raise ValueError("'[[' is never closed")
        inner = raw[opening + 2 : end]
        if MARK_OPEN in inner or not inner:
            raise ValueError("nested or empty '[[...]]' marker")
        out.append(inner)
        spans.append((length, length + len(inner)))
        length += len(inner)
        pos = end + 2
    return Example("".join(out), tuple(spans))


def _fail(file: str, entry: str, reason: str) -> ConfigError:
    return ConfigError(f"pattern file {file}: entry {entry}: {reason}")


def _strings(value: Any, what: str, file: str, entry: str, *, allow_one: bool = False) -> tuple[str, ...]:
    if allow_one and isinstance(value, str):
        value = [value]
    if not isinstance(value, list) or not value:
        raise _fail(file, entry, f"{what} must be a non-empty list of strings")
    for i, item in enumerate(value):
        if not isinstance(item, str) or not item:
            raise _fail(file, entry, f"{what} item {i} is not a non-empty string")
    return tuple(value)


def _examples(value: Any, file: str, entry: str) -> tuple[tuple[Example, ...], tuple[str, ...]]:
    if not isinstance(value, Mapping):
        raise _fail(file, entry, "examples must be a mapping with 'match' and 'no_match'")
    unknown = set(value) - {"match", "no_match"}
    if unknown:
        raise _fail(file, entry, f"examples has unknown key {min(unknown)!r}")
    lists: dict[str, tuple[str, ...]] = {}
    for key in ("match", "no_match"):
        if key not in value:
            raise _fail(file, entry, f"examples is missing {key!r}")
        lists[key] = _strings(value[key], f"examples.{key}", file, entry)
        if len(lists[key]) < MIN_EXAMPLES:
            raise _fail(file, entry, f"examples.{key} needs at least {MIN_EXAMPLES} examples")
    matches: list[Example] = []
    for i, raw in enumerate(lists["match"]):
        try:
            example = parse_example(raw)
        except ValueError as exc:
            raise _fail(file, entry, f"examples.match item {i}: {exc}") from None
        if not example.spans:
            raise _fail(file, entry, f"examples.match item {i} marks no text with [[...]]")
        matches.append(example)
    for i, raw in enumerate(lists["no_match"]):
        if MARK_OPEN in raw or MARK_CLOSE in raw:
            raise _fail(file, entry, f"examples.no_match item {i} must not carry [[...]] markers")
    return tuple(matches), lists["no_match"]


def _flags(value: Any, file: str, entry: str) -> int:
    total = 0
    for name in _strings(value, "flags", file, entry, allow_one=True):
        if name not in _FLAGS:
            raise _fail(file, entry, f"unknown flag {name!r}; known: {', '.join(_FLAGS)}")
        total |= _FLAGS[name]
    return total


def parse_entry(raw: Any, file: str, index: int, validators: frozenset[str]) -> PatternSpec:
    """Check one entry of a pattern file and build its :class:`PatternSpec`."""
    if not isinstance(raw, Mapping):
        raise _fail(file, f"#{index}", "is not a mapping")
    name = raw.get("name")
    entry = repr(name) if isinstance(name, str) else f"#{index}"
    for key in raw:
        if key not in _REQUIRED and key not in _OPTIONAL:
            known = ", ".join(_REQUIRED + _OPTIONAL)
            raise _fail(file, entry, f"unknown key {key!r}; known: {known}")
    for key in _REQUIRED:
        if key not in raw:
            raise _fail(file, entry, f"missing key {key!r}")
    if not isinstance(name, str) or not _NAME_RE.match(name):
        raise _fail(file, entry, "name must be lower-case letters, digits and '_' starting with a letter")
    label = raw["label"]
    if label not in LABELS:
        raise _fail(file, entry, f"unknown label {label!r}")
    score = raw["score"]
    if isinstance(score, bool) or not isinstance(score, (int, float)) or not 0 <= score <= 1:
        raise _fail(file, entry, "score must be a number in [0, 1]")
    flags = _flags(raw["flags"], file, entry) if "flags" in raw else 0
    regexes = _strings(raw["regex"], "regex", file, entry, allow_one=True)
    compiled: list[re.Pattern[str]] = []
    for i, source in enumerate(regexes):
        try:
            compiled.append(re.compile(source, flags))
        except re.error as exc:
            raise _fail(file, entry, f"regex {i} does not compile: {exc}") from None
    group = raw.get("group")
    if group is not None:
        if not isinstance(group, str):
            raise _fail(file, entry, "group must be a string")
        for i, pattern in enumerate(compiled):
            if group not in pattern.groupindex:
                raise _fail(file, entry, f"group {group!r} is not in regex {i}")
    context = _strings(raw["context"], "context", file, entry) if "context" in raw else ()
    validator = raw.get("validator")
    if validator is not None and validator not in validators:
        raise _fail(file, entry, f"unknown validator {validator!r}; known: {', '.join(sorted(validators))}")
    is_field = raw.get("field", False)
    if not isinstance(is_field, bool):
        raise _fail(file, entry, "field must be true or false")
    must_match, must_not_match = _examples(raw["examples"], file, entry)
    return PatternSpec(
        name=name, label=label, score=float(score), regexes=regexes, file=file, group=group,
        context=tuple(c.lower() for c in context), validator=validator, field=is_field, flags=flags,
        must_match=must_match, must_not_match=must_not_match, compiled=tuple(compiled),
    )


def load_pattern_file(path: Path, validators: frozenset[str] | None = None) -> list[PatternSpec]:
    """Load one pattern file (names are checked for uniqueness inside it only)."""
    known = validators if validators is not None else _validator_names()
    try:
        doc = yaml.safe_load(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise ConfigError(f"pattern file {path.name} cannot be read ({type(exc).__name__})") from None
    except (yaml.YAMLError, UnicodeDecodeError) as exc:
        where = getattr(exc, "problem_mark", None)
        line = f" at line {where.line + 1}" if where is not None else ""
        raise ConfigError(f"pattern file {path.name}: not valid YAML{line}") from None
    if not isinstance(doc, list):
        raise ConfigError(f"pattern file {path.name}: must hold a list of entries")
    specs = [parse_entry(raw, path.name, i, known) for i, raw in enumerate(doc)]
    _check_unique(specs)
    return specs


def _check_unique(specs: list[PatternSpec]) -> None:
    seen: dict[str, str] = {}
    for spec in specs:
        if spec.name in seen:
            raise _fail(spec.file, repr(spec.name), f"duplicate name (also in {seen[spec.name]})")
        seen[spec.name] = spec.file


def _validator_names() -> frozenset[str]:
    # NOTE: imported here, not at the top, because the validators live with
    # the detectors (a layer above config); the table has no imports of its own.
    from deid.detectors.validators import VALIDATORS

    return frozenset(VALIDATORS)


def load_pattern_specs(directory: Path | None = None) -> list[PatternSpec]:
    """Load every ``*.yaml`` pattern file of ``directory`` (default: the built-in folder).

    Files are read in name order so the result is stable.

    Raises:
        ConfigError: Naming the file, entry and reason of the first problem.
    """
    folder = directory if directory is not None else patterns_dir()
    if not folder.is_dir():
        raise ConfigError(f"pattern folder {folder} does not exist")
    validators = _validator_names()
    specs: list[PatternSpec] = []
    for path in sorted(folder.glob("*.yaml")):
        specs.extend(load_pattern_file(path, validators))
    _check_unique(specs)
    return specs
