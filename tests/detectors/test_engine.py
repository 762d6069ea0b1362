"""deid.detectors.engine: our recognizers only, spaCy labels untouched, spans in our model."""

from __future__ import annotations

import pytest
import spacy
from presidio_analyzer import Pattern, PatternRecognizer

from deid.detectors import engine
from deid.errors import ConfigError
from deid.model import Note, Span
from deid.registry import detectors

# 555-0100..0199 are the fictional numbers of the North American Numbering Plan (NANPA).
PHONE_RE = r"\b555-01\d\d\b"


def phone_recognizer(name: str = "regex.v1/test_phone", score: float = 0.9) -> PatternRecognizer:
    return PatternRecognizer(
        supported_entity="PHONE", name=name, patterns=[Pattern("nanp_fictional", PHONE_RE, score)]
    )


def only(*recs: PatternRecognizer, threshold: float = 0.35) -> engine.PresidioDetector:
    return engine.make_presidio_detector(
        extra_recognizers=list(recs), score_threshold=threshold, use_spacy_ner=False, use_gazetteer=False
    )


def test_registered() -> None:
    assert detectors.get("presidio.v1") is engine.make_presidio_detector


def test_span_offsets_label_and_source() -> None:
    text = "Call 555-0123 now."
    det = only(phone_recognizer())
    spans = det.detect(Note("n", text), det.analyze_batch([text])[0])
    start = text.index("555")  # offsets as Python str indices
    assert spans == [Span(start, start + 8, "PHONE", 0.9, "regex.v1/test_phone")]


def test_foreign_recognizer_name_is_filed_under_presidio() -> None:
    text = "Call 555-0123 now."
    det = only(phone_recognizer(name="SomeClassName"))
    (span,) = det.detect(Note("n", text))
    assert span.source == "presidio.v1/SomeClassName"


def test_score_threshold_drops_weak_results() -> None:
    det = only(phone_recognizer(score=0.3), threshold=0.5)
    assert det.detect(Note("n", "Call 555-0123 now.")) == []


def test_no_predefined_recognizers() -> None:
    det = only(phone_recognizer())
    names = [r.name for r in det.analyzer.registry.recognizers]
    assert names == ["regex.v1/test_phone"]
    # Presidio's predefined e-mail and credit-card recognizers would fire here.
    text = "Mail jdoe@example.com, card 4111 1111 1111 1111."
    assert det.detect(Note("n", text)) == []


def test_empty_recognizer_list_is_refused() -> None:
    # AnalyzerEngine fills an empty registry with Presidio's predefined recognizers.
    with pytest.raises(ConfigError, match="at least one recognizer"):
        engine.PresidioDetector([])


def test_unknown_label_is_refused() -> None:
    rec = PatternRecognizer(supported_entity="PHONE_NUMBER", patterns=[Pattern("p", PHONE_RE, 0.9)])
    with pytest.raises(ConfigError, match="PHONE_NUMBER"):
        only(rec)


def test_unknown_option_is_refused() -> None:
    with pytest.raises(ConfigError, match="colour"):
        engine.make_presidio_detector(colour="red")


def test_batch_keeps_order_and_spacy_labels() -> None:
    det = only(phone_recognizer())
    texts = ["First note.", "John Smith moved to Boston on Monday, March 3, 2021.", ""]
    arts = det.analyze_batch(texts)
    assert [a.tokens.text for a in arts] == texts
    labels = {e.label_ for a in arts for e in a.entities}
    # spaCy's own labels survive (Presidio's default table would turn GPE into LOCATION),
    # and DATE is dropped before any recognizer sees it.
    assert labels <= {"PERSON", "GPE", "LOC", "FAC", "ORG"}
    assert "DATE" not in labels
    assert arts[1].lemmas  # lemmas feed Presidio's context enhancer


def test_engine_is_cached_and_versioned() -> None:
    assert engine.get_engine() is engine.get_engine()
    version = engine.spacy_pipeline_version()
    assert version.startswith(engine.DEFAULT_MODEL) and spacy.__version__ in version


def test_missing_model_is_not_downloaded() -> None:
    with pytest.raises(ConfigError, match="not installed"):
        engine.get_engine("en_no_such_model_chartveil")
