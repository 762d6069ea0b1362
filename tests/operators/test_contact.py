"""Contact operators land only in ranges reserved for fiction and documentation.

References (named beside each check):
* phonenumbers (Google libphonenumber) parses the surrogate phones; the NANPA
  reserves 555-0100..555-0199 for fictional use;
* RFC 2606 reserved second-level domains example.com/.net/.org;
* RFC 5737 (IPv4) and RFC 3849 (IPv6) documentation ranges, checked with
  Python's ``ipaddress``; ``urllib.parse`` splits the URLs;
* python-stdnum's ``stdnum.us.ssn`` (SSA rules: area 000, 666 and 900-999 are
  never issued).
Every number and address below is invented.
"""

from __future__ import annotations

import ipaddress
import re
from urllib.parse import urlsplit

import phonenumbers
import pytest
from stdnum.exceptions import InvalidComponent
from stdnum.us import ssn as stdnum_ssn

from deid.keys import SecretKey
from deid.operators.base import NoteState
from deid.policy import load_policy
from deid.registry import operators

KEY = SecretKey(b"k" * 32)
OTHER_KEY = SecretKey(b"q" * 32)
POLICY = load_policy()
RFC2606 = ("example.com", "example.net", "example.org")  # source: RFC 2606 section 3
DOC_NETS = [
    ipaddress.ip_network(n) for n in ("192.0.2.0/24", "198.51.100.0/24", "203.0.113.0/24", "2001:db8::/32")
]


def state(key: SecretKey = KEY, patient: str = "p1") -> NoteState:
    return NoteState(key=key, policy=POLICY, patient_key=patient, date_offset_days=0)


def run(name: str, original: str, label: str, st: NoteState | None = None) -> str:
    return operators.get(name)().apply(original, label, st or state())


def skeleton(text: str) -> str:
    return re.sub(r"\d", "9", text)


# --- phones ---------------------------------------------------------------------------------------------

PHONES = [
    "(617) 555-1234",
    "617.555.1234",
    "617-555-1234",
    "+1 617 555 1234",
    "1-617-555-1234",
    "6175551234",
    "(617)555-1234 ext. 55",
    "617-555-1234 x123",
    "555-1234",
    "+44 20 7946 0958",
]


@pytest.mark.parametrize("original", PHONES)
def test_phone_is_in_the_fictional_range(original: str) -> None:
    out = run("phone_fiction.v1", original, "PHONE")
    main = re.split(r"(?i)\s*(?:x|ext)", out)[0]
    if len(re.sub(r"\D", "", main)) == 7:
        main = "(201) " + main  # a local number: parse it inside any area code
    number = phonenumbers.parse(main, "US")  # source: phonenumbers (libphonenumber)
    national = f"{number.national_number:010d}"
    assert number.country_code == 1
    assert national[3:6] == "555" and 100 <= int(national[6:]) <= 199  # source: NANPA fictional 555-01XX
    assert national[0] in "23456789" and national[1:3] != "11"  # a valid-looking NANP area code


@pytest.mark.parametrize("original", PHONES[:-1])
def test_phone_layout_is_kept(original: str) -> None:
    out = run("phone_fiction.v1", original, "PHONE")
    assert skeleton(out) == skeleton(original)
    assert out != original


def test_phone_and_fax_share_a_surrogate_and_layouts_share_digits() -> None:
    a = run("phone_fiction.v1", "(617) 555-1234", "PHONE")
    b = run("phone_fiction.v1", "617.555.1234", "FAX")
    c = run("phone_fiction.v1", "+1 617 555 1234", "PHONE", state(patient="other"))
    assert re.sub(r"\D", "", a) == re.sub(r"\D", "", b) == re.sub(r"\D", "", c)[1:]
    assert a != run("phone_fiction.v1", "(617) 555-1234", "PHONE", state(OTHER_KEY))


def test_sixty_local_numbers_in_one_note_stay_distinct() -> None:
    st = state()
    outs = [run("phone_fiction.v1", f"555-{1000 + 37 * i}", "PHONE", st) for i in range(60)]
    assert len(set(outs)) == 60  # only 100 fictional lines exist, so collisions must be resolved


# --- e-mail and URLs ------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "original", ["harold.quimby42@oakapple-mail.com", "HQ@Clinic.ORG", "a_b-c+tag@x.co.uk"]
)
def test_email_on_reserved_domain_with_local_shape(original: str) -> None:
    out = run("email_reserved.v1", original, "EMAIL")
    local, _, domain = out.partition("@")
    assert domain in RFC2606  # source: RFC 2606
    assert skeleton(re.sub(r"[A-Za-z]", "a", local)) == skeleton(
        re.sub(r"[A-Za-z]", "a", original.split("@")[0])
    )
    assert out.casefold() != original.casefold()


def test_email_is_consistent_and_case_insensitive() -> None:
    a = run("email_reserved.v1", "Harold.Quimby@Oakapple-mail.com", "EMAIL")
    b = run("email_reserved.v1", "harold.quimby@oakapple-mail.com", "EMAIL", state(patient="p7"))
    assert a.casefold() == b.casefold()


@pytest.mark.parametrize(
    "original",
    [
        "https://www.oakapple-clinic.org/patients/12345?id=9",
        "oakapple.org",
        "http://portal.quarrow.net:8080/a/b",
        "www.oakapple.com",
    ],
)
def test_url_host_is_under_a_reserved_domain(original: str) -> None:
    out = run("url_reserved.v1", original, "URL")
    parts = urlsplit(out if "://" in out else "//" + out)  # source: urllib.parse (RFC 3986 splitting)
    host = parts.hostname or ""
    assert any(host == d or host.endswith("." + d) for d in RFC2606), out  # source: RFC 2606
    orig = urlsplit(original if "://" in original else "//" + original)
    assert parts.scheme == orig.scheme and parts.port == orig.port
    assert skeleton(re.sub(r"[A-Za-z]", "a", parts.path)) == skeleton(re.sub(r"[A-Za-z]", "a", orig.path))
    assert host.startswith("www.") == (orig.hostname or "").startswith("www.")


# --- IP addresses ---------------------------------------------------------------------------------------


@pytest.mark.parametrize(
    "original", ["10.1.2.3", "172.16.254.1", "8.8.4.4", "fe80::1", "2607:f8b0:4005::200e"]
)
def test_ip_in_documentation_ranges_same_family(original: str) -> None:
    out = run("ip_documentation.v1", original, "IP")
    addr = ipaddress.ip_address(out)  # source: Python ipaddress
    assert addr.version == ipaddress.ip_address(original).version
    assert any(addr in net for net in DOC_NETS if net.version == addr.version)  # source: RFC 5737 / RFC 3849


def test_ip_prefix_tail_kept_and_distinct_in_one_note() -> None:
    assert run("ip_documentation.v1", "10.1.2.3/24", "IP").endswith("/24")
    st = state()
    outs = {run("ip_documentation.v1", f"10.0.{i}.1", "IP", st) for i in range(200)}
    assert len(outs) == 200


# --- SSN ------------------------------------------------------------------------------------------------


@pytest.mark.parametrize("original", ["123-45-6789", "123 45 6789", "123456789", "078-05-1120"])
def test_ssn_is_never_issued_and_keeps_layout(original: str) -> None:
    out = run("ssn_unissued.v1", original, "SSN")
    assert skeleton(out) == skeleton(original)
    digits = re.sub(r"\D", "", out)  # stdnum reads "AAA-GG-SSSS" or nine digits, not spaces
    assert not stdnum_ssn.is_valid(digits)  # source: python-stdnum
    with pytest.raises(InvalidComponent):  # invalid because of the area (or group/serial), not the format
        stdnum_ssn.validate(digits)
    assert digits[:3] in {"000", "666"} or digits[0] == "9"  # source: SSA never-issued areas
    assert digits[3:5] != "00" and digits[5:] != "0000"


def test_partial_ssn_keeps_its_shape() -> None:
    out = run("ssn_unissued.v1", "6789", "SSN")
    assert out.isdigit() and len(out) == 4 and out != "6789"
