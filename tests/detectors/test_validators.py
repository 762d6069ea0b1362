"""Check-digit validators against published worked examples and python-stdnum."""

from __future__ import annotations

import pytest
from stdnum import luhn as stdnum_luhn
from stdnum.gb import nhs as stdnum_nhs
from stdnum.us import rtn as stdnum_rtn

from deid.detectors.validators import VALIDATORS, aba, dea, luhn, nhs, npi, vin


# Source: CMS, "Requirements for National Provider Identifier (NPI) and NPI Enumeration"
# check-digit example: NPI 123456789 + check digit 3 (Luhn over 80840 + the NPI).
def test_npi_cms_worked_example() -> None:
    assert npi("1234567893")
    assert npi("80840 1234567893")  # the same number with the card-issuer prefix written out
    assert not npi("1234567890")
    assert not npi("123456789")  # nine digits is not an NPI


# Source: the DEA check-digit rule (d1+d3+d5 + 2*(d2+d4+d6), last digit = d7),
# worked example AB1234563 (1+3+5 = 9, 2*(2+4+6) = 24, 33 -> 3) and BJ6125341
# (6+2+3 = 11, 2*(1+5+4) = 20, 31 -> 1); examples from memory, arithmetic shown.
@pytest.mark.parametrize(("number", "ok"), [
    ("AB1234563", True),
    ("BJ6125341", True),
    ("A91234563", True),  # 9 as second character (business registrant)
    ("AB1234564", False),
    ("BJ6125342", False),
    ("1B1234563", False),
    ("AB123456", False),
])
def test_dea(number: str, ok: bool) -> None:
    assert dea(number) is ok


# Source: 49 CFR 565.15 (check digit calculation) and its sample VIN
# 1M8GDM9AXKP042788 (check digit X in position 9).
def test_vin_49_cfr_565_sample() -> None:
    assert vin("1M8GDM9AXKP042788")
    assert vin("1m8gdm9axkp042788")  # case does not matter


@pytest.mark.parametrize("bad", [
    "1M8GDM9A1KP042788",  # wrong check digit
    "1M8GDM9AXKP04278",  # 16 characters
    "IM8GDM9AXKP042788",  # I is never used in a VIN
])
def test_vin_rejects(bad: str) -> None:
    assert not vin(bad)


# Cross-check against python-stdnum's Luhn implementation (stdnum.luhn).
@pytest.mark.parametrize("number", [
    "4111111111111111", "4111111111111112", "79927398713", "79927398710", "808401234567893",
    "0", "18", "1234567812345670", "49927398716", "1234567890123456",
])
def test_luhn_matches_stdnum(number: str) -> None:
    # NOTE: ours needs at least two digits (a lone check digit identifies nothing); stdnum accepts "0".
    expected = stdnum_luhn.is_valid(number) if len(number) > 1 else False
    assert luhn(number) is expected


# Cross-check against python-stdnum's ABA routing number check (stdnum.us.rtn).
@pytest.mark.parametrize("number", ["011000015", "111000025", "021000021", "011000016", "123456789", "026009593"])
def test_aba_matches_stdnum(number: str) -> None:
    assert aba(number) is stdnum_rtn.is_valid(number)


# Cross-check against python-stdnum's NHS number check (stdnum.gb.nhs, modulus 11).
@pytest.mark.parametrize("number", [
    "9434765919", "9434765918", "4010232137", "4010232138", "1234567881", "1234567890",
    "0000000000", "6660000000", "7000000001", "943476591",
])
def test_nhs_matches_stdnum(number: str) -> None:
    assert nhs(number) is stdnum_nhs.is_valid(number)


def test_nhs_check_ten_is_invalid() -> None:
    # NHS Data Dictionary rule: a check value of 10 means no valid number. For the first nine
    # digits 000000006 the weighted sum is 2*6 = 12, 12 % 11 = 1, 11 - 1 = 10 (arithmetic shown).
    assert not any(nhs(f"000000006{d}") for d in "0123456789")
    assert not any(stdnum_nhs.is_valid(f"000000006{d}") for d in "0123456789")


def test_separators_are_ignored() -> None:
    assert luhn("4111-1111 1111.1111")
    assert npi("123-456-7893")
    assert nhs("943 476 5919")


def test_table_names() -> None:
    # The names pattern files may use in their `validator` key.
    assert set(VALIDATORS) == {"luhn", "npi", "dea", "vin", "aba", "nhs"}
    assert all(VALIDATORS[name]("x") is False for name in VALIDATORS)
