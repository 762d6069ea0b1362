"""chartveil: de-identification and safe-text preparation for clinical notes.

The importable API mirrors the command line::

    import deid
    key = deid.load_key_file(Path("chartveil.key"))
    summary = deid.deidentify("notes.jsonl", "released/", key)
"""

from __future__ import annotations

from importlib import metadata

from deid.api import RunSummary, deidentify, scan
from deid.errors import ConfigError, DeidError, InputError, KeyFileError, NoteRejected
from deid.keys import SecretKey, demo_key, generate_key_file, load_key_file
from deid.model import LABELS, SAFE_HARBOR_LABELS, Note, Span
from deid.policy import Policy, load_policy

try:
    __version__ = metadata.version("chartveil")
except metadata.PackageNotFoundError:  # running from a source tree that was never installed
    __version__ = "0+unknown"

__all__ = [
    "LABELS",
    "SAFE_HARBOR_LABELS",
    "ConfigError",
    "DeidError",
    "InputError",
    "KeyFileError",
    "Note",
    "NoteRejected",
    "Policy",
    "RunSummary",
    "SecretKey",
    "Span",
    "__version__",
    "deidentify",
    "demo_key",
    "generate_key_file",
    "load_key_file",
    "load_policy",
    "scan",
]
