"""Safe Harbor generalisations of ages and ZIP codes: ``age_cap.v1`` and ``zip3.v1``.

These are not surrogates but the two aggregations HIPAA Safe Harbor spells out
(45 CFR 164.514(b)(2)(i)(B) and (C)):

* ages over 89 are aggregated into one "90 or older" category, written as the
  policy's ``age_over_89`` text; ages up to 89 may stay and are kept as written;
* of a ZIP code only the first three digits may stay, and not even those when
  the three-digit area had 20,000 or fewer people; those prefixes become the
  policy's ``zip_restricted_prefix``.

ZIP shape: the dropped digits become ``*`` ("02139" -> "021**",
"02139-4307" -> "021**-****"). A padded "02100" would look like a real ZIP
code and could be geocoded to one delivery area; stars show at a glance that
the value was generalised, keep the column width, and cannot be mistaken for
an address. Code that needs digits can still read the three-digit prefix.
"""

from __future__ import annotations

import re
from functools import lru_cache

from deid.operators.base import KeyedOperator, NoteState
from deid.operators.choose import word_list
from deid.registry import operators

# NOTE: number words are grammar the parser below depends on, not a word list
# one would tune, so they live here rather than in deid/data.
_UNITS = {
    w: i
    for i, w in enumerate(
        [
            "zero",
            "one",
            "two",
            "three",
            "four",
            "five",
            "six",
            "seven",
            "eight",
            "nine",
            "ten",
            "eleven",
            "twelve",
            "thirteen",
            "fourteen",
            "fifteen",
            "sixteen",
            "seventeen",
            "eighteen",
            "nineteen",
        ]
    )
}
_TENS = {
    w: 10 * i
    for i, w in enumerate(["twenty", "thirty", "forty", "fifty", "sixty", "seventy", "eighty", "ninety"], 2)
}
_DECADES = {w.replace("y", "ies"): v for w, v in _TENS.items()}  # "nineties"
_ALL_WORDS = {**_UNITS, **_TENS, **_DECADES, "hundred": 100}
_NUM_WORD = "|".join(sorted(_ALL_WORDS, key=len, reverse=True))
_WORDS = rf"\b(?:{_NUM_WORD})(?:[\s-]+(?:and[\s-]+)?(?:{_NUM_WORD}))*\b"
_DIGITS = r"(?<![\d.])\d{1,3}(?:\.\d+)?(?:'?s\b)?(?!\d)"  # "92", "92.5", "90s"
_OLD_WORDS = r"\b(?:super)?(?:nonagenarian|centenarian)s?\b"
#: One pass over the span, so a cap text such as "ninety or older" is never re-read.
_AGE = re.compile(rf"(?P<digits>{_DIGITS})|(?P<words>{_WORDS})|(?P<old>{_OLD_WORDS})", re.IGNORECASE)
_ZIP = re.compile(r"(?<!\d)(?P<p3>\d{3})\d{2}(?:(?P<sep>[-\s]?)\d{4})?(?!\d)")


def words_value(text: str) -> int:
    """The value of an English number phrase.

    >>> words_value("ninety-two"), words_value("One hundred and two"), words_value("nineties")
    (92, 102, 90)
    """
    value = 0
    for word in re.split(r"[\s-]+", text.casefold()):
        if word == "hundred":
            value = (value or 1) * 100
        elif word in _ALL_WORDS:
            value += _ALL_WORDS[word]
    return value


@operators.register("age_cap.v1")
class AgeCap(KeyedOperator):
    """Write every age over 89 in a span as the policy's "90 or older" text, keeping the other words."""

    name = "age_cap.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return ``original`` with each number above 89 replaced ("92-year-old" -> "90+-year-old")."""
        cap = state.policy.age_over_89

        def replace(m: re.Match[str]) -> str:
            if m["digits"]:
                value = float(m["digits"].rstrip("sS").rstrip("'"))
            elif m["words"]:
                value = words_value(m["words"])
            else:
                value = 90  # "nonagenarian", "centenarian"
            return cap if value > 89 else m.group()

        return _AGE.sub(replace, original)


@lru_cache(maxsize=1)
def restricted_prefixes() -> frozenset[str]:
    """The three-digit ZIP prefixes Safe Harbor does not allow (``deid/data/zip3_restricted.txt``)."""
    return frozenset(word_list("zip3_restricted.txt"))


@operators.register("zip3.v1")
class Zip3(KeyedOperator):
    """Keep a ZIP code's first three digits (or the restricted prefix) and star the rest."""

    name = "zip3.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return ``original`` with each ZIP or ZIP+4 generalised ("02139-4307" -> "021**-****")."""

        def generalise(m: re.Match[str]) -> str:
            prefix = m["p3"]
            if prefix in restricted_prefixes():
                prefix = state.policy.zip_restricted_prefix
            rest = m.group()[3:]
            return prefix + "".join("*" if c.isdigit() else c for c in rest)

        out, n = _ZIP.subn(generalise, original)
        if n:
            return out
        digits = [i for i, c in enumerate(original) if c.isdigit()]
        prefix = "".join(original[i] for i in digits[:3])
        if len(digits) <= 3 or prefix in restricted_prefixes():
            return state.policy.mask(label)  # nothing safe to keep; hide it whole
        cut = digits[2] + 1
        return original[:cut] + "".join("*" if c.isdigit() else c for c in original[cut:])
