"""chartveil operators are Presidio anonymizer operators and work inside Presidio's own engine."""

from __future__ import annotations

import pytest
from presidio_anonymizer import AnonymizerEngine
from presidio_anonymizer.entities import OperatorConfig, RecognizerResult

from deid.keys import SecretKey
from deid.operators.base import KeyedOperator, NoteState
from deid.operators.contact import PhoneFiction
from deid.policy import load_policy
from deid.registry import operators


def test_every_registered_operator_implements_presidios_interface() -> None:
    import deid.operators  # noqa: F401  (registers the built-ins)

    for name in operators.names():
        op = operators.get(name)()
        assert isinstance(op, KeyedOperator)
        assert op.operator_name() == name


def test_an_operator_runs_inside_presidios_anonymizer_engine() -> None:
    # presidio-anonymizer's documented extension point: add_anonymizer + OperatorConfig params.
    state = NoteState(key=SecretKey(b"k" * 32), policy=load_policy(), patient_key="p1", date_offset_days=0)
    engine = AnonymizerEngine()
    engine.add_anonymizer(PhoneFiction)
    text = "Call 617-555-0134 now."
    result = engine.anonymize(
        text,
        [RecognizerResult("PHONE", 5, 17, 1.0)],
        {"PHONE": OperatorConfig("phone_fiction.v1", {"label": "PHONE", "state": state})},
    )
    direct = PhoneFiction().apply("617-555-0134", "PHONE", NoteState(key=SecretKey(b"k" * 32),
                                  policy=load_policy(), patient_key="p1", date_offset_days=0))
    assert result.text == f"Call {direct} now."


def test_missing_state_is_refused() -> None:
    from presidio_anonymizer.entities import InvalidParamError

    with pytest.raises(InvalidParamError, match="state"):
        PhoneFiction().operate("617-555-0134", {"label": "PHONE"})
