"""The HTML + JSON report and the stdout summary (deid/eval/report.py, plot.py)."""

from __future__ import annotations

import json
import re
from html.parser import HTMLParser
from pathlib import Path

import pytest
from eval_samples import gold_span, worked_example

from deid.eval.gold import GoldNote
from deid.eval.metrics import evaluate
from deid.eval.plot import recall_chart_svg
from deid.eval.report import report_data, summary_text, write_report
from deid.model import Note

FINGERPRINT = {
    "tool_version": "0.1.0",
    "policy_name": "default",
    "policy_digest": "ab12",
    "date": "2026-12-01",
}
GATE = {"min_recall": 0.95, "per_label": {"NAME": 0.99}}


class _Ids(HTMLParser):
    """Collects the text inside elements that carry an id (stdlib parser, no extra dependency)."""

    def __init__(self) -> None:
        super().__init__()
        self.stack: list[str | None] = []
        self.text: dict[str, str] = {}

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        if tag in {"meta", "br", "hr", "img", "input", "link"}:
            return
        ident = dict(attrs).get("id")
        self.stack.append(ident)
        if ident:
            self.text.setdefault(ident, "")

    def handle_endtag(self, tag: str) -> None:
        if self.stack and tag not in {"meta", "br", "hr", "img", "input", "link"}:
            self.stack.pop()

    def handle_data(self, data: str) -> None:
        for ident in self.stack:
            if ident:
                self.text[ident] += data


def ids_of(html: str) -> dict[str, str]:
    parser = _Ids()
    parser.feed(html)
    return {k: " ".join(v.split()) for k, v in parser.text.items()}


def test_write_report_html_and_json(tmp_path: Path) -> None:
    gold, preds = worked_example()
    result = evaluate(gold, preds, n_resamples=200)
    paths = write_report(result, tmp_path / "out", FINGERPRINT, GATE)
    data = json.loads(paths["json"].read_text(encoding="utf-8"))
    sh = data["scopes"]["safe_harbor"]["overall"]
    assert data["verdict"] == {
        "passed": False,
        "failing": ["overall", "NAME"],
        "min_recall": 0.95,
        "per_label": {"NAME": 0.99},
    }
    assert (sh["protected_tokens"], sh["gold_tokens"]) == (6, 7)  # see test_worked_example_by_hand
    assert sh["recall_exact"] == [
        result.safe_harbor.overall.recall_exact.low,  # type: ignore[union-attr]
        result.safe_harbor.overall.recall_exact.high,
    ]  # type: ignore[union-attr]
    assert data["fingerprint"] == FINGERPRINT
    html = paths["html"].read_text(encoding="utf-8")
    ids = ids_of(html)
    assert ids["headline-recall"] == "85.71%"  # 6/7
    assert ids["verdict-word"].startswith("FAIL")
    low, high = sh["recall_exact"]
    assert ids["headline-recall-exact"] == f"{low * 100:.2f}% – {high * 100:.2f}%"
    assert ids["headline-spans-leaked"] == "1"
    assert "overall" in ids["failing-labels"] and "NAME" in ids["failing-labels"]
    assert "Ann <mark>Lee</mark>" in html  # the leaked token, marked
    assert "<mark>Brookvale</mark> <mark>Clinic</mark>" in html
    for caution in ("not anonymous", "IRB or privacy officer", "review a sample"):
        assert caution in ids["cautions"]
    assert "ab12" in ids["fingerprint"]
    assert re.search(r'<div class="chart" id="recall-chart"><svg', html)


def test_html_is_self_contained(tmp_path: Path) -> None:
    gold, preds = worked_example()
    html = write_report(evaluate(gold, preds, n_resamples=50), tmp_path, FINGERPRINT, GATE)["html"].read_text(
        "utf-8"
    )
    assert "<script" not in html and "<link" not in html and "@import" not in html
    # The only URLs allowed are XML namespace names inside the inline SVG (never fetched).
    found = set(re.findall(r"https?://[^\s\"')<]+", html))
    assert found <= {"http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink"}
    assert all(ref.startswith("#") for ref in re.findall(r"url\(([^)]*)\)", html))


def test_note_text_is_escaped(tmp_path: Path) -> None:
    text = "Seen <script>alert(1)</script> by Ann Lee."  # hostile-looking invented note
    gold = [GoldNote(Note("x", text), (gold_span(text, "Ann Lee", "NAME"),))]
    html = write_report(evaluate(gold, {}, n_resamples=20), tmp_path, {}, GATE)["html"].read_text("utf-8")
    assert "<script>" not in html and "&lt;script&gt;alert(1)&lt;/script&gt;" in html


def test_summary_has_numbers_and_no_note_text() -> None:
    gold, preds = worked_example()
    result = evaluate(gold, preds, n_resamples=50)
    summary = summary_text(result, GATE)
    assert summary.splitlines()[0] == "Verdict: FAIL (Safe Harbor token recall must be >= 95.0%)"
    assert "85.71% (6/7 tokens)" in summary
    assert "Gold spans with a leaked token: 1 of 3 (0 leaked whole)" in summary
    for word in ("Ann", "Lee", "Brookvale", "555", "call"):
        assert not re.search(rf"\b{word}\b", summary)
    assert not summary_text(result).startswith("Verdict")


def test_same_seed_same_report_numbers() -> None:
    gold, preds = worked_example()
    first = report_data(evaluate(gold, preds, n_resamples=100, seed=3), FINGERPRINT, GATE)
    second = report_data(evaluate(gold, preds, n_resamples=100, seed=3), FINGERPRINT, GATE)
    assert first == second


def test_chart_is_inline_svg_without_dates() -> None:
    gold, preds = worked_example()
    rows = evaluate(gold, preds, n_resamples=20).scopes["all"].per_label
    svg = recall_chart_svg(rows, 0.95)
    assert svg.startswith("<svg") and svg.rstrip().endswith("</svg>")
    assert "<dc:date>" not in svg
    assert recall_chart_svg(rows, 0.95) == svg  # same numbers, same bytes
    assert recall_chart_svg([r for r in rows if r.token_recall.den == 0]) == ""


def test_html_caps_the_leak_list_but_json_keeps_all(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    import deid.eval.report as report_module

    monkeypatch.setattr(report_module, "HTML_LEAKS", 1)
    gold, preds = worked_example()  # two leaks in the all-labels scope
    paths = write_report(evaluate(gold, preds, n_resamples=20), tmp_path, {}, GATE)
    html = paths["html"].read_text("utf-8")
    assert html.count('<tr class="leak">') == 1
    assert "1 more leaks are listed in the JSON file." in html
    assert len(json.loads(paths["json"].read_text("utf-8"))["scopes"]["all"]["leaks"]) == 2
