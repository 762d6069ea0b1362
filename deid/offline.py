"""Keep every library chartveil loads from reaching the network.

chartveil runs where notes live: often a machine with no way out, and never
one where a note may leave. Two libraries in the dependency tree reach out
on their own when left alone:

* ``tldextract`` (used by Presidio's e-mail recognizer, and by any URL or
  e-mail validator that splits host names) builds a module-level extractor
  that fetches the Public Suffix List over HTTPS on its first call and caches
  it under the user's home. We swap it for an extractor that only reads the
  snapshot shipped inside the package.
* Hugging Face libraries (pulled in when someone configures a transformer
  model) download weights unless told they are offline. We set their offline
  switches so such a configuration fails loudly instead of fetching.

spaCy is loaded by package name only (see :mod:`deid.detectors.engine`), which
never downloads; Presidio downloads a model only when the package is missing,
and the engine refuses to get that far.
"""

from __future__ import annotations

import os

#: Environment switches read by Hugging Face ``huggingface_hub``,
#: ``transformers`` and ``datasets``, and by tldextract's URL override.
#: Set only when absent so an operator can still override them deliberately.
_OFFLINE_ENV: dict[str, str] = {
    "HF_HUB_OFFLINE": "1",
    "TRANSFORMERS_OFFLINE": "1",
    "HF_DATASETS_OFFLINE": "1",
    "HF_HUB_DISABLE_TELEMETRY": "1",
    # An empty list means "no remote suffix list" (tldextract >= 5 reads this
    # when a TLDExtract is built without explicit URLs).
    "TLDEXTRACT_PUBLIC_SUFFIX_LIST_URLS": "",
}

_done = False


def _offline_tldextract() -> None:
    """Replace tldextract's module-level extractor with a snapshot-only one.

    ``tldextract.extract`` looks up ``tldextract.tldextract.TLD_EXTRACTOR`` at
    call time, so replacing that attribute covers every caller, including
    Presidio's ``EmailRecognizer.validate_result``. ``cache_dir=None`` keeps
    it from reading or writing a cache in the user's home either.
    """
    import tldextract
    import tldextract.tldextract as impl

    snapshot_only = impl.TLDExtract(
        cache_dir=None, suffix_list_urls=(), fallback_to_snapshot=True
    )
    impl.TLD_EXTRACTOR = snapshot_only
    # Some versions also expose the instance at package level.
    if hasattr(tldextract, "TLD_EXTRACTOR"):
        tldextract.TLD_EXTRACTOR = snapshot_only


def make_offline() -> None:
    """Switch every known network path off; safe to call any number of times.

    Call it before building the analyzer engine. The engine calls it itself,
    so library users rarely need to.
    """
    global _done
    for name, value in _OFFLINE_ENV.items():
        os.environ.setdefault(name, value)
    if _done:
        return
    _offline_tldextract()
    _done = True


def is_offline() -> bool:
    """True once :func:`make_offline` has run in this process."""
    return _done
