"""Contact details replaced by values reserved for fiction and documentation.

Each operator keeps the original's layout but lands in a range that can never
reach a real person or machine:

* ``phone_fiction.v1``: NANP numbers NXX-555-01DD. The North American
  Numbering Plan Administrator reserves 555-0100 through 555-0199 for
  fictional use in every area code; DD and a valid-looking area code are keyed.
* ``email_reserved.v1``: a keyed local part at example.com/.org/.net (RFC 2606).
* ``url_reserved.v1``: a keyed host label under example.com/.org/.net (RFC 2606),
  scheme, "www." and the path's shape kept.
* ``ip_documentation.v1``: IPv4 192.0.2.0/24, 198.51.100.0/24, 203.0.113.0/24
  (RFC 5737); IPv6 2001:db8::/32 (RFC 3849).
* ``ssn_unissued.v1``: area numbers 000, 666 or 900-999, which the Social
  Security Administration never issues.

PHONE and FAX share one key space ("PHONE"), so a number a detector labels a
phone in one note and a fax in another still gets one surrogate.
"""

from __future__ import annotations

import ipaddress
import re

from deid.operators.base import KeyedOperator, NoteState
from deid.operators.choose import guard, keyed_bytes, keyed_chars, normalise, unique
from deid.registry import operators

RESERVED_DOMAINS = ("example.com", "example.org", "example.net")
IPV4_DOC_NETS = ("192.0.2.", "198.51.100.", "203.0.113.")
IPV6_DOC_PREFIX = "2001:db8"
SSN_UNISSUED_AREAS = ("000", "666", *(str(a) for a in range(900, 1000)))

_EXT = re.compile(r"(?i)(?P<mark>\s*(?:x|ext\.?|extension|#)\s*)(?P<digits>\d+)\s*$")
_URL = re.compile(
    r"^(?P<scheme>[A-Za-z][\w+.-]*://)?(?P<www>www\d?\.)?(?P<host>[^/:?#\s]+)(?P<port>:\d+)?(?P<rest>[/?#].*)?$",
    re.DOTALL,
)


def _fill(layout: str, digits: str) -> str:
    """Put ``digits`` into the digit positions of ``layout``, in order."""
    it = iter(digits)
    return "".join(next(it) if c.isdigit() else c for c in layout)


#: Valid-looking NANP area codes: [2-9][0-8][0-9], minus the N11 service codes and 555.
_AREA_CODES = tuple(
    code
    for code in (f"{a}{b}{c}" for a in range(2, 10) for b in range(9) for c in range(10))
    if code[1:] != "11" and code != "555"
)


@operators.register("phone_fiction.v1")
class PhoneFiction(KeyedOperator):
    """Replace a telephone or fax number with a fictional NANP number in the same layout."""

    name = "phone_fiction.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return a 555-01DD number laid out like ``original``; an extension keeps its length."""
        ext = _EXT.search(original)
        main = original[: ext.start()] if ext else original
        digits = "".join(c for c in main if c.isdigit())
        core = digits[1:] if len(digits) == 11 and digits.startswith("1") else digits
        norm = core + ("x" + ext["digits"] if ext else "")

        def make(attempt: int) -> str:
            n = state.key.number("PHONE", "number", norm, str(attempt))
            line = f"555-01{n % 100:02d}"
            area = _AREA_CODES[(n // 100) % len(_AREA_CODES)]
            if len(digits) == 7:
                new_main = _fill(main, line.replace("-", ""))
            elif len(core) == 10:
                new_main = _fill(main, digits[: len(digits) - 10] + area + line.replace("-", ""))
            else:  # no NANP layout to keep (too short, or an international number)
                lead = main[: len(main) - len(main.lstrip())]
                new_main = lead + (line if len(digits) < 10 else f"({area}) {line}")
            if not ext:
                return new_main
            stream = keyed_bytes(state, "PHONE", "ext", norm, str(attempt))
            return new_main + ext["mark"] + keyed_chars(ext["digits"], stream) + original[ext.end("digits") :]

        return guard(original, unique(state, "PHONE", original, norm, make), label, state)


@operators.register("email_reserved.v1")
class EmailReserved(KeyedOperator):
    """Replace an e-mail address with a keyed one on an RFC 2606 reserved domain."""

    name = "email_reserved.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return ``local@example.{com,org,net}``; the local part keeps its shape and case."""
        local, _, _ = original.strip().partition("@")
        norm = normalise(original, spaces=False)

        def make(attempt: int) -> str:
            stream = keyed_bytes(state, "EMAIL", "local", norm, str(attempt))
            new_local = keyed_chars(local, stream, keep_leading_zeros=False) or "user"
            domain = RESERVED_DOMAINS[state.key.number("EMAIL", "domain", norm, str(attempt)) % 3]
            return f"{new_local}@{domain}"

        return guard(original, unique(state, "EMAIL", original, norm, make), label, state)


@operators.register("url_reserved.v1")
class UrlReserved(KeyedOperator):
    """Replace a URL's host with a keyed label under an RFC 2606 reserved domain."""

    name = "url_reserved.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return the URL with a reserved host; scheme, "www.", port and path shape are kept."""
        m = _URL.match(original.strip())
        norm = normalise(original, spaces=False)
        scheme, www, host, port, rest = (
            (m.group(g) or "" for g in ("scheme", "www", "host", "port", "rest"))
            if m
            else ("", "", original.strip(), "", "")
        )
        width = min(max(len(host.split(".")[0]), 4), 15)

        def make(attempt: int) -> str:
            stream = keyed_bytes(state, "URL", "host", norm, str(attempt))
            new_host = keyed_chars("a" * width, stream)
            domain = RESERVED_DOMAINS[state.key.number("URL", "domain", norm, str(attempt)) % 3]
            path = keyed_chars(
                rest, keyed_bytes(state, "URL", "path", norm, str(attempt)), keep_leading_zeros=False
            )
            return f"{scheme}{www}{new_host}.{domain}{port}{path}"

        return guard(original, unique(state, "URL", original, norm, make), label, state)


@operators.register("ip_documentation.v1")
class IpDocumentation(KeyedOperator):
    """Replace an IP address with one from the documentation ranges (RFC 5737, RFC 3849)."""

    name = "ip_documentation.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return an address of the same family in a documentation range; a "/nn" or ":port" tail is kept."""
        text = original.strip()
        v4 = re.match(r"^(\d{1,3}(?:\.\d{1,3}){3})(.*)$", text, re.DOTALL)
        norm = normalise(v4.group(1) if v4 else text, spaces=False)

        def make(attempt: int) -> str:
            n = state.key.number("IP", "address", norm, str(attempt))
            if v4 or ":" not in text:
                return f"{IPV4_DOC_NETS[n % 3]}{1 + (n // 3) % 254}" + (v4.group(2) if v4 else "")
            groups = [f"{(n >> (16 * i)) & 0xFFFF:x}" for i in range(6)]
            addr = str(ipaddress.IPv6Address(f"{IPV6_DOC_PREFIX}:{':'.join(groups)}"))
            return addr.upper() if text.isupper() else addr

        return guard(original, unique(state, "IP", text, norm, make), label, state)


@operators.register("ssn_unissued.v1")
class SsnUnissued(KeyedOperator):
    """Replace a Social Security number with one from an area the SSA never issues."""

    name = "ssn_unissued.v1"

    def apply(self, original: str, label: str, state: NoteState) -> str:
        """Return AAA-GG-SSSS with AAA in 000/666/900-999, laid out like ``original``.

        A span without nine digits (a partial "last four") keeps its shape with keyed digits.
        """
        digits = "".join(c for c in original if c.isdigit())

        def make(attempt: int) -> str:
            n = state.key.number("SSN", "number", digits, str(attempt))
            if len(digits) != 9:
                return keyed_chars(
                    original, keyed_bytes(state, "SSN", "partial", digits, str(attempt)), False
                )
            area = SSN_UNISSUED_AREAS[n % len(SSN_UNISSUED_AREAS)]
            group = 1 + (n // 1000) % 99
            serial = 1 + (n // 100_000) % 9999
            return _fill(original, f"{area}{group:02d}{serial:04d}")

        return guard(original, unique(state, "SSN", original, digits, make), label, state)
