"""What a run or report records about itself: versions, policy, pattern hash, key fingerprint."""

from __future__ import annotations

import datetime as dt
import hashlib
from importlib import metadata
from typing import Any

from deid.keys import SecretKey
from deid.policy import Policy
from deid.resources import patterns_dir


def _version(dist: str) -> str:
    try:
        return metadata.version(dist)
    except metadata.PackageNotFoundError:
        return "not installed"


def patterns_hash() -> str:
    """SHA-256 (first 16 hex digits) over every pattern file's name and bytes."""
    digest = hashlib.sha256()
    for path in sorted(patterns_dir().glob("*.yaml")):
        digest.update(path.name.encode())
        digest.update(path.read_bytes())
    return digest.hexdigest()[:16]


def run_fingerprint(policy: Policy, key: SecretKey | None) -> dict[str, Any]:
    """The provenance block written into run manifests and reports."""
    from deid.detectors.engine import spacy_pipeline_version  # NOTE: late, so `import deid` stays light

    return {
        "tool": "chartveil",
        "tool_version": _version("chartveil"),
        "presidio_analyzer": _version("presidio-analyzer"),
        "spacy": _version("spacy"),
        "spacy_pipeline": spacy_pipeline_version(),
        "policy": policy.name,
        "policy_source": policy.source,
        "policy_digest": policy.digest,
        "date_mode": policy.date_mode,
        "patterns_hash": patterns_hash(),
        "key_fingerprint": key.fingerprint() if key is not None else None,
        "demo_key": bool(key and key.demo),
        "created": dt.datetime.now(dt.UTC).isoformat(timespec="seconds"),
    }
