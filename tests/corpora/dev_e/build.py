"""Build the fifth development corpus (``dev_e``; written as a blind set) from ``source/*.md``.

Outputs next to this script: ``gold.jsonl``, ``notes.jsonl``, ``manifest.csv``.

Run:  python tests/corpora/dev_e/build.py [--strict]
"""

from __future__ import annotations

import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from corpus_build import build  # noqa: E402  (a sibling script, found through the path above)

if __name__ == "__main__":
    sys.exit(build(HERE, "Build the dev_e chartveil corpus (scoring only)."))
