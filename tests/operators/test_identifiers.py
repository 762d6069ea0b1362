"""id_format.v1 (format-preserving identifiers), mask.v1, keep.v1 and the operator registry.

References: Python's ``str`` character classes (``isdigit``/``isupper``/
``islower``) define "shape"; the bundled policies name the operators that must
exist. Every identifier below is invented.
"""

from __future__ import annotations

import pytest

from deid.keys import SecretKey
from deid.operators.base import NoteState
from deid.policy import load_policy
from deid.registry import operators
from deid.resources import data_file

KEY = SecretKey(b"k" * 32)
OTHER_KEY = SecretKey(b"q" * 32)
POLICY = load_policy()


def state(key: SecretKey = KEY, patient: str = "p1") -> NoteState:
    return NoteState(key=key, policy=POLICY, patient_key=patient, date_offset_days=0)


def op(original: str, label: str = "MRN", st: NoteState | None = None) -> str:
    return operators.get("id_format.v1")().apply(original, label, st or state())


def shape(text: str) -> str:
    return "".join("9" if c.isdigit() else "A" if c.isupper() else "a" if c.islower() else c for c in text)


@pytest.mark.parametrize(
    "original",
    [
        "12345678",
        "MRN-00417-ab",
        "AB 123 456",
        "0000",
        "7",
        "X",
        "HP-2024/118-z",
        "1HGCM82633A004352",
        "00-00-001",
        "ac.7731.QZ",
    ],
)
def test_shape_is_kept_and_the_value_changes(original: str) -> None:
    out = op(original)
    assert shape(out) == shape(original)
    assert out != original


@pytest.mark.parametrize(
    ("original", "zero_at", "non_zero_at"),
    [
        ("00417", [0, 1], [2]),
        ("0012-0003", [0, 1, 5, 6, 7], [2, 8]),
        ("A0007", [1, 2, 3], [4]),
        ("000", [0, 1], [2]),
    ],
)
def test_leading_zeros_stay_and_the_first_significant_digit_stays_non_zero(
    original: str, zero_at: list[int], non_zero_at: list[int]
) -> None:
    out = op(original)
    assert all(out[i] == "0" for i in zero_at), out
    assert all(out[i] in "123456789" for i in non_zero_at), out


def test_same_value_written_differently_shares_its_characters() -> None:
    a, b = op("ab-1234"), op("AB 1234")
    assert a.replace("-", "").upper() == b.replace(" ", "")


def test_consistent_across_notes_label_and_key_dependent() -> None:
    assert op("55501234", st=state(patient="p1")) == op("55501234", st=state(patient="p2"))
    assert op("55501234", "MRN") != op("55501234", "ACCOUNT")
    assert op("55501234", st=state(KEY)) != op("55501234", st=state(OTHER_KEY))


def test_no_two_identifiers_in_one_note_share_a_surrogate() -> None:
    st = state()
    originals = [chr(ord("A") + i) for i in range(20)]  # one-letter codes: only 26 possible values
    outs = [op(o, st=st) for o in originals]
    assert len(set(outs)) == len(outs)
    assert all(o != s for o, s in zip(originals, outs, strict=True))


def test_a_span_without_letters_or_digits_is_masked() -> None:
    assert op("----") == POLICY.mask("MRN")


def test_mask_and_keep() -> None:
    st = state()
    assert operators.get("mask.v1")().apply("Quimby", "NAME", st) == POLICY.mask("NAME")
    assert operators.get("keep.v1")().apply("Vermont", "STATE", st) == "Vermont"


@pytest.mark.parametrize("policy_file", ["policy_default.toml", "policy_safe_harbor.toml"])
def test_every_operator_a_bundled_policy_names_is_registered(policy_file: str) -> None:
    import deid.operators  # noqa: F401  (registers the built-ins)

    policy = load_policy(data_file(policy_file))
    for label, rule in policy.rules.items():
        if rule.action == "surrogate":
            assert rule.operator is not None
            made = operators.get(rule.operator)()
            assert made.name == rule.operator, label  # type: ignore[attr-defined]
