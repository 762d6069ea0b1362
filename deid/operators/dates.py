"""Date operators: move every date of a patient by one keyed offset, or keep only the year.

``date_shift.v1`` reads a date in whatever format the note used, adds the
patient's offset and writes the new date in the same format, so intervals
between a patient's dates survive and the text still reads naturally.
``date_year.v1`` is the literal HIPAA Safe Harbor rule: only the year stays.

Decisions:

- One offset per patient, drawn from HMAC(key, "date-offset", patient):
  magnitude uniform in ``[policy.date_min_days, policy.date_max_days]``,
  direction keyed too, never 0. The pipeline stores it in ``NoteState``.
- Month+year dates ("March 2019") move by whole months: the offset rounded
  to months of mean Gregorian length, at least one month. Intervals between
  month-precision dates then stay exact, and the output claims no day the
  input did not have. Bare years move by the offset rounded to whole years
  (possibly 0: a year alone is not a Safe Harbor identifier).
- Recall first: a date that cannot be read, or cannot be moved, becomes the
  policy's mask tag; it is never left in place. A zero offset in shift mode
  (a pipeline bug) masks too.
- In year mode (``policy.date_mode == "year"``) ``date_shift.v1`` writes the
  year only, so the Safe Harbor policy can name the same operator.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

from deid.keys import SecretKey
from deid.operators.base import KeyedOperator, NoteState
from deid.operators.date_formats import DateFormat, ParsedDate, parse_date, render
from deid.policy import Policy
from deid.registry import operators

__all__ = [
    "DateFormat",
    "DateShift",
    "DateYear",
    "ParsedDate",
    "parse_date",
    "patient_offset_days",
    "render",
    "shift_date",
    "shift_note_date",
    "shift_text",
    "year_text",
]

#: Mean length of a Gregorian month in days (400-year cycle: 146097 days / 4800 months).
MEAN_MONTH_DAYS = 146097 / 4800
#: Mean length of a Gregorian year in days.
MEAN_YEAR_DAYS = 146097 / 400


def patient_offset_days(key: SecretKey, patient_key: str, policy: Policy) -> int:
    """This patient's date offset in days: keyed, within the policy's window, never 0.

    Args:
        key: The secret key.
        patient_key: The patient id (or the pipeline's note-scoped stand-in).
        policy: Supplies ``date_min_days`` and ``date_max_days``.
    """
    n = key.number("date-offset", patient_key)
    span = policy.date_max_days - policy.date_min_days + 1
    # NOTE: a 256-bit number modulo a span of a few hundred: the bias is below 2**-240.
    magnitude = max(1, policy.date_min_days + n % span)
    return -magnitude if n >> 255 else magnitude  # the top bit, unused by the modulo, picks the sign


def _whole_months(days: int) -> int:
    months = round(days / MEAN_MONTH_DAYS)
    if months == 0 and days:
        months = 1 if days > 0 else -1  # never leave a month+year date where it was
    return months


def shift_date(parsed: ParsedDate, days: int) -> dt.date:
    """Move a parsed date by ``days`` at the precision it was written with.

    Raises:
        OverflowError: The result falls outside the years 1-9999.
    """
    value, precision = parsed.value, parsed.fmt.precision
    if precision == "day":
        return value + dt.timedelta(days=days)
    if precision == "month":
        year, month0 = divmod(value.year * 12 + value.month - 1 + _whole_months(days), 12)
        if not 1 <= year <= 9999:
            raise OverflowError("shifted year out of range")
        return dt.date(year, month0 + 1, 1)
    year = value.year + round(days / MEAN_YEAR_DAYS)
    if not 1 <= year <= 9999:
        raise OverflowError("shifted year out of range")
    return dt.date(year, 1, 1)


def year_text(original: str, label: str, state: NoteState) -> str:
    """Safe Harbor: the original's (unshifted) four-digit year, or the mask tag if it has none."""
    parsed = parse_date(original, state.reference_date)
    if parsed is None or not parsed.fmt.has_year:
        return state.policy.mask(label)
    fmt = parsed.fmt
    # A time of day is finer than a year: keep only a tail without digits (spaces, punctuation).
    tail = "" if any(c.isdigit() for c in fmt.tail) else fmt.tail
    return f"{fmt.lead}{parsed.value.year:04d}{tail}"


def shift_text(original: str, label: str, state: NoteState) -> str:
    """Shift one date by the patient's offset and write it in its original format.

    Follows the policy's date mode; an unreadable date becomes the mask tag.
    """
    if state.policy.date_mode == "year":
        return year_text(original, label, state)
    if state.date_offset_days == 0:
        return state.policy.mask(label)
    parsed = parse_date(original, state.reference_date)
    if parsed is None:
        return state.policy.mask(label)
    try:
        return render(shift_date(parsed, state.date_offset_days), parsed.fmt)
    except (OverflowError, ValueError):
        return state.policy.mask(label)


def shift_note_date(value: str, state: NoteState) -> str:
    """Shift the note's own date (the ``note_date`` column) with the same rules.

    The format is kept, so ISO 8601 input ("2019-03-04", "2019-03-04T10:15:00")
    stays ISO 8601. An empty value stays empty.
    """
    if not value.strip():
        return value
    return shift_text(value, "DATE", state)


@operators.register("date_shift.v1")
@dataclass(frozen=True)
class DateShift(KeyedOperator):
    """Moves a date by the patient's keyed offset, keeping its written format."""

    name: str = "date_shift.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return the shifted date, or the mask tag when it cannot be read."""
        return shift_text(original, label, state)


@operators.register("date_year.v1")
@dataclass(frozen=True)
class DateYear(KeyedOperator):
    """Writes only the year of a date (HIPAA Safe Harbor, 45 CFR 164.514(b)(2)(i)(C))."""

    name: str = "date_year.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return the four-digit year, or the mask tag when the date has none."""
        return year_text(original, label, state)
