"""The secret key behind every surrogate and date offset.

Surrogates are keyed and stateless: each is derived from HMAC-SHA256 over the
key, a purpose string and a normalised original value, so the same original
maps to the same surrogate in every note, run and worker, and nobody without
the key can recompute the mapping. The key itself is never logged; run
manifests carry only its fingerprint.
"""

from __future__ import annotations

import hashlib
import hmac
import os
import secrets
import stat
from pathlib import Path

from deid.errors import KeyFileError
from deid.resources import data_file

KEY_BYTES = 32
_HEADER = "chartveil-key-v1"


class SecretKey:
    """A loaded secret key.

    Args:
        raw: The key bytes (at least 16).
        demo: True for the bundled, public demo key; runs say so.
    """

    __slots__ = ("_raw", "demo")

    def __init__(self, raw: bytes, demo: bool = False) -> None:
        if len(raw) < 16:
            raise KeyFileError("the key is shorter than 16 bytes")
        self._raw = raw
        self.demo = demo

    def digest(self, *parts: str) -> bytes:
        """HMAC-SHA256 of the parts, joined unambiguously."""
        msg = "\x1f".join(parts).encode("utf-8")
        return hmac.new(self._raw, msg, hashlib.sha256).digest()

    def number(self, *parts: str) -> int:
        """A keyed 256-bit integer for the parts; use ``% n`` to pick from n choices."""
        return int.from_bytes(self.digest(*parts), "big")

    def fingerprint(self) -> str:
        """A short public fingerprint: tells two keys apart without revealing either."""
        return self.digest("fingerprint").hex()[:16]

    def __repr__(self) -> str:  # never show key material
        return f"SecretKey(fingerprint={self.fingerprint()}, demo={self.demo})"


def generate_key_file(path: Path, overwrite: bool = False) -> SecretKey:
    """Write a new random key to ``path``, readable and writable by its owner only."""
    if path.exists() and not overwrite:
        raise KeyFileError(f"{path} already exists; refusing to overwrite a key (use --force)")
    raw = secrets.token_bytes(KEY_BYTES)
    flags = os.O_WRONLY | os.O_CREAT | os.O_TRUNC
    fd = os.open(path, flags, 0o600)
    with os.fdopen(fd, "w", encoding="ascii") as fh:
        fh.write(f"{_HEADER}\n{raw.hex()}\n")
    os.chmod(path, stat.S_IRUSR | stat.S_IWUSR)
    return SecretKey(raw)


def load_key_file(path: Path) -> SecretKey:
    """Read a key file written by :func:`generate_key_file`."""
    try:
        lines = path.read_text(encoding="ascii").split()
    except FileNotFoundError:
        raise KeyFileError(f"key file {path} does not exist; create one with `chartveil keygen`") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise KeyFileError(f"key file {path} cannot be read ({type(exc).__name__})") from None
    if len(lines) != 2 or lines[0] != _HEADER:
        raise KeyFileError(f"{path} is not a chartveil key file (expected header {_HEADER!r})")
    try:
        raw = bytes.fromhex(lines[1])
    except ValueError:
        raise KeyFileError(f"{path}: the key line is not hexadecimal") from None
    return SecretKey(raw)


def demo_key() -> SecretKey:
    """The bundled demo key. It is public: never use it for real notes."""
    key = load_key_file(data_file("demo.key"))
    return SecretKey(key._raw, demo=True)
