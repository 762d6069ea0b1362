"""Registers chartveil's own detectors the way a plugin would register its own.

Presidio recognizers (they run inside one analyzer call per note):
``regex.v1`` (pattern files, including ``field.v1`` label-value entries),
``names.v1``, ``name_lists.v1``, ``spacy_ner.v1``, ``gazetteer.v1``.
Other detectors and suppressors register themselves in their modules:
``presidio.v1``, ``roster.v1``, ``clinical_numbers.v1``, ``eponyms.v1``.
"""

from __future__ import annotations

from presidio_analyzer import EntityRecognizer

from deid.detectors import clinical_numbers, engine, eponyms, roster  # noqa: F401  (self-registering)
from deid.detectors.gazetteer import GazetteerRecognizer
from deid.detectors.name_lists import NameListRecognizer
from deid.detectors.names import NameTriggerRecognizer
from deid.detectors.organizations import OrganizationRecognizer
from deid.detectors.patterns import load_recognizers
from deid.detectors.professions import ProfessionRecognizer
from deid.detectors.spacy_ner import SpacyEntityRecognizer
from deid.registry import detectors


@detectors.register("regex.v1")
def regex_recognizers() -> list[EntityRecognizer]:
    """Every entry of ``patterns/*.yaml`` as a Presidio recognizer."""
    return list(load_recognizers())


@detectors.register("names.v1")
def triggered_names() -> EntityRecognizer:
    """Names after titles, roles, relations and sign-off cues."""
    return NameTriggerRecognizer()


@detectors.register("name_lists.v1")
def census_names() -> EntityRecognizer:
    """Names from the 1990 US Census first and last name lists, with capitalisation and context."""
    return NameListRecognizer()


@detectors.register("spacy_ner.v1")
def spacy_entities() -> EntityRecognizer:
    """The spaCy pipeline's entities mapped onto chartveil labels."""
    return SpacyEntityRecognizer()


@detectors.register("gazetteer.v1")
def us_places() -> EntityRecognizer:
    """US cities, counties and states from installed gazetteers."""
    return GazetteerRecognizer()


@detectors.register("organizations.v1")
def organizations_by_suffix() -> EntityRecognizer:
    """Organisations and care facilities named by their last words ("... LLC", "... Hospital")."""
    return OrganizationRecognizer()


@detectors.register("professions.v1")
def professions() -> EntityRecognizer:
    """Occupations of the patient or a relative after a work cue ("works as a", "44M,")."""
    return ProfessionRecognizer()
