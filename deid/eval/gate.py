"""The pass/fail gate of an evaluation: token recall against the policy's thresholds.

Kept apart from the scoring so the CLI can apply thresholds from the policy
(``Policy.min_recall``, ``Policy.min_recall_per_label``) or from options
without recomputing anything.
"""

from __future__ import annotations

from collections.abc import Mapping

from deid.errors import ConfigError
from deid.eval.metrics import OVERALL, EvalResult
from deid.model import LABELS


def evaluate_gate(
    result: EvalResult, min_recall: float, per_label: Mapping[str, float]
) -> tuple[bool, list[str]]:
    """Check token recall against the thresholds (point estimates, not interval bounds).

    ``min_recall`` applies to the overall Safe Harbor token recall;
    ``per_label`` to each named label's token recall. A label with no gold
    tokens cannot fail (nothing was measured), but an evaluation with no
    Safe Harbor gold tokens at all fails: a gate must not pass on no evidence.

    Returns:
        ``(passed, failing)``; ``failing`` starts with ``"overall"`` when the
        overall threshold is missed, followed by failing labels in report order.

    Raises:
        ConfigError: a threshold outside [0, 1] or an unknown label.
    """
    for label, threshold in [(OVERALL, min_recall), *per_label.items()]:
        if label != OVERALL and label not in LABELS:
            raise ConfigError(f"gate: unknown label {label!r}")
        if not 0.0 <= threshold <= 1.0:
            raise ConfigError(f"gate: threshold for {label} must be between 0 and 1, got {threshold}")
    failing = []
    overall = result.safe_harbor.overall.token_recall.value
    if overall is None or overall < min_recall:
        failing.append(OVERALL)
    rows = {row.label: row for row in result.scopes["all"].per_label}
    for label in LABELS:
        value = rows[label].token_recall.value
        if label in per_label and value is not None and value < per_label[label]:
            failing.append(label)
    return not failing, failing
