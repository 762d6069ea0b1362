"""Memory benchmark: peak resident memory of `chartveil run` as the input grows.

Streaming means memory should not grow with the number of notes. This script
writes the development notes repeated 1x, 4x and 16x to JSONL files, runs a
de-identification on each in a fresh subprocess (demo key), and prints each
run's peak resident memory and notes/s. Not a test: figures, not assertions.

    python tests/bench/memory.py [--base N]
"""

from __future__ import annotations

import argparse
import json
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

CHILD = """
import resource, sys, time
from pathlib import Path
import deid
start = time.perf_counter()
s = deid.deidentify(Path(sys.argv[1]), Path(sys.argv[2]), deid.demo_key())
secs = time.perf_counter() - start
peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
print(f"{s.notes_in} {secs:.2f} {peak:.0f} {s.balanced}")
"""


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--notes", type=Path, default=ROOT / "tests" / "corpora" / "dev" / "notes.jsonl")
    ap.add_argument("--factors", type=int, nargs="+", default=[1, 4, 16])
    args = ap.parse_args()
    records = [json.loads(line) for line in args.notes.read_text(encoding="utf-8").splitlines()]
    print(f"{'notes':>7} {'seconds':>8} {'notes/s':>8} {'peak MiB':>9} balanced")
    with tempfile.TemporaryDirectory() as tmp:
        for factor in args.factors:
            src = Path(tmp) / f"x{factor}.jsonl"
            with src.open("w", encoding="utf-8") as fh:
                for i in range(factor):
                    for rec in records:
                        fh.write(json.dumps({**rec, "note_id": f"{rec['note_id']}-{i}"}) + "\n")
            out = subprocess.run([sys.executable, "-c", CHILD, str(src), str(Path(tmp) / f"out{factor}")],
                                 capture_output=True, text=True, check=True).stdout.split()
            n, secs, peak, balanced = int(out[0]), float(out[1]), float(out[2]), out[3]
            print(f"{n:7d} {secs:8.2f} {n / secs:8.1f} {peak:9.0f} {balanced}")


if __name__ == "__main__":
    main()
