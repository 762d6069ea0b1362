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


def test_guard_detects_a_fetch(no_network: list[tuple[object, ...]], fresh_tldextract: None) -> None:
    # Control: without make_offline, tldextract 5.4 tries to download the Public
    # Suffix List on first use, so the guard above really can fail.
    tldextract.extract("forums.bbc.co.uk")
    assert no_network, "expected the unpatched tldextract to attempt a connection"


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
