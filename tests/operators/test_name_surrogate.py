"""name_surrogate.v1: one surrogate person for every way a name is written.

References: the 1990 US Census name frequency lists as shipped in the PyPI
package ``names`` (dist.male.first, dist.female.first, dist.all.last) for the
surrogate lists and the gender of first names. All names in the tables below
are invented or common census names used as test values, not people.
"""

from __future__ import annotations

from pathlib import Path

import names as census_pkg
import pytest

from deid.keys import SecretKey
from deid.operators.base import NoteState
from deid.operators.choose import word_list
from deid.operators.names import letter_classes, map_initial
from deid.policy import load_policy
from deid.registry import operators

KEY = SecretKey(b"k" * 32)
OTHER_KEY = SecretKey(b"q" * 32)
POLICY = load_policy()
CENSUS = Path(census_pkg.__file__).parent


def state(key: SecretKey = KEY, patient: str = "p1") -> NoteState:
    return NoteState(key=key, policy=POLICY, patient_key=patient, date_offset_days=0)


def op(original: str, st: NoteState | None = None) -> str:
    return operators.get("name_surrogate.v1")().apply(original, "NAME", st or state())


def census(name: str) -> dict[str, float]:
    rows = (line.split() for line in (CENSUS / name).read_text().splitlines() if line.strip())
    return {r[0].lower(): float(r[1]) for r in rows}


MALE, FEMALE, LAST = census("dist.male.first"), census("dist.female.first"), census("dist.all.last")


def first_last(full: str) -> tuple[str, str]:
    first, last = op(full).split(" ")
    return first, last


# --- data files against the census lists (source: 1990 US Census via the `names` package) ---------------


def test_gender_table_follows_census_frequencies() -> None:
    table = dict(line.split("\t") for line in word_list("first_name_gender.tsv"))
    assert set(table) == set(MALE) | set(FEMALE)  # source: census lists
    for name, gender in table.items():
        expected = "M" if MALE.get(name, 0) >= FEMALE.get(name, 0) else "F"
        assert gender == expected, name


@pytest.mark.parametrize(
    ("file", "own", "other"),
    [("surrogate_first_male.txt", MALE, FEMALE), ("surrogate_first_female.txt", FEMALE, MALE)],
)
def test_surrogate_first_names_are_clearly_one_gender(
    file: str, own: dict[str, float], other: dict[str, float]
) -> None:
    for name in word_list(file):
        assert name in own, name  # source: census list of that gender
        assert other.get(name, 0) * 10 < own[name], name


def test_surrogate_last_names_are_census_surnames_not_first_names() -> None:
    for name in word_list("surrogate_last.txt"):
        assert name in LAST and name not in MALE and name not in FEMALE, name  # source: census lists


# --- one person, many spellings --------------------------------------------------------------------------


def test_every_spelling_of_one_person_gets_one_surrogate_person() -> None:
    first, last = first_last("Harold Quimby")
    initial = first[0]
    expected = {
        "Mr. Quimby": f"Mr. {last}",
        "QUIMBY, HAROLD": f"{last.upper()}, {first.upper()}",
        "H. Quimby": f"{initial}. {last}",
        "Quimby's": f"{last}'s",
        "harold": first.lower(),
        "Dr. Harold Quimby Jr., MD": f"Dr. {first} {last} Jr., MD",
        "quimby, harold": f"{last.lower()}, {first.lower()}",
        "Harold Q.": f"{first} {last[0]}.",
    }
    for original, want in expected.items():
        assert op(original) == want, original


def test_same_name_same_surrogate_across_notes_and_patients() -> None:
    for original in ["Harold Quimby", "Maribel Ostrander", "QUIMBY, HAROLD M", "Ludwig van Beethoven"]:
        assert op(original, state(patient="p1")) == op(original, state(patient="p2")), original


def test_a_different_key_gives_different_surrogates() -> None:
    originals = ["Harold Quimby", "Maribel Ostrander", "Mary Jones", "Robert Smith", "Linda Garcia"]
    ours = [op(o, state(KEY)) for o in originals]
    theirs = [op(o, state(OTHER_KEY)) for o in originals]
    assert sum(a != b for a, b in zip(ours, theirs, strict=True)) >= 4


# --- shape -----------------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("original", "pattern"),
    [
        ("HAROLD QUIMBY", lambda s: s.isupper() and len(s.split()) == 2),
        ("harold quimby", lambda s: s.islower() and len(s.split()) == 2),
        ("Harold Quimby", lambda s: all(w[0].isupper() and w[1:].islower() for w in s.split())),
        ("Quimby-Ostrander", lambda s: s.count("-") == 1 and all(p.istitle() for p in s.split("-"))),
        ("H.M. Quimby", lambda s: s[1] == "." and s[3] == "." and s[0].isupper() and s[2].isupper()),
        ("Quimby’s chart", lambda s: "’s " in s),  # typographic apostrophe kept
        ("Mrs. Ostrander", lambda s: s.startswith("Mrs. ")),
        ("QUIMBY, HAROLD M", lambda s: s.count(",") == 1 and len(s.split()[-1]) == 1),
        ("Harold M Quimby, PA-C", lambda s: s.endswith(", PA-C") and len(s.split()[1]) == 1),
    ],
)
def test_shape_is_kept(original: str, pattern) -> None:  # type: ignore[no-untyped-def]
    out = op(original)
    assert pattern(out), out
    assert out != original


def test_gender_of_the_first_name_is_kept() -> None:
    male = set(word_list("surrogate_first_male.txt"))
    female = set(word_list("surrogate_first_female.txt"))
    for name in ["james", "robert", "harold", "kevin", "walter"]:  # source: census male list
        assert op(name) in male, name
    for name in ["mary", "patricia", "linda", "maribel", "gladys"]:  # source: census female list
        assert op(name) in female, name


def test_initials_and_full_names_share_the_mapped_letter() -> None:
    st = state()
    for name in ["harold", "mary", "zelda", "quentin", "xavier", "oscar", "yolanda"]:
        assert op(name, st)[0] == map_initial(name[0], st), name


def test_initial_map_has_no_fixed_points_and_only_targets_letters_with_surrogates() -> None:
    st = state()
    common, rare, orphan = letter_classes()
    images = {c: map_initial(c, st) for c in "abcdefghijklmnopqrstuvwxyz"}
    assert all(c != v for c, v in images.items())
    # Within the common and the rare letters the map is one-to-one, so two initials never merge.
    assert len({images[c] for c in common + rare}) == len(common + rare)
    for target in set(images.values()):
        for file in ["surrogate_first_male.txt", "surrogate_first_female.txt", "surrogate_last.txt"]:
            assert any(n.startswith(target) for n in word_list(file)), (target, file)
    assert "y" in orphan  # no male first name of the census lists used starts with "y"


def test_surrogate_never_equals_the_original() -> None:
    st = state()
    samples = list(MALE)[:150] + list(FEMALE)[:150]
    for name in samples:
        assert op(name, st).casefold() != name.casefold(), name
    for surname in list(LAST)[:300]:
        assert op(f"Mr. {surname}", st).casefold() != f"mr. {surname}", surname


def test_a_title_alone_is_never_returned_as_is() -> None:
    assert op("Dr.") != "Dr."


# --- collisions ------------------------------------------------------------------------------------------


def test_two_people_in_one_note_never_share_a_surrogate() -> None:
    # Find two census first names whose first choice is the same surrogate (fresh state each time) ...
    seen: dict[str, str] = {}
    pair = None
    for name in list(MALE)[:400]:
        sur = op(name, state())
        if sur in seen:
            pair = (seen[sur], name)
            break
        seen[sur] = name
    assert pair is not None, "no first-choice collision among 400 names; widen the search"
    a, b = pair
    # ... then, in one note, the second one moves on to another surrogate, the first keeps its own.
    st = state()
    out_a, out_b = op(a, st), op(b, st)
    assert out_a == op(a, state())
    assert out_a != out_b
    assert out_b[0] == out_a[0]  # still the mapped initial while that letter has free names
    assert op(a, st) == out_a  # repeating the first original in the note is not a collision
