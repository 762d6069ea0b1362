"""What every replacement operator looks like, and the explicit state it is handed.

Consistent surrogates and per-patient date shifts need memory. That memory is
never hidden in closures or module globals: it is a :class:`NoteState`, built
from the secret key, the policy and the note's patient, so any worker can
rebuild exactly the same state and a run can be repeated.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass, field
from typing import Any, Protocol

from presidio_anonymizer.operators import Operator as PresidioOperator
from presidio_anonymizer.operators import OperatorType

from deid.keys import SecretKey
from deid.policy import Policy


@dataclass(frozen=True)
class NoteState:
    """Everything an operator may use while replacing the spans of one note.

    Attributes:
        key: The secret key; every surrogate is derived from it.
        policy: The active policy.
        patient_key: The patient id, or a note-scoped stand-in when the policy
            treats a note without a patient id as its own patient.
        date_offset_days: This patient's keyed date shift (0 in year mode).
        reference_date: The note's own date, used to place dates written
            without a year; ``None`` when the note has no date.
        taken: Surrogate -> original, per note and label, so two different
            originals in one note never collide into one surrogate.
    """

    key: SecretKey
    policy: Policy
    patient_key: str
    date_offset_days: int
    reference_date: dt.date | None = None
    taken: dict[tuple[str, str], str] = field(default_factory=dict)


class Operator(Protocol):
    """Turns one original identifier into its replacement text.

    Attributes:
        name: Registered, versioned name (``date_shift.v1``).
    """

    name: str

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return the replacement for ``original`` (a span's text with label ``label``)."""
        ...


class KeyedOperator(PresidioOperator):
    """Base class of chartveil's operators: Presidio's operator interface over ``apply``.

    Because every operator is also a Presidio anonymizer operator (``operate``,
    ``validate``, ``operator_name``, ``operator_type``), it can be added to a
    Presidio ``AnonymizerEngine`` with ``add_anonymizer`` and driven there with
    ``OperatorConfig(name, {"label": ..., "state": NoteState(...)})``. The state
    travels in the parameters, never in the operator object.
    """

    name: str = ""

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return the replacement for ``original``; subclasses implement it."""
        raise NotImplementedError

    def operate(self, text: str, params: dict[str, Any] | None = None) -> str:
        """Presidio entry point: ``params`` carries ``label`` and ``state``."""
        self.validate(params)
        assert params is not None
        return self.apply(text, params["label"], params["state"])

    def validate(self, params: dict[str, Any] | None = None) -> None:
        """Check that Presidio handed in a label and an explicit :class:`NoteState`."""
        from presidio_anonymizer.entities import InvalidParamError

        if not params or not isinstance(params.get("state"), NoteState) or not isinstance(params.get("label"), str):
            raise InvalidParamError(f"{self.name}: params need 'label' (str) and 'state' (NoteState)")

    def operator_name(self) -> str:
        """The registered, versioned name."""
        return self.name

    def operator_type(self) -> OperatorType:
        """chartveil operators anonymize (they cannot be reversed without the originals)."""
        return OperatorType.Anonymize
