"""The words and regex grammar of dates: months, weekdays, ordinals, separators.

The words come from ``deid/data/date_words.yaml``; the compiled patterns
below are built from them once, at import, so parsing never compiles a regex.

Words are data, not code, so a reviewer can read them in one place and a
later language can be added as a file. Loading checks the file and names the
file, key and reason of the first problem.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import yaml

from deid.errors import ConfigError
from deid.resources import data_file


@dataclass(frozen=True)
class WordTable:
    """Names written for (index + 1) and every spelling read back, lower-cased.

    Attributes:
        full: Full names, in calendar order.
        abbr: The abbreviation written for each entry.
        lookup: Every accepted spelling (lower case) -> 1-based number.
        pattern: A regex alternation of every spelling, longest first.
    """

    full: tuple[str, ...]
    abbr: tuple[str, ...]
    lookup: dict[str, int]
    pattern: str


@dataclass(frozen=True)
class DateWords:
    """Everything the date parser and renderer know about words."""

    months: WordTable
    weekdays: WordTable
    ordinal_default: str
    ordinal_by_day: dict[int, str]
    day_month_words: tuple[str, ...]

    def ordinal(self, day: int) -> str:
        """The English ordinal suffix of ``day`` (``1`` -> ``"st"``, ``11`` -> ``"th"``)."""
        return self.ordinal_by_day.get(day, self.ordinal_default)


def _table(entries: Any, where: str, key: str, size: int) -> WordTable:
    if not isinstance(entries, list) or len(entries) != size:
        raise ConfigError(f"{where}: key {key!r} must be a list of {size} entries")
    full: list[str] = []
    abbr: list[str] = []
    lookup: dict[str, int] = {}
    for number, entry in enumerate(entries, start=1):
        spot = f"{where}: {key}[{number - 1}]"
        if not isinstance(entry, dict) or not isinstance(entry.get("full"), str) or not isinstance(
            entry.get("abbr"), str
        ):
            raise ConfigError(f"{spot} needs string keys 'full' and 'abbr'")
        alt = entry.get("alt", [])
        if not isinstance(alt, list) or not all(isinstance(a, str) and a.isalpha() for a in alt):
            raise ConfigError(f"{spot}: 'alt' must be a list of words")
        full.append(entry["full"])
        abbr.append(entry["abbr"])
        for spelling in (entry["full"], entry["abbr"], *alt):
            low = spelling.lower()
            if lookup.get(low, number) != number:
                raise ConfigError(f"{spot}: spelling {spelling!r} is used twice")
            lookup[low] = number
    # NOTE: longest first, so "September" is tried before "Sept" and "Sep".
    pattern = "|".join(re.escape(w) for w in sorted(lookup, key=len, reverse=True))
    return WordTable(tuple(full), tuple(abbr), lookup, pattern)


def load_date_words(path: Path | None = None) -> DateWords:
    """Load and check the word file (``None``: the built-in one)."""
    path = path or data_file("date_words.yaml")
    where = str(path)
    try:
        doc = yaml.safe_load(path.read_text(encoding="utf-8"))
    except (OSError, yaml.YAMLError) as exc:
        raise ConfigError(f"{where} cannot be read ({type(exc).__name__})") from None
    if not isinstance(doc, dict):
        raise ConfigError(f"{where}: expected a mapping at the top level")
    ordinals = doc.get("ordinals")
    if not isinstance(ordinals, dict) or not isinstance(ordinals.get("default"), str):
        raise ConfigError(f"{where}: key 'ordinals' needs a string 'default'")
    by_day = ordinals.get("by_day", {})
    if not isinstance(by_day, dict) or not all(
        isinstance(d, int) and 1 <= d <= 31 and isinstance(s, str) for d, s in by_day.items()
    ):
        raise ConfigError(f"{where}: key 'ordinals.by_day' must map days 1-31 to suffixes")
    words = doc.get("day_month_words", [])
    if not isinstance(words, list) or not all(isinstance(w, str) and w.isalpha() for w in words):
        raise ConfigError(f"{where}: key 'day_month_words' must be a list of words")
    return DateWords(
        months=_table(doc.get("months"), where, "months", 12),
        weekdays=_table(doc.get("weekdays"), where, "weekdays", 7),
        ordinal_default=ordinals["default"],
        ordinal_by_day=dict(by_day),
        day_month_words=tuple(words),
    )


#: The built-in words, loaded once at import.
WORDS = load_date_words()

# --- grammar (compiled once; the parser in date_formats.py interprets the groups) -------------

FLAGS = re.IGNORECASE
#: Between two fields: punctuation with optional spaces around it, or spaces alone.
SEP = r"\s*[,\-/.]\s*|\s+"
DM_SEP = "|".join([*(rf"\s+{re.escape(w)}\s+" for w in WORDS.day_month_words), SEP])
MON = rf"(?P<mon>{WORDS.months.pattern})(?P<mp>\.)?"
DAY = r"(?P<day>\d{1,2})(?P<ord>st|nd|rd|th)?"
YEAR = r"(?P<yq>')?(?P<year>\d{4}|\d{2})"
YEAR_STRICT = r"(?P<yq>')?(?P<year>\d{4}|(?<=')\d{2})"  # "March 19" is a day, "March '19" a year
YEAR4 = r"(?P<year>\d{4})"
WRITTEN: tuple[tuple[str, re.Pattern[str]], ...] = tuple(
    (order, re.compile(rx, FLAGS))
    for order, rx in (
        # NOTE: a month word needs no separator next to a digit ("25DEC2022"), except between a
        # month and a following day, where "DEC252022" could not be split reliably.
        ("MDY", rf"{MON}(?P<s1>{SEP}){DAY}(?P<s2>{SEP}){YEAR}"),
        ("DMY", rf"{DAY}(?P<s1>{DM_SEP}|){MON}(?P<s2>{SEP}|){YEAR}"),
        ("YMD", rf"{YEAR4}(?P<s1>{SEP}|){MON}(?P<s2>{SEP}|){DAY}"),
        ("MD", rf"{MON}(?P<s1>{SEP}){DAY}"),
        ("DM", rf"{DAY}(?P<s1>{DM_SEP}|){MON}"),
        ("MY", rf"{MON}(?P<s1>{SEP}|){YEAR_STRICT}"),
        ("YM", rf"{YEAR4}(?P<s1>{SEP}|){MON}"),
        ("M", MON),  # a month on its own ("seen in nov") is a date element too
    )
)
NUM3 = re.compile(r"(?P<a>\d{1,4})(?P<s1>\s*[-/.]\s*)(?P<b>\d{1,2})(?P<s2>\s*[-/.]\s*)(?P<c>\d{1,4})")
NUM2 = re.compile(r"(?P<a>\d{1,4})(?P<s1>\s*[-/.]\s*)(?P<b>\d{1,4})")
DIGITS = re.compile(r"\d{8}|\d{4}")
EDGES = re.compile(r"(\s*)(.*?)(\s*)", re.DOTALL)
WEEKDAY = re.compile(rf"(?P<wd>{WORDS.weekdays.pattern})(?P<wp>\.)?(?P<ws>\s*,\s*|\s+)", FLAGS)
TIME = re.compile(
    r"(?:T|,?\s+(?:at\s+)?)\d{1,2}:\d{2}(?::\d{2}(?:[.,]\d+)?)?(?:\s*[ap]\.?m\.?)?"
    r"(?:\s*(?:Z|[+-]\d{2}(?::?\d{2})?))?$",
    FLAGS,
)
