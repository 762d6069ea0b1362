"""The policy: what happens to each label, how dates move, what a run rejects.

Policies are TOML files (see ``deid/data/policy_default.toml`` for the
documented default). Loading checks every key and names the file, key and
reason of the first problem.
"""

from __future__ import annotations

import hashlib
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from deid.errors import ConfigError
from deid.model import LABELS
from deid.resources import data_file

ACTIONS = ("surrogate", "mask", "keep")
DATE_MODES = ("shift", "year")
MISSING_PATIENT = ("reject", "own_patient")


@dataclass(frozen=True)
class LabelRule:
    """What to do with one label."""

    action: str
    operator: str | None = None


@dataclass(frozen=True)
class Policy:
    """A loaded, checked policy. Build with :func:`load_policy`."""

    name: str
    rules: Mapping[str, LabelRule]
    missing_patient: str = "reject"
    max_note_chars: int = 2_000_000
    mask_format: str = "[={label}=]"
    score_threshold: float = 0.35
    date_mode: str = "shift"
    date_min_days: int = 30
    date_max_days: int = 365
    age_over_89: str = "90+"
    zip_restricted_prefix: str = "000"
    min_recall: float = 0.95
    min_recall_per_label: Mapping[str, float] = field(default_factory=dict)
    source: str = "<built-in>"
    digest: str = ""

    def rule(self, label: str) -> LabelRule:
        """The rule for ``label``."""
        return self.rules[label]

    def mask(self, label: str) -> str:
        """The mask tag for ``label``."""
        return self.mask_format.replace("{label}", label)


def _get(table: Mapping[str, Any], key: str, kind: type | tuple[type, ...], where: str, default: Any) -> Any:
    if key not in table:
        return default
    value = table[key]
    if isinstance(value, bool) and kind is not bool or not isinstance(value, kind):
        raise ConfigError(f"{where}: key {key!r} has the wrong type ({type(value).__name__})")
    return value


def _choice(value: str, allowed: tuple[str, ...], where: str, key: str) -> str:
    if value not in allowed:
        raise ConfigError(f"{where}: key {key!r} must be one of {', '.join(allowed)}, not {value!r}")
    return value


def parse_policy(doc: Mapping[str, Any], where: str, digest: str = "") -> Policy:
    """Check a parsed TOML table and build a :class:`Policy` from it."""
    known_top = {"name", "version", "missing_patient", "max_note_chars", "mask_format", "score_threshold",
                 "dates", "age", "zip", "labels", "gate"}
    for key in doc:
        if key not in known_top:
            raise ConfigError(f"{where}: unknown key {key!r}; known: {', '.join(sorted(known_top))}")
    labels = _get(doc, "labels", dict, where, {})
    rules: dict[str, LabelRule] = {}
    for label in labels:
        if label not in LABELS:
            raise ConfigError(f"{where}: [labels] names unknown label {label!r}")
    for label in LABELS:
        entry = labels.get(label)
        if entry is None:
            raise ConfigError(f"{where}: [labels] has no rule for {label}; every label needs one")
        lw = f"{where} [labels.{label}]"
        action = _choice(_get(entry, "action", str, lw, "surrogate"), ACTIONS, lw, "action")
        operator = _get(entry, "operator", str, lw, None)
        if action == "surrogate" and not operator:
            raise ConfigError(f"{lw}: action 'surrogate' needs an 'operator'")
        rules[label] = LabelRule(action, operator)
    dates = _get(doc, "dates", dict, where, {})
    age = _get(doc, "age", dict, where, {})
    zips = _get(doc, "zip", dict, where, {})
    gate = _get(doc, "gate", dict, where, {})
    per_label = dict(_get(gate, "per_label", dict, f"{where} [gate]", {}))
    for label, value in per_label.items():
        if label not in LABELS or not isinstance(value, (int, float)) or not 0 <= value <= 1:
            raise ConfigError(f"{where} [gate.per_label]: {label!r} needs a known label and a number in [0, 1]")
    min_days = _get(dates, "min_days", int, f"{where} [dates]", 30)
    max_days = _get(dates, "max_days", int, f"{where} [dates]", 365)
    if not 1 <= min_days <= max_days:
        raise ConfigError(f"{where} [dates]: need 1 <= min_days <= max_days")
    threshold = float(_get(doc, "score_threshold", (int, float), where, 0.35))
    if not 0 <= threshold <= 1:
        raise ConfigError(f"{where}: score_threshold must lie in [0, 1]")
    mask_format = _get(doc, "mask_format", str, where, "[={label}=]")
    if "{label}" not in mask_format:
        raise ConfigError(f"{where}: mask_format must contain {{label}}")
    return Policy(
        name=_get(doc, "name", str, where, "unnamed"),
        rules=rules,
        missing_patient=_choice(_get(doc, "missing_patient", str, where, "reject"), MISSING_PATIENT, where,
                                "missing_patient"),
        max_note_chars=_get(doc, "max_note_chars", int, where, 2_000_000),
        mask_format=mask_format,
        score_threshold=threshold,
        date_mode=_choice(_get(dates, "mode", str, f"{where} [dates]", "shift"), DATE_MODES, where, "dates.mode"),
        date_min_days=min_days,
        date_max_days=max_days,
        age_over_89=_get(age, "over_89", str, f"{where} [age]", "90+"),
        zip_restricted_prefix=_get(zips, "restricted_prefix", str, f"{where} [zip]", "000"),
        min_recall=float(_get(gate, "min_recall", (int, float), f"{where} [gate]", 0.95)),
        min_recall_per_label={k: float(v) for k, v in per_label.items()},
        source=where,
        digest=digest,
    )


def load_policy(path: Path | None = None) -> Policy:
    """Load a policy file; ``None`` loads the built-in default policy."""
    path = path or data_file("policy_default.toml")
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise ConfigError(f"policy file {path} cannot be read ({type(exc).__name__})") from None
    try:
        doc = tomllib.loads(raw.decode("utf-8"))
    except (UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        raise ConfigError(f"policy file {path} is not valid TOML: {exc}") from None
    return parse_policy(doc, str(path), hashlib.sha256(raw).hexdigest()[:16])
