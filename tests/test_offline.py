"""deid.offline: building the engine and analysing a note never opens a socket."""

from __future__ import annotations

import socket

import pytest
import tldextract
import tldextract.tldextract as tld_impl
from presidio_analyzer.predefined_recognizers import EmailRecognizer, UrlRecognizer

from deid import offline
from deid.detectors import engine
from deid.model import Note

# Invented note; reserved domains per RFC 2606 (example.com, example.org).
NOTE = "Daughter e-mails jdoe@mail.example.com; portal at https://portal.example.org/visit today."


@pytest.fixture
def no_network(monkeypatch: pytest.MonkeyPatch) -> list[tuple[object, ...]]:
    """Make every way out raise (an OSError, as a real failure would) and record the attempt."""
    attempts: list[tuple[object, ...]] = []

    def refuse(*args: object, **kwargs: object) -> None:
        attempts.append(args)
        raise OSError("network disabled in tests")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket.socket, "connect_ex", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)
    monkeypatch.setattr(socket, "getaddrinfo", refuse)
    return attempts


@pytest.fixture
def fresh_tldextract(monkeypatch: pytest.MonkeyPatch, tmp_path: object) -> None:
    """Put back an extractor that *would* fetch the suffix list, and forget make_offline ran."""
    monkeypatch.setattr(tld_impl, "TLD_EXTRACTOR", tld_impl.TLDExtract(cache_dir=str(tmp_path)))
    monkeypatch.setattr(offline, "_done", False)
    monkeypatch.delenv("TLDEXTRACT_PUBLIC_SUFFIX_LIST_URLS", raising=False)


_PROBE = """
import os, socket, sys, tempfile
attempts = []
def refuse(*a, **k):
    attempts.append(1)
    raise OSError("network disabled in tests")
socket.socket.connect = socket.create_connection = socket.getaddrinfo = refuse
if sys.argv[1] == "offline":
    from deid import offline
    offline.make_offline()
import tldextract
tldextract.extract("forums.bbc.co.uk")
print(len(attempts))
"""


@pytest.mark.parametrize(("mode", "expect_fetch"), [("plain", True), ("offline", False)])
def test_guard_detects_a_fetch_and_make_offline_prevents_it(mode: str, expect_fetch: bool) -> None:
    # Control and treatment in fresh interpreters (no state left by other tests): without
    # make_offline, tldextract 5.x tries to download the Public Suffix List on first use, so the
    # socket guard really can fail; with it, no connection is attempted.
    import os
    import subprocess
    import sys

    env = {k: v for k, v in os.environ.items() if not k.startswith("TLDEXTRACT")}
    env["TLDEXTRACT_CACHE"] = os.path.join(os.environ.get("TMPDIR", "/tmp"), f"chartveil-tld-{os.getpid()}-{mode}")
    out = subprocess.run([sys.executable, "-c", _PROBE, mode], capture_output=True, text=True, env=env, check=True)
    attempts = int(out.stdout.strip().splitlines()[-1])
    assert (attempts > 0) is expect_fetch


def test_make_offline_is_idempotent(fresh_tldextract: None) -> None:
    offline.make_offline()
    first = tld_impl.TLD_EXTRACTOR
    offline.make_offline()
    assert tld_impl.TLD_EXTRACTOR is first
    assert offline.is_offline()
    assert first.suffix_list_urls == ()


def test_snapshot_still_splits_suffixes(no_network: list[tuple[object, ...]], fresh_tldextract: None) -> None:
    offline.make_offline()
    # Worked example from tldextract's own docstring (Public Suffix List: co.uk is a suffix).
    result = tldextract.extract("http://forums.bbc.co.uk/")
    assert (result.subdomain, result.domain, result.suffix) == ("forums", "bbc", "co.uk")
    assert no_network == []


def test_engine_build_and_analysis_open_no_socket(
    no_network: list[tuple[object, ...]], fresh_tldextract: None
) -> None:
    engine.clear_engine_cache()  # force a cold spaCy load under the guard
    recognizers = [
        # Presidio's own e-mail recognizer validates hosts with tldextract.
        EmailRecognizer(supported_entity="EMAIL"),
        UrlRecognizer(supported_entity="URL"),
    ]
    detector = engine.make_presidio_detector(extra_recognizers=recognizers, use_gazetteer=False)
    note = Note("n1", NOTE)
    spans = detector.detect(note, detector.analyze_batch([note.text])[0])
    found = {(s.label, s.text_in(note)) for s in spans}
    assert ("EMAIL", "jdoe@mail.example.com") in found
    assert any(label == "URL" and "portal.example.org" in text for label, text in found)
    assert no_network == []
