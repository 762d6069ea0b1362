"""``mask.v1`` and ``keep.v1``: the two operators that need no key.

The pipeline handles the policy actions "mask" and "keep" itself; these
operators exist so that a policy (or a plugin) can also name them wherever an
operator is expected, e.g. ``{ action = "surrogate", operator = "mask.v1" }``
while a surrogate operator for a new label is being written.
"""

from __future__ import annotations

from deid.operators.base import KeyedOperator, NoteState
from deid.registry import operators


@operators.register("mask.v1")
class Mask(KeyedOperator):
    """Replace the span with the policy's mask tag, which names the label."""

    name = "mask.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return ``state.policy.mask(label)``."""
        return state.policy.mask(label)


@operators.register("keep.v1")
class Keep(KeyedOperator):
    """Leave the span as written (for labels Safe Harbor allows, such as STATE)."""

    name = "keep.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return ``original`` unchanged."""
        return original
