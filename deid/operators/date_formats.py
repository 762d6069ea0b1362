"""Read a date the way a clinical note writes it, and write another date the same way.

:func:`parse_date` turns "Sept. 4th, 2019", "03-04-19" or "Tuesday, March 4"
into a :class:`ParsedDate`: the date plus a :class:`DateFormat` recording every
choice the writer made (field order, separators, padding, year digits, month
style and case, ordinal suffix, weekday). :func:`render` writes any date with
those choices, so a shifted date looks exactly like the one it replaces.

Decisions (documented because a reader cannot guess them):

- Numeric dates are month-first (US) unless the first number exceeds 12, the
  only case that proves day-first ("13/4/2019" is 13 April).
- Two-digit years: with a reference date, the year falls in the window
  ``[reference.year - 89, reference.year + 10]`` (clinical dates lie mostly in
  the past, birth dates up to ~90 years back); without one, the POSIX
  ``strptime`` rule: 69-99 -> 19xx, 00-68 -> 20xx. A fixed rule, never
  "today", so a run can be repeated.
- No year: the year is the one that puts the date nearest to the reference
  date (ties go to the past); without a reference, year 2000 (a leap year, so
  29 Feb stays valid). The rendered text has no year either way.
- Month+year keeps day 1 in ``value``; a month alone ("nov") keeps day 1 of
  the reference year (2000 without one); a bare four-digit year (1800-2199)
  keeps 1 January. :attr:`DateFormat.precision` says which fields are real.
- "May" without a period counts as a full name (it is one).
- A 2-digit day or month that does not start with 0 does not tell whether
  the writer pads; the other field decides, else padding is assumed for
  machine-like dates without spaces ("12/25/2019", "14-Mar-2019") and not for
  written ones ("March 14, 2019").
"""

from __future__ import annotations

import datetime as dt
from collections.abc import Callable
from dataclasses import dataclass, replace

from deid.operators.date_words import DIGITS, EDGES, NUM2, NUM3, TIME, WEEKDAY, WORDS, WRITTEN

NO_REFERENCE_YEAR = 2000
_CASES: dict[str, Callable[[str], str]] = {"title": str, "upper": str.upper, "lower": str.lower}


@dataclass(frozen=True)
class DateFormat:
    """How a date was written; :func:`render` writes another date the same way.

    Attributes:
        order: The fields present, in order: "MDY", "DMY", "YMD", "MD", "DM", "MY", "YM", "M" or "Y".
        seps: The literal text between consecutive fields (``len(order) - 1`` items).
        month_style: "number", "full" or "abbr".
        month_case: "title", "upper" or "lower" (written months).
        month_period: An abbreviated month is followed by "." ("Sept.").
        month_pad: A numeric month is zero-padded ("03").
        day_pad: The day is zero-padded ("04").
        year_digits: 4 or 2.
        year_quote: A two-digit year is written with an apostrophe ("'19").
        ordinal: "" (none), "lower" ("4th") or "upper" ("4TH").
        weekday: "" (none), "full" or "abbr".
        weekday_case: "title", "upper" or "lower".
        weekday_period: The weekday abbreviation is followed by ".".
        weekday_sep: Text between the weekday and the date (", ").
        lead: Text kept before the date (leading space).
        tail: Text kept after the date (a time of day, trailing punctuation or space).
    """

    order: str
    seps: tuple[str, ...] = ()
    month_style: str = "number"
    month_case: str = "title"
    month_period: bool = False
    month_pad: bool = False
    day_pad: bool = False
    year_digits: int = 4
    year_quote: bool = False
    ordinal: str = ""
    weekday: str = ""
    weekday_case: str = "title"
    weekday_period: bool = False
    weekday_sep: str = ""
    lead: str = ""
    tail: str = ""

    @property
    def has_day(self) -> bool:
        """The day was written."""
        return "D" in self.order

    @property
    def has_year(self) -> bool:
        """The year was written."""
        return "Y" in self.order

    @property
    def precision(self) -> str:
        """The finest field written: "day", "month" or "year"."""
        return "day" if self.has_day else "month" if "M" in self.order else "year"


@dataclass(frozen=True)
class ParsedDate:
    """A date read from text, with the format it was written in."""

    value: dt.date
    fmt: DateFormat


def _case_of(word: str) -> str:
    return "upper" if word.isupper() and len(word) > 1 else "lower" if word.islower() else "title"


def render(value: dt.date, fmt: DateFormat) -> str:
    """Write ``value`` in the format ``fmt`` (a new weekday and ordinal for the new day).

    >>> render(dt.date(2019, 3, 1), parse_date("Tuesday, Sept. 4th, 2018", None).fmt)
    'Friday, Mar. 1st, 2019'
    """
    out = [fmt.lead]
    if fmt.weekday:
        names = WORDS.weekdays.full if fmt.weekday == "full" else WORDS.weekdays.abbr
        out.append(_CASES[fmt.weekday_case](names[value.weekday()]))
        out.append("." if fmt.weekday_period else "")
        out.append(fmt.weekday_sep)
    for i, field in enumerate(fmt.order):
        if i:
            out.append(fmt.seps[i - 1])
        if field == "Y":
            year = f"{value.year % 100:02d}" if fmt.year_digits == 2 else f"{value.year:04d}"
            out.append(("'" if fmt.year_quote else "") + year)
        elif field == "M" and fmt.month_style == "number":
            out.append(f"{value.month:02d}" if fmt.month_pad else str(value.month))
        elif field == "M":
            names = WORDS.months.full if fmt.month_style == "full" else WORDS.months.abbr
            out.append(_CASES[fmt.month_case](names[value.month - 1]) + ("." if fmt.month_period else ""))
        else:
            out.append(f"{value.day:02d}" if fmt.day_pad else str(value.day))
            if fmt.ordinal:
                suffix = WORDS.ordinal(value.day)
                out.append(suffix.upper() if fmt.ordinal == "upper" else suffix)
    out.append(fmt.tail)
    return "".join(out)


# --- parsing -----------------------------------------------------------------------------------


def full_year(two_digits: int, reference: dt.date | None) -> int:
    """The four-digit year meant by a two-digit one (see the module docstring).

    >>> full_year(45, dt.date(2019, 6, 1)), full_year(29, dt.date(2019, 6, 1)), full_year(45, None)
    (1945, 2029, 2045)
    """
    if reference is None:
        return (1900 if two_digits >= 69 else 2000) + two_digits  # POSIX strptime %y
    top = reference.year + 10
    return top - (top - two_digits) % 100


def _nearest(month: int, day: int, reference: dt.date | None) -> dt.date:
    if reference is None:
        return dt.date(NO_REFERENCE_YEAR, month, day)
    best: dt.date | None = None
    for year in range(reference.year - 4, reference.year + 5):  # 4 years reach a leap year
        try:
            cand = dt.date(year, month, day)
        except ValueError:
            continue
        if best is None or abs((cand - reference).days) < abs((best - reference).days):
            best = cand
    if best is None:
        raise ValueError("no such day")
    return best


def _pad(token: str) -> bool | None:
    return None if len(token) == 2 and token[0] != "0" else len(token) == 2


def _build(order: str, seps: tuple[str, ...], reference: dt.date | None, y: str = "", m: str = "", d: str = "",
           ordinal: str = "", mp: str = "", yq: str = "") -> tuple[dt.date, DateFormat] | None:
    """Turn the field tokens of one match into a date and its format, or None if invalid."""
    month = int(m) if m.isdigit() else (WORDS.months.lookup[m.lower()] if m else 1)
    if not m or m.isdigit():
        style = "number"
    else:  # a period marks an abbreviation even for "May."
        style = "full" if m.lower() == WORDS.months.full[month - 1].lower() and not mp else "abbr"
    m_pad = _pad(m) if style == "number" else False
    d_pad = _pad(d) if d else False
    fallback = not any(" " in s for s in seps) and not ordinal
    m_pad = m_pad if m_pad is not None else (d_pad if d_pad is not None else fallback)
    d_pad = d_pad if d_pad is not None else (m_pad if style == "number" else fallback)
    try:
        if y:
            year = int(y) if len(y) == 4 else full_year(int(y), reference)
            value = dt.date(year, month, int(d) if d else 1)
        elif d:
            value = _nearest(month, int(d), reference)
        else:  # a month alone: the reference year only anchors the arithmetic, it is never written
            value = dt.date(reference.year if reference else NO_REFERENCE_YEAR, month, 1)
    except ValueError:
        return None
    fmt = DateFormat(order=order, seps=seps, month_style=style, month_case=_case_of(m), month_period=bool(mp),
                     month_pad=m_pad, day_pad=d_pad, year_digits=len(y) or 4, year_quote=bool(yq),
                     ordinal=("upper" if ordinal.isupper() else "lower") if ordinal else "")
    return value, fmt


def _numeric(core: str, reference: dt.date | None) -> tuple[dt.date, DateFormat] | None:
    if (n := NUM3.fullmatch(core)) is not None:
        a, b, c = n["a"], n["b"], n["c"]
        seps: tuple[str, ...] = (n["s1"], n["s2"])
        if len(a) == 4 and len(c) <= 2:
            return _build("YMD", seps, reference, y=a, m=b, d=c)
        if len(a) <= 2 and len(c) in (2, 4):
            if int(a) > 12:  # only a first number above 12 proves day-first
                return _build("DMY", seps, reference, y=c, m=b, d=a)
            return _build("MDY", seps, reference, y=c, m=a, d=b)
        return None
    if (n := NUM2.fullmatch(core)) is not None:
        a, b, seps = n["a"], n["b"], (n["s1"],)
        if len(a) == 4 and len(b) <= 2:
            return _build("YM", seps, reference, y=a, m=b)
        if len(a) <= 2 and len(b) == 4:
            return _build("MY", seps, reference, y=b, m=a)
        if len(a) <= 2 and len(b) <= 2:
            if int(a) > 12:
                return _build("DM", seps, reference, m=b, d=a)
            return _build("MD", seps, reference, m=a, d=b)
        return None
    if DIGITS.fullmatch(core):
        if len(core) == 4:
            return _build("Y", (), reference, y=core) if 1800 <= int(core) <= 2199 else None
        if 1800 <= int(core[:4]) <= 2199:  # YYYYMMDD (ISO 8601 basic) before MMDDYYYY
            return _build("YMD", ("", ""), reference, y=core[:4], m=core[4:6], d=core[6:])
        return _build("MDY", ("", ""), reference, y=core[4:], m=core[:2], d=core[2:4])
    return None


def _written(core: str, reference: dt.date | None) -> tuple[dt.date, DateFormat] | None:
    for order, rx in WRITTEN:
        if (w := rx.fullmatch(core)) is not None:
            g = w.groupdict(default="")
            seps = tuple(g[k] for k in ("s1", "s2")[: len(order) - 1])
            return _build(order, seps, reference, y=g.get("year", ""), m=g["mon"], d=g.get("day", ""),
                          ordinal=g.get("ord", ""), mp=g["mp"], yq=g.get("yq", ""))
    return None


def _core(core: str, reference: dt.date | None) -> tuple[dt.date, DateFormat] | None:
    weekday: dict[str, object] = {}
    if (w := WEEKDAY.match(core)) is not None and w.end() < len(core):
        word = w["wd"]
        full = word.lower() == WORDS.weekdays.full[WORDS.weekdays.lookup[word.lower()] - 1].lower()
        weekday = {"weekday": "full" if full else "abbr", "weekday_case": _case_of(word),
                   "weekday_period": bool(w["wp"]), "weekday_sep": w["ws"]}
        core = core[w.end():]
    found = _numeric(core, reference) if core[:1].isdigit() else None
    found = found or _written(core, reference)
    if found is None or (weekday and not found[1].has_day):
        return None
    return found[0], replace(found[1], **weekday)  # type: ignore[arg-type]


def parse_date(text: str, reference: dt.date | None = None) -> ParsedDate | None:
    """Read one date as a clinical note writes it; ``None`` if it is not a date this module reads.

    Args:
        text: The date's text, such as a detected span ("Sept. 4th, 2019", "03-04-19").
        reference: The note's date; places two-digit years and dates written without a year.

    >>> p = parse_date("4th of MARCH 2019", None)
    >>> p.value, p.fmt.order, p.fmt.month_case, p.fmt.seps
    (datetime.date(2019, 3, 4), 'DMY', 'upper', (' of ', ' '))
    """
    edges = EDGES.fullmatch(text)
    assert edges is not None  # the pattern matches every string
    lead, core, trail = edges.groups()
    tail = ""
    if (t := TIME.search(core)) is not None and t.start() > 0:
        core, tail = core[: t.start()], core[t.start():]
    found = _core(core, reference) if core else None
    if found is None and core[-1:] in (".", ",", ";", ":") and not tail:
        core, tail = core[:-1], core[-1]
        found = _core(core, reference) if core else None
    if found is None:
        return None
    return ParsedDate(found[0], replace(found[1], lead=lead, tail=tail + trail))
