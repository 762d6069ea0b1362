"""Detector precedence and overlap resolution: one test per rule of deid/data/precedence.toml."""

from __future__ import annotations

import pytest

from deid.detectors.resolve import Precedence, load_precedence, merge, resolve
from deid.model import Note, Span

P = load_precedence()
NOTE = Note("n1", "Harold Quimby seen 03/04/2019 at Parkinson clinic. MRN 0012345.")


class VetoAll:
    """A suppressor that vetoes everything, to show who it may not veto."""

    name = "veto_all.test"

    def suppresses(self, note: Note, span: Span) -> bool:
        return True


def test_table_order_is_the_documented_one() -> None:
    # The precedence file is the single source of truth; this snapshot makes a change deliberate.
    assert P.order == (
        "roster.v1", "field.v1", "regex.v1", "names.v1", "propagate.v1", "professions.v1", "organizations.v1",
        "spacy_ner.v1", "gazetteer.v1", "name_lists.v1",
    )
    assert P.protected == frozenset({"roster.v1", "field.v1"})


def test_disjoint_spans_pass_through_unchanged() -> None:
    a = Span(0, 13, "NAME", 0.8, "spacy_ner.v1")
    b = Span(19, 29, "DATE", 0.9, "regex.v1/date_numeric")
    assert resolve(NOTE, [b, a], P) == [a, b]


def test_overlap_merges_to_the_union() -> None:
    # Recall first: a partly covered identifier still leaks, so the merged span covers both.
    a = Span(0, 6, "NAME", 0.9, "names.v1/title")
    b = Span(3, 13, "NAME", 0.7, "spacy_ner.v1")
    (m,) = resolve(NOTE, [a, b], P)
    assert (m.start, m.end) == (0, 13)


@pytest.mark.parametrize(
    ("winner", "loser"),
    [
        ("roster.v1/last_name", "field.v1/name_field"),
        ("field.v1/mrn_field", "regex.v1/id_long_number"),
        ("regex.v1/date_numeric", "names.v1/title"),
        ("names.v1/title", "propagate.v1/NAME"),
        ("propagate.v1/NAME", "professions.v1/work"),
        ("professions.v1/work", "organizations.v1/suffix"),
        ("organizations.v1/suffix", "spacy_ner.v1"),
        ("spacy_ner.v1", "gazetteer.v1/city"),
        ("gazetteer.v1/city", "name_lists.v1/pair"),
        ("name_lists.v1/pair", "some_plugin.v1"),  # unknown detectors rank last
    ],
)
def test_earlier_detector_in_the_table_gives_the_label(winner: str, loser: str) -> None:
    a = Span(0, 13, "NAME", 0.3, winner)
    b = Span(0, 13, "CITY", 0.99, loser)
    (m,) = resolve(NOTE, [b, a], P)
    assert (m.label, m.source, m.score) == ("NAME", winner, 0.99)


def test_same_detector_higher_score_then_longer_span_wins() -> None:
    a = Span(0, 6, "CITY", 0.5, "regex.v1/x")
    b = Span(0, 13, "NAME", 0.5, "regex.v1/y")
    c = Span(0, 6, "ZIP", 0.4, "regex.v1/z")
    (m,) = resolve(NOTE, [a, b, c], P)
    assert m.label == "NAME"
    (m,) = resolve(NOTE, [Span(0, 6, "CITY", 0.6, "regex.v1/x"), b], P)
    assert m.label == "CITY"


def test_chains_of_overlaps_merge_transitively() -> None:
    spans = [Span(0, 5, "NAME", 1, "spacy_ner.v1"), Span(4, 10, "NAME", 1, "spacy_ner.v1"),
             Span(9, 13, "NAME", 1, "spacy_ner.v1")]
    assert [(m.start, m.end) for m, _ in merge(spans, P)] == [(0, 13)]


def test_touching_spans_do_not_merge() -> None:
    spans = [Span(0, 6, "NAME", 1, "spacy_ner.v1"), Span(6, 13, "NAME", 1, "spacy_ner.v1")]
    assert len(merge(spans, P)) == 2


def test_suppressors_veto_unprotected_spans() -> None:
    s = Span(33, 42, "NAME", 0.85, "spacy_ner.v1")
    assert resolve(NOTE, [s], P, [VetoAll()]) == []


@pytest.mark.parametrize("protected", ["roster.v1/last_name", "field.v1/name_field"])
def test_suppressors_never_veto_roster_or_field_hits(protected: str) -> None:
    weak = Span(33, 42, "NAME", 0.85, "spacy_ner.v1")
    strong = Span(33, 42, "NAME", 1.0, protected)
    assert resolve(NOTE, [weak, strong], P, [VetoAll()]) == [Span(33, 42, "NAME", 1.0, protected)]


def test_one_vetoed_candidate_cannot_veto_a_strong_one() -> None:
    class VetoSpacyOnly:
        name = "veto_spacy.test"

        def suppresses(self, note: Note, span: Span) -> bool:
            return span.source == "spacy_ner.v1"

    a = Span(0, 13, "NAME", 0.6, "spacy_ner.v1")
    b = Span(0, 13, "NAME", 0.9, "names.v1/title")
    assert len(resolve(NOTE, [a, b], P, [VetoSpacyOnly()])) == 1
    assert resolve(NOTE, [a], P, [VetoSpacyOnly()]) == []


def test_custom_table() -> None:
    p = Precedence(("b.v1", "a.v1"), frozenset())
    (m,) = resolve(NOTE, [Span(0, 4, "NAME", 1, "a.v1"), Span(0, 4, "CITY", 0.1, "b.v1")], p)
    assert m.label == "CITY"
