"""Reading dates the way notes write them, and writing other dates the same way.

References: python-dateutil's parser (values), the standard library's
``time.strftime``/``datetime.strptime`` (formats and the POSIX two-digit-year
rule) and ``calendar`` (English month and weekday names, C locale).
"""

from __future__ import annotations

import calendar
import datetime as dt

import pytest
from dateutil import parser as dateutil_parser

from deid.operators.date_formats import full_year, parse_date, render

REF = dt.date(2019, 6, 15)

# Unambiguous to both parsers, or resolved the same way by both defaults (US month-first:
# dateutil's dayfirst=False; a first number above 12 proves day-first for both).
AGREE_WITH_DATEUTIL = [
    "3/4/2019", "03-04-19", "2019-03-04", "3.4.2019", "2019/3/4", "20190304", "4/13/2019", "13/4/2019",
    "31.12.1999", "March 4, 2019", "Mar 4 2019", "4 March 2019", "Sept. 4th, 2019", "4th of March 2019",
    "4th March, 2019", "Aug. 22nd 2018", "1 JAN 2000", "MARCH 4, 2019", "march 4th", "March 4th", "Jul 4",
    "7/4", "Sat, Sep 7th", "March 2019", "March, 2019", "Mar. 2019", "Mar-2019", "03/2019", "2019-03",
    "Tuesday, March 4, 2019", "Thu 3/4/2010", "04-MAR-19", "Mar 4, 19", "2019 Mar 04", "Feb 29, 2020",
    "2019-03-04T10:15:00", "March 4, 2019 at 10:15 am", "25DEC2022", "DEC2022", "nov", "March",
]


@pytest.mark.parametrize("text", AGREE_WITH_DATEUTIL)
def test_value_agrees_with_dateutil(text: str) -> None:
    # Source: python-dateutil parser.parse; missing fields come from `default` (year of REF, day 1).
    # Dates without a year in the table lie within six months of REF, so "nearest year" = REF's year.
    expected = dateutil_parser.parse(text, default=dt.datetime(REF.year, 1, 1)).date()
    parsed = parse_date(text, REF)
    assert parsed is not None
    assert parsed.value == expected


@pytest.mark.parametrize(
    ("text", "reference", "expected"),
    [
        # Our rule (module docstring): no year -> the year nearest the reference, ties to the past.
        ("Tues. Aug 6", REF, dt.date(2019, 8, 6)),  # dateutil cannot read "Tues."
        ("Dec 25", dt.date(2019, 1, 10), dt.date(2018, 12, 25)),
        ("Jan 5", dt.date(2019, 12, 20), dt.date(2020, 1, 5)),
        ("29 Feb", dt.date(2021, 3, 1), dt.date(2020, 2, 29)),  # nearest year where the day exists
        ("12/25", dt.date(2019, 1, 10), dt.date(2018, 12, 25)),
        ("March '19", REF, dt.date(2019, 3, 1)),
        ("2019", REF, dt.date(2019, 1, 1)),
    ],
)
def test_values_by_project_rule(text: str, reference: dt.date, expected: dt.date) -> None:
    parsed = parse_date(text, reference)
    assert parsed is not None and parsed.value == expected


@pytest.mark.parametrize(
    "text",
    ["13/13/2019", "2/30/2020", "2/29/2019", "0/4/2019", "3/4/5", "123/4/2019", "Tuesday", "hello", "", "  ",
     "Smarch 4, 2019", "Tuesday 2019"],
)
def test_not_a_date(text: str) -> None:
    # Feb 29 2019 and Feb 30 do not exist: datetime.date raises for both (standard library).
    assert parse_date(text, REF) is None


@pytest.mark.parametrize("yy", range(100))
def test_two_digit_year_without_reference_follows_strptime(yy: int) -> None:
    # Source: Python's datetime.strptime %y (POSIX rule: 69-99 -> 1900s, 00-68 -> 2000s).
    expected = dt.datetime.strptime(f"03/04/{yy:02d}", "%m/%d/%y").date()
    parsed = parse_date(f"03/04/{yy:02d}", None)
    assert parsed is not None and parsed.value == expected


@pytest.mark.parametrize("ref_year", [1999, 2000, 2019, 2091])
def test_two_digit_year_window_with_reference(ref_year: int) -> None:
    # Project rule (module docstring): the year lies in [ref - 89, ref + 10] and ends in the two digits.
    for yy in range(100):
        year = full_year(yy, dt.date(ref_year, 6, 1))
        assert year % 100 == yy
        assert ref_year - 89 <= year <= ref_year + 10


# strftime formats (C locale). Originals use day and month below 10 so the padding is visible.
STRFTIME_FORMATS = [
    "%m/%d/%Y", "%m-%d-%y", "%Y-%m-%d", "%Y/%m/%d", "%Y%m%d", "%m.%d.%Y", "%B %d, %Y", "%b %d %Y",
    "%d %B %Y", "%d-%b-%Y", "%d %b %y", "%A, %B %d, %Y", "%a %m/%d/%Y", "%a, %d %b %Y", "%B %d", "%d %b",
    "%B %Y", "%b-%Y", "%m/%Y", "%Y-%m", "%Y-%m-%dT%H:%M:%S",
]
ORIGINALS = [dt.date(y, m, d) for y in (1998, 2019, 2024) for m in (1, 2, 3, 4, 6, 8, 9) for d in (1, 2, 3, 9)]
TARGETS = [dt.date(2000, 1, 1) + dt.timedelta(days=n) for n in range(0, 10000, 37)]


@pytest.mark.parametrize("fmt", STRFTIME_FORMATS)
@pytest.mark.parametrize("case", [str, str.upper, str.lower])
def test_render_matches_strftime(fmt: str, case) -> None:  # type: ignore[no-untyped-def]
    # Source: time.strftime writes the expected text for each target date, in the original's format.
    # NOTE: May is left out of the originals: "May" reads as the full name, so %b cannot be told apart.
    for original in ORIGINALS[::5]:
        text = case(dt.datetime.combine(original, dt.time(10, 15)).strftime(fmt))
        parsed = parse_date(text, original if "%Y" not in fmt and "%y" not in fmt else None)
        assert parsed is not None, "original not read"
        for target in TARGETS:
            expected = case(dt.datetime.combine(target, dt.time(10, 15)).strftime(fmt))
            assert render(target, parsed.fmt) == expected


def _ordinal(day: int) -> str:
    # Common practice: English ordinals take "th" for 11-13, else st/nd/rd after 1/2/3.
    return "th" if 11 <= day % 100 <= 13 else {1: "st", 2: "nd", 3: "rd"}.get(day % 10, "th")


def _unpadded(day: dt.date) -> str:
    return f"{day.month}/{day.day}/{day.year}"


def _ordinal_written(day: dt.date) -> str:
    month = calendar.month_abbr[day.month]  # source: calendar module, C locale
    return f"{calendar.day_name[day.weekday()]}, {month}. {day.day}{_ordinal(day.day)}, {day.year}"


def _ordinal_of(day: dt.date) -> str:
    return f"{day.day}{_ordinal(day.day).upper()} OF {calendar.month_name[day.month].upper()} {day.year}"


@pytest.mark.parametrize("writer", [_unpadded, _ordinal_written, _ordinal_of])
def test_render_matches_hand_written_formats(writer) -> None:  # type: ignore[no-untyped-def]
    # Formats strftime cannot write portably (no padding, ordinals); names from the calendar module.
    parsed = parse_date(writer(dt.date(2019, 3, 4)), None)
    assert parsed is not None and parsed.value == dt.date(2019, 3, 4)
    for target in TARGETS:
        assert render(target, parsed.fmt) == writer(target)


@pytest.mark.parametrize("day", range(1, 32))
def test_ordinal_suffix_follows_the_new_day(day: int) -> None:
    parsed = parse_date("March 4th", REF)
    assert parsed is not None
    assert render(dt.date(2019, 1, day), parsed.fmt) == f"January {day}{_ordinal(day)}"  # common practice


@pytest.mark.parametrize(
    ("text", "order", "seps"),
    [
        ("4th of March 2019", "DMY", (" of ", " ")),
        ("Sept. 4th, 2019", "MDY", (" ", ", ")),
        ("2019-03-04", "YMD", ("-", "-")),
        ("20190304", "YMD", ("", "")),
        ("03/2019", "MY", ("/",)),
        ("13.4.2019", "DMY", (".", ".")),
    ],
)
def test_format_records_order_and_separators(text: str, order: str, seps: tuple[str, ...]) -> None:
    parsed = parse_date(text, REF)
    assert parsed is not None
    assert (parsed.fmt.order, parsed.fmt.seps) == (order, seps)


@pytest.mark.parametrize(
    ("text", "target", "expected"),
    [
        ("  3/4/2019 ", dt.date(2020, 12, 25), "  12/25/2020 "),  # edges kept
        ("March 4, 2019.", dt.date(2020, 12, 25), "December 25, 2020."),  # trailing punctuation kept
        ("3/4/2019 10:15 AM", dt.date(2020, 12, 25), "12/25/2020 10:15 AM"),  # time of day kept
        ("May. 4, 2019", dt.date(2020, 6, 5), "Jun. 5, 2020"),  # a period marks the abbreviation
        ("March '19", dt.date(2020, 6, 5), "June '20"),
        ("Tues. 3/4", dt.date(2020, 6, 5), "Fri. 6/5"),  # weekday of the new date (2020-06-05: Friday)
        ("25DEC2022", dt.date(2023, 3, 5), "05MAR2023"),  # no separators next to a month word
        ("nov", dt.date(2023, 1, 1), "jan"),  # a month alone stays a month alone
    ],
)
def test_render_keeps_the_surroundings(text: str, target: dt.date, expected: str) -> None:
    parsed = parse_date(text, REF)
    assert parsed is not None
    assert render(target, parsed.fmt) == expected
