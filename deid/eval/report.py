"""Write the leakage report: one self-contained HTML page, a JSON file, a stdout summary.

The JSON is built first and the HTML is rendered from the same dictionary, so
every number on the page is also in the JSON. The page opens offline: no
script, no external style sheet, font or image; the chart is inline SVG.

The report quotes gold text (the leak list and the false positives): that is
its purpose on a test set, and the page says so. :func:`summary_text`, which
goes to stdout and logs, carries numbers only.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from jinja2 import Environment, FileSystemLoader, StrictUndefined
from markupsafe import Markup

from deid.eval.gate import evaluate_gate
from deid.eval.intervals import Interval
from deid.eval.metrics import EvalResult, LabelScores, Leak, ScopeResult, SpanScores
from deid.eval.plot import recall_chart_svg
from deid.model import SAFE_HARBOR_LABELS

FORMAT = "chartveil.leakage-report.v1"
HTML_NAME = "leakage-report.html"
JSON_NAME = "leakage-report.json"
#: The page lists at most this many leaks and false-positive groups; the JSON has them all.
HTML_LEAKS = 500
HTML_FALSE_POSITIVES = 30
_TEMPLATES = Path(__file__).resolve().parent / "templates"
_FINGERPRINT_ORDER = (
    "tool_version",
    "policy_name",
    "policy_digest",
    "patterns_hash",
    "spacy_pipeline",
    "date",
)


def _interval(value: Interval | None) -> list[float] | None:
    return None if value is None else [value.low, value.high]


def _spans(scores: SpanScores) -> dict[str, Any]:
    return {
        "matched_predicted": scores.matched_pred,
        "matched_gold": scores.matched_gold,
        "precision": scores.precision,
        "recall": scores.recall,
        "f1": scores.f1,
    }


def _row(row: LabelScores) -> dict[str, Any]:
    return {
        "label": row.label,
        "gold_tokens": row.token_recall.den,
        "protected_tokens": row.token_recall.num,
        "token_recall": row.token_recall.value,
        "recall_bootstrap": _interval(row.recall_bootstrap),
        "recall_exact": _interval(row.recall_exact),
        "predicted_tokens": row.token_precision.den,
        "predicted_tokens_in_gold": row.token_precision.num,
        "token_precision": row.token_precision.value,
        "precision_bootstrap": _interval(row.precision_bootstrap),
        "gold_spans": row.strict.n_gold,
        "predicted_spans": row.strict.n_pred,
        "spans_leaked_any": row.spans_leaked_any,
        "spans_leaked_whole": row.spans_leaked_whole,
        "strict": _spans(row.strict),
        "lenient": _spans(row.lenient),
    }


def _leak(leak: Leak) -> dict[str, Any]:
    return {
        "note_id": leak.note_id,
        "label": leak.label,
        "safe_harbor": leak.label in SAFE_HARBOR_LABELS,
        "start": leak.start,
        "end": leak.end,
        "text": leak.text,
        "leaked": [list(r) for r in leak.leaked],
        "whole": leak.whole,
        "before": leak.before,
        "after": leak.after,
    }


def _scope(scope: ScopeResult) -> dict[str, Any]:
    return {
        "overall": _row(scope.overall),
        "labels": [_row(r) for r in scope.per_label],
        "leaks": [_leak(leak) for leak in scope.leaks],
        "false_positives": [
            {"text": f.text, "count": f.count, "labels": list(f.labels), "detectors": list(f.detectors)}
            for f in scope.false_positives
        ],
        "detectors": [
            {
                "detector": d.detector,
                "predicted_spans": d.pred_spans,
                "gold_tokens_covered": d.tokens_covered,
                "gold_tokens_covered_alone": d.tokens_covered_alone,
                "false_positive_spans": d.false_positive_spans,
            }
            for d in scope.detectors
        ],
    }


def report_data(
    result: EvalResult, fingerprint: Mapping[str, object], gate: Mapping[str, Any]
) -> dict[str, Any]:
    """Everything the report shows, as a JSON-ready dictionary.

    Args:
        result: From :func:`deid.eval.metrics.evaluate`.
        fingerprint: What produced the predictions (tool version, policy name
            and digest, pattern files' hash, spaCy pipeline, date); shown as given.
        gate: ``{"min_recall": float, "per_label": {label: float}}``; the
            verdict is computed here with :func:`deid.eval.metrics.evaluate_gate`.
    """
    min_recall = float(gate.get("min_recall", 0.0))
    per_label = {str(k): float(v) for k, v in dict(gate.get("per_label", {})).items()}
    passed, failing = evaluate_gate(result, min_recall, per_label)
    return {
        "format": FORMAT,
        "verdict": {"passed": passed, "failing": failing, "min_recall": min_recall, "per_label": per_label},
        "fingerprint": {str(k): str(v) for k, v in fingerprint.items()},
        "settings": dict(result.settings),
        "counts": {
            "notes": result.n_notes,
            "gold_spans": result.n_gold_spans,
            "predicted_spans": result.n_pred_spans,
        },
        "scopes": {name: _scope(scope) for name, scope in result.scopes.items()},
    }


def _segments(leak: dict[str, Any]) -> list[tuple[str, bool]]:
    """Split a leaked span's text into (text, leaked?) pieces for <mark>."""
    pieces, cursor, start, text = [], 0, leak["start"], leak["text"]
    for a, b in leak["leaked"]:
        if a - start > cursor:
            pieces.append((text[cursor : a - start], False))
        pieces.append((text[a - start : b - start], True))
        cursor = b - start
    if cursor < len(text):
        pieces.append((text[cursor:], False))
    return pieces


def _pct(value: float | None, digits: int = 1) -> str:
    return "n/a" if value is None else f"{value * 100:.{digits}f}%"


def _range(value: list[float] | None, digits: int = 1) -> str:
    return "n/a" if value is None else f"{_pct(value[0], digits)} – {_pct(value[1], digits)}"


def _brief(value: list[float] | None) -> str:
    return "n/a" if value is None else f"{value[0] * 100:.1f}–{value[1] * 100:.1f}"


def render_html(result: EvalResult, data: Mapping[str, Any]) -> str:
    """Render the HTML page from :func:`report_data`'s dictionary."""
    env = Environment(loader=FileSystemLoader(_TEMPLATES), autoescape=True, undefined=StrictUndefined)
    env.filters["pct"] = _pct
    env.filters["range"] = _range
    env.filters["brief"] = _brief
    scope_all = data["scopes"]["all"]
    leaks = sorted(scope_all["leaks"], key=lambda x: (not x["safe_harbor"], x["note_id"], x["start"]))
    shown = [{**leak, "segments": _segments(leak)} for leak in leaks[:HTML_LEAKS]]
    chart = recall_chart_svg(
        result.scopes["all"].per_label,
        data["verdict"]["min_recall"] or None,
        float(data["settings"]["confidence"]),
    )
    return env.get_template("report.html.j2").render(
        data=data,
        sh=data["scopes"]["safe_harbor"],
        everything=scope_all,
        leaks=shown,
        leaks_hidden=max(0, len(leaks) - HTML_LEAKS),
        false_positives=scope_all["false_positives"][:HTML_FALSE_POSITIVES],
        chart=Markup(chart),  # safe: matplotlib output, labels only, no note text
        fingerprint=_ordered(data["fingerprint"]),
    )


def _ordered(fingerprint: Mapping[str, str]) -> list[tuple[str, str]]:
    known = [(k, fingerprint[k]) for k in _FINGERPRINT_ORDER if k in fingerprint]
    return known + sorted((k, v) for k, v in fingerprint.items() if k not in _FINGERPRINT_ORDER)


def write_report(
    result: EvalResult, out_dir: str | Path, fingerprint: Mapping[str, object], gate: Mapping[str, Any]
) -> dict[str, Path]:
    """Write ``leakage-report.html`` and ``leakage-report.json`` into ``out_dir`` (created if needed).

    Returns:
        ``{"html": path, "json": path}``.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    data = report_data(result, fingerprint, gate)
    paths = {"html": out / HTML_NAME, "json": out / JSON_NAME}
    paths["json"].write_text(json.dumps(data, indent=2, ensure_ascii=False) + "\n", encoding="utf-8")
    paths["html"].write_text(render_html(result, data), encoding="utf-8")
    return paths


def summary_text(result: EvalResult, gate: Mapping[str, Any] | None = None) -> str:
    """A few plain lines for stdout: numbers only, never note text.

    Without ``gate`` the verdict line is left out.
    """
    row = result.safe_harbor.overall
    lines = []
    if gate is not None:
        min_recall = float(gate.get("min_recall", 0.0))
        passed, failing = evaluate_gate(result, min_recall, dict(gate.get("per_label", {})))
        word = "PASS" if passed else "FAIL"
        lines.append(f"Verdict: {word} (Safe Harbor token recall must be >= {_pct(min_recall)})")
        if failing:
            lines.append("Below threshold: " + ", ".join(failing))
    lines.append(
        f"Safe Harbor token recall: {_pct(row.token_recall.value, 2)} "
        f"({row.token_recall.num}/{row.token_recall.den} tokens); "
        f"bootstrap {_range(_interval(row.recall_bootstrap), 2)}, exact {_range(_interval(row.recall_exact), 2)}"
    )
    lines.append(
        f"Gold spans with a leaked token: {row.spans_leaked_any} of {row.strict.n_gold} "
        f"({row.spans_leaked_whole} leaked whole)"
    )
    lines.append(
        f"Token precision: {_pct(row.token_precision.value, 2)}; "
        f"false-positive spans: {sum(f.count for f in result.safe_harbor.false_positives)}"
    )
    lines.append(
        f"Notes: {result.n_notes}; gold spans: {result.n_gold_spans}; predicted spans: {result.n_pred_spans}"
    )
    return "\n".join(lines)
