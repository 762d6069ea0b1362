"""Check-digit validators for identifier formats, looked up by name from pattern files.

A validator only ever *raises* confidence in a regex match: recall comes first,
so a number that fails its checksum is not thrown away (typos, made-up test
data and partly masked numbers are still identifiers). Each function takes the
matched text, ignores separators (spaces, dashes, dots) and returns ``True``
when the check digit is right.

This module imports nothing from the package so that :mod:`deid.config` can
check validator names without pulling in the detectors.
"""

from __future__ import annotations

from collections.abc import Callable

_SEPARATORS = str.maketrans("", "", " -./")


def _clean(text: str) -> str:
    return text.translate(_SEPARATORS).upper()


def luhn(text: str) -> bool:
    """Luhn (mod 10) check over the digits of ``text`` (ISO/IEC 7812-1 Annex B).

    >>> luhn("4111 1111 1111 1111")
    True
    """
    digits = _clean(text)
    if len(digits) < 2 or not digits.isdigit():
        return False
    total = 0
    for i, char in enumerate(reversed(digits)):
        value = int(char)
        if i % 2 == 1:
            value = value * 2 - 9 if value > 4 else value * 2
        total += value
    return total % 10 == 0


def npi(text: str) -> bool:
    """CMS National Provider Identifier: ten digits, Luhn over ``80840`` + the NPI.

    The prefix 80840 is the health-industry issuer number the NPI standard
    puts in front before running Luhn (CMS, "Requirements for NPI check digit").
    """
    digits = _clean(text)
    if len(digits) == 15 and digits.startswith("80840"):
        digits = digits[5:]
    return len(digits) == 10 and digits.isdigit() and luhn("80840" + digits)


def dea(text: str) -> bool:
    """DEA registration number: two letters (second may be 9) and seven digits.

    Check digit: (d1 + d3 + d5) + 2 * (d2 + d4 + d6); its last digit equals d7.
    """
    code = _clean(text)
    if len(code) != 9 or not code[0].isalpha() or not (code[1].isalpha() or code[1] == "9"):
        return False
    digits = code[2:]
    if not digits.isdigit():
        return False
    d = [int(c) for c in digits]
    total = d[0] + d[2] + d[4] + 2 * (d[1] + d[3] + d[5])
    return total % 10 == d[6]


_VIN_VALUES = {
    **{str(n): n for n in range(10)},
    **dict(zip("ABCDEFGH", range(1, 9), strict=True)),
    **dict(zip("JKLMN", range(1, 6), strict=True)),
    "P": 7,
    "R": 9,
    **dict(zip("STUVWXYZ", range(2, 10), strict=True)),
}
_VIN_WEIGHTS = (8, 7, 6, 5, 4, 3, 2, 10, 0, 9, 8, 7, 6, 5, 4, 3, 2)


def vin(text: str) -> bool:
    """Vehicle identification number check digit (49 CFR 565.15, position 9).

    Letters map to the regulation's values (I, O and Q are never used), each
    position is weighted, and the weighted sum mod 11 is the ninth character
    (10 written as ``X``).
    """
    code = _clean(text)
    if len(code) != 17 or any(c not in _VIN_VALUES for c in code):
        return False
    total = sum(_VIN_VALUES[c] * w for c, w in zip(code, _VIN_WEIGHTS, strict=True))
    remainder = total % 11
    return code[8] == ("X" if remainder == 10 else str(remainder))


def aba(text: str) -> bool:
    """ABA bank routing transit number: nine digits, weights 3-7-1 sum to a multiple of 10."""
    digits = _clean(text)
    if len(digits) != 9 or not digits.isdigit():
        return False
    weights = (3, 7, 1) * 3
    return sum(int(c) * w for c, w in zip(digits, weights, strict=True)) % 10 == 0


def nhs(text: str) -> bool:
    """NHS number (England, Wales, Isle of Man): ten digits, modulus 11.

    Weights 10 down to 2 over the first nine digits; ``11 - sum % 11`` is the
    check digit, 11 reads as 0 and 10 means the number is invalid (NHS Data
    Dictionary, "NHS number" format).

    >>> nhs("943 476 5919")
    True
    """
    digits = _clean(text)
    if len(digits) != 10 or not digits.isdigit():
        return False
    check = 11 - sum(int(c) * w for c, w in zip(digits[:9], range(10, 1, -1), strict=True)) % 11
    if check == 11:
        check = 0
    return check != 10 and check == int(digits[9])


#: Name -> validator, as written in a pattern file's ``validator`` key.
VALIDATORS: dict[str, Callable[[str], bool]] = {
    "luhn": luhn,
    "npi": npi,
    "dea": dea,
    "vin": vin,
    "aba": aba,
    "nhs": nhs,
}
