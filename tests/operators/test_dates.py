"""Date operators and the per-patient offset.

References: the standard library's ``datetime`` arithmetic (intervals, leap
days, weekdays, ISO 8601 via ``fromisoformat``/``isoformat``), ``strptime``
(reading shifted text back), ``calendar`` (weekday names) and scipy.stats
(uniformity and sign balance of the keyed offsets).
"""

from __future__ import annotations

import calendar
import dataclasses
import datetime as dt
import random
import re

import pytest
from scipy import stats

from deid.keys import SecretKey
from deid.operators.base import NoteState
from deid.operators.dates import patient_offset_days, shift_note_date
from deid.policy import Policy, load_policy
from deid.registry import operators
from deid.resources import data_file

KEY_A = SecretKey(b"test-key-A-not-secret-0123456789")  # invented test keys
KEY_B = SecretKey(b"test-key-B-not-secret-0123456789")
POLICY = load_policy()
MASK = POLICY.mask("DATE")


def _state(offset: int, policy: Policy = POLICY, reference: dt.date | None = None) -> NoteState:
    return NoteState(key=KEY_A, policy=policy, patient_key="p", date_offset_days=offset, reference_date=reference)


def _shift(text: str, offset: int, reference: dt.date | None = None) -> str:
    return operators.get("date_shift.v1")().apply(text, "DATE", _state(offset, reference=reference))  # type: ignore[attr-defined]


# --- the offset -----------------------------------------------------------------------------------

def test_offset_within_window_never_zero_and_repeatable() -> None:
    offsets = [patient_offset_days(KEY_A, f"patient-{i}", POLICY) for i in range(2000)]
    assert all(POLICY.date_min_days <= abs(o) <= POLICY.date_max_days for o in offsets)
    assert 0 not in offsets
    assert offsets == [patient_offset_days(KEY_A, f"patient-{i}", POLICY) for i in range(2000)]
    # Source: scipy.stats.binomtest -- the keyed sign is balanced (p far above 1e-4 for a fair bit).
    assert stats.binomtest(sum(o > 0 for o in offsets), len(offsets)).pvalue > 1e-4


def test_offset_magnitude_is_uniform() -> None:
    policy = dataclasses.replace(POLICY, date_min_days=5, date_max_days=14)
    counts = [0] * 10
    for i in range(3000):
        counts[abs(patient_offset_days(KEY_A, f"patient-{i}", policy)) - 5] += 1
    # Source: scipy.stats.chisquare against the uniform distribution over 5..14 days.
    assert stats.chisquare(counts).pvalue > 1e-4


def test_smallest_window_gives_plus_or_minus_one() -> None:
    policy = dataclasses.replace(POLICY, date_min_days=1, date_max_days=1)
    assert {patient_offset_days(KEY_A, f"p{i}", policy) for i in range(200)} == {-1, 1}


def test_different_key_or_patient_gives_different_offsets() -> None:
    patients = [f"patient-{i}" for i in range(20)]
    a = [patient_offset_days(KEY_A, p, POLICY) for p in patients]
    b = [patient_offset_days(KEY_B, p, POLICY) for p in patients]
    assert sum(x != y for x, y in zip(a, b, strict=True)) >= 15  # a collision per patient has chance ~1/672
    assert len(set(a)) >= 15


# --- intervals ------------------------------------------------------------------------------------

FORMATS = ["%m/%d/%Y", "%Y-%m-%d", "%d %B %Y", "%b %d, %Y", "%A, %B %d, %Y", "%Y%m%d", "%d-%b-%Y"]


@pytest.mark.parametrize("patient", ["p-001", "p-002", "p-003", "p-004", "p-005"])
def test_intervals_survive(patient: str) -> None:
    # Source: datetime.date subtraction gives the original and the shifted interval;
    # strptime reads the shifted text back in the format the original was written in.
    offset = patient_offset_days(KEY_A, patient, POLICY)
    rng = random.Random(patient)  # seeded: the same pairs every run
    for _ in range(150):
        fmt = rng.choice(FORMATS)
        first = dt.date(1930, 1, 1) + dt.timedelta(days=rng.randrange(36500))
        second = first + dt.timedelta(days=rng.randrange(-4000, 4000))
        if "%b" in fmt and 5 in (first.month, second.month):
            continue  # "May" reads as a full month name, so "%b" would come back as "%B" (documented)
        new_first = dt.datetime.strptime(_shift(first.strftime(fmt), offset), fmt).date()
        new_second = dt.datetime.strptime(_shift(second.strftime(fmt), offset), fmt).date()
        assert (new_second - new_first) == (second - first)
        assert (new_first - first).days == offset


@pytest.mark.parametrize(
    ("text", "offset", "expected"),
    [
        # Leap days, checked with datetime: 2020-02-20 + 30 days = 2020-03-21 (2020 has 29 Feb).
        ("02/20/2020", 30, dt.date(2020, 2, 20) + dt.timedelta(days=30)),
        ("02/20/2019", 30, dt.date(2019, 2, 20) + dt.timedelta(days=30)),
        ("02/29/2020", 365, dt.date(2020, 2, 29) + dt.timedelta(days=365)),
        ("02/29/2020", -366, dt.date(2020, 2, 29) - dt.timedelta(days=366)),
        ("03/01/2024", -1, dt.date(2024, 2, 29)),
        ("12/31/1999", 1, dt.date(2000, 1, 1)),
    ],
)
def test_leap_days(text: str, offset: int, expected: dt.date) -> None:
    assert dt.datetime.strptime(_shift(text, offset), "%m/%d/%Y").date() == expected


def test_weekday_is_the_new_dates_weekday() -> None:
    # Source: datetime.date.weekday() of the shifted date; names from the calendar module (C locale).
    for offset in (-300, -45, 1, 6, 200):
        out = _shift("Tuesday, March 4, 2014", offset)
        name, rest = out.split(", ", 1)
        new = dt.datetime.strptime(rest, "%B %d, %Y").date()
        assert new == dt.date(2014, 3, 4) + dt.timedelta(days=offset)
        assert name == calendar.day_name[new.weekday()]


# --- month and year precision ---------------------------------------------------------------------

@pytest.mark.parametrize(
    ("offset", "months"),
    [(1, 1), (-1, -1), (30, 1), (45, 1), (46, 2), (-200, -7), (365, 12)],
)
def test_month_year_moves_by_whole_months(offset: int, months: int) -> None:
    # Project rule: round(offset / 30.436875) months (mean Gregorian month), at least one month.
    first, second = "March 2019", "11/2020"
    out1 = dt.datetime.strptime(_shift(first, offset), "%B %Y").date()
    out2 = dt.datetime.strptime(_shift(second, offset), "%m/%Y").date()
    assert (out1.year * 12 + out1.month) - (2019 * 12 + 3) == months
    # The month distance between two month+year dates is kept (20 months, by hand).
    assert (out2.year * 12 + out2.month) - (out1.year * 12 + out1.month) == 20
    # A month alone moves by the same number of months (calendar.month_name, C locale).
    assert _shift("March", offset) == calendar.month_name[(3 - 1 + months) % 12 + 1]


# --- ISO 8601 -------------------------------------------------------------------------------------

@pytest.mark.parametrize(
    "value",
    ["2019-03-04", "20190304", "2016-02-29", "2019-03-04T10:15:00", "2019-03-04 10:15:00", "2019-03-04T10:15:00Z"],
)
def test_note_date_iso_8601_stays_iso(value: str) -> None:
    # Source: ISO 8601 calendar dates (extended YYYY-MM-DD and basic YYYYMMDD) as read and written
    # by Python's datetime.fromisoformat / isoformat.
    offset = patient_offset_days(KEY_A, "p-iso", POLICY)
    out = shift_note_date(value, _state(offset))
    old = dt.datetime.fromisoformat(value)
    new = dt.datetime.fromisoformat(out)
    assert new - old == dt.timedelta(days=offset)
    assert len(out) == len(value) and re.sub(r"\d", "9", out) == re.sub(r"\d", "9", value)
    if len(value) == 10:
        assert out == new.date().isoformat()


def test_note_date_year_month_and_empty() -> None:
    # ISO 8601 reduced precision YYYY-MM (a calendar month) stays YYYY-MM.
    assert re.fullmatch(r"\d{4}-\d{2}", shift_note_date("2019-03", _state(40)))
    assert shift_note_date("", _state(40)) == ""
    assert shift_note_date("not a date", _state(40)) == MASK


# --- masks and Safe Harbor ------------------------------------------------------------------------

@pytest.mark.parametrize("text", ["2/30/2019", "the day after", "Smarch 4", "13/13/13"])
def test_unreadable_date_becomes_mask(text: str) -> None:
    assert _shift(text, 100) == MASK


def test_zero_offset_in_shift_mode_masks() -> None:
    assert _shift("03/04/2019", 0) == MASK


@pytest.mark.parametrize(
    ("text", "expected"),
    [
        ("March 4, 2019", "2019"),
        ("03/04/19", "2019"),  # two-digit year placed by the reference date (2019-06-15)
        ("4th of March 1931", "1931"),
        ("2019-03-04T10:15:00", "2019"),  # the time goes with everything below the year
        ("March 2019", "2019"),
        ("March 4", MASK),  # no year to keep
        ("nov", MASK),
        ("gibberish", MASK),
    ],
)
def test_safe_harbor_year_mode(text: str, expected: str) -> None:
    # Source: HIPAA Safe Harbor, 45 CFR 164.514(b)(2)(i)(C): all elements of dates except the year.
    ref = dt.date(2019, 6, 15)
    year_op = operators.get("date_year.v1")()
    assert year_op.apply(text, "DATE", _state(123, reference=ref)) == expected  # type: ignore[attr-defined]
    # The Safe Harbor policy names date_shift.v1 with mode "year": it must write the year as well.
    safe_harbor = load_policy(data_file("policy_safe_harbor.toml"))
    shift_op = operators.get("date_shift.v1")()
    out = shift_op.apply(text, "DATE", _state(0, safe_harbor, ref))  # type: ignore[attr-defined]
    assert out == (safe_harbor.mask("DATE") if expected == MASK else expected)


def test_registered_operators_have_names() -> None:
    assert operators.get("date_shift.v1")().name == "date_shift.v1"  # type: ignore[attr-defined]
    assert operators.get("date_year.v1")().name == "date_year.v1"  # type: ignore[attr-defined]
