"""The ``chartveil`` command line: parse options, make one API call, report, pick an exit code.

Exit codes: 0 OK; 1 a gate failed; 2 usage, configuration or input error;
3 an internal error (a bug: please report it, with the command but not the notes).
"""

from __future__ import annotations

import os
import time
from pathlib import Path

import click

from deid import api
from deid.errors import DeidError
from deid.io.base import ColumnMap
from deid.keys import generate_key_file, load_key_file
from deid.model import LABELS
from deid.policy import Policy, load_policy
from deid.resources import data_file

EXIT_OK, EXIT_GATE, EXIT_USAGE, EXIT_INTERNAL = 0, 1, 2, 3
BUILTIN_POLICIES = {"default": "policy_default.toml", "safe-harbor": "policy_safe_harbor.toml"}
CAUTION = (
    "De-identified is not anonymous. Results depend on the notes; local policy, the IRB or privacy officer "
    "and applicable law decide what may be released; review a sample by hand before release."
)


def _policy(value: str | None) -> Policy:
    if value is None:
        return load_policy()
    if value in BUILTIN_POLICIES:
        return load_policy(data_file(BUILTIN_POLICIES[value]))
    return load_policy(Path(value))


class _Progress:
    """Prints counts (never text) to stderr at most every two seconds."""

    def __init__(self, enabled: bool) -> None:
        self.enabled = enabled
        self.start = time.monotonic()
        self.last = 0.0

    def __call__(self, s: api.RunSummary) -> None:
        now = time.monotonic()
        if not self.enabled or now - self.last < 2.0:
            return
        self.last = now
        rate = (s.notes_out + s.rejected) / max(now - self.start, 1e-9)
        click.echo(f"  {s.notes_in:,} notes read, {s.notes_out:,} done, {s.rejected:,} rejected, {rate:,.1f} notes/s",
                   err=True)


def _summary(s: api.RunSummary, verb: str) -> None:
    click.echo(f"{verb}: {s.notes_in:,} notes in, {s.notes_out:,} out, {s.rejected:,} rejected "
               f"in {s.seconds:,.1f} s")
    found = ", ".join(f"{label} {s.spans_per_label[label]:,}" for label in LABELS if s.spans_per_label.get(label))
    click.echo(f"identifiers found: {found or 'none'}")
    if s.reject_reasons:
        click.echo("rejects: " + ", ".join(f"{r}: {n}" for r, n in s.reject_reasons.most_common()))
    for name, path in s.files.items():
        click.echo(f"  {name:>9}: {path}")


def _input_options(f: click.decorators.FC) -> click.decorators.FC:
    opts = [
        click.option("--policy", metavar="FILE|NAME", help="Policy TOML file, or a built-in: 'default', 'safe-harbor'."),
        click.option("--columns", metavar="SPEC", help="Input column names, e.g. 'patient_id=person_id,text=note_text'."),
        click.option("--manifest", type=click.Path(exists=True, dir_okay=False, path_type=Path),
                     help="CSV giving patient_id and note_date per note_id, for a folder of .txt files."),
        click.option("--input-format", type=click.Choice(["txt_dir.v1", "jsonl.v1", "csv.v1", "parquet.v1"]),
                     help="Override the format guessed from INPUT."),
        click.option("--workers", type=click.IntRange(0), default=1, show_default=True,
                     help="Worker processes; 0 uses every core."),
        click.option("--batch-size", type=click.IntRange(1), default=32, show_default=True,
                     help="Notes per batch (memory grows with this, not with the input)."),
        click.option("--roster", type=click.Path(exists=True, dir_okay=False, path_type=Path),
                     help="CSV of known identifiers per patient (names, MRN, DOB, ...), matched in that patient's notes."),
        click.option("--keep-originals", is_flag=True,
                     help="Also write each span's original text to the spans file (internal review only)."),
        click.option("--quiet", is_flag=True, help="No progress lines."),
    ]
    for opt in reversed(opts):
        f = opt(f)
    return f


def _workers(n: int) -> int:
    return n if n > 0 else (os.cpu_count() or 1)


class _Failure(click.ClickException):
    """A library error shown as one line: usage, configuration or input (exit code 2)."""

    exit_code = EXIT_USAGE

    def show(self, file: object = None) -> None:
        click.echo(f"error: {self.format_message()}", err=True)


class _InternalFailure(_Failure):
    """A bug (exit code 3)."""

    exit_code = EXIT_INTERNAL


class _Group(click.Group):
    """Turns library exceptions into messages and exit codes; never shows a traceback."""

    def invoke(self, ctx: click.Context) -> object:
        try:
            return super().invoke(ctx)
        except (click.ClickException, click.exceptions.Exit, click.Abort):
            raise
        except DeidError as exc:
            raise _Failure(str(exc)) from None
        except KeyboardInterrupt:
            raise _Failure("interrupted") from None
        except Exception as exc:  # noqa: BLE001 - a traceback may quote note text
            raise _InternalFailure(f"internal error ({type(exc).__name__}); please report the command you ran, "
                                   "not the notes") from None


@click.group(cls=_Group, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="chartveil")
def cli() -> None:
    """chartveil: find and replace the identifiers in clinical notes before they leave the building.

    \b
    Start with `chartveil demo`, then `chartveil keygen -o my.key` and
    `chartveil run NOTES -o OUT --key my.key`.
    """


@cli.command()
@click.argument("input_path", metavar="INPUT", type=click.Path(exists=True, path_type=Path))
@click.option("-o", "--output", "out_dir", required=True, type=click.Path(file_okay=False, path_type=Path),
              help="Folder for the de-identified notes, spans.jsonl, rejects.jsonl and run.json.")
@click.option("--key", "key_file", type=click.Path(dir_okay=False, path_type=Path),
              help="Secret key file from `chartveil keygen` (required).")
@click.option("--output-format", type=click.Choice(["txt_dir.v1", "jsonl.v1", "csv.v1", "parquet.v1"]),
              help="Write another format than the input's.")
@_input_options
def run(input_path: Path, out_dir: Path, key_file: Path | None, output_format: str | None, policy: str | None,
        columns: str | None, manifest: Path | None, input_format: str | None, workers: int, batch_size: int,
        roster: Path | None, keep_originals: bool, quiet: bool) -> None:
    """De-identify INPUT (a .txt folder, JSONL, CSV or Parquet table) into a folder.

    Every identifier is replaced by a keyed surrogate, consistent for the same
    person or place across notes and runs; every date of a patient moves by the
    same keyed offset. Notes that cannot be processed go to rejects.jsonl with
    their reason.

    \b
    Example:
      chartveil run notes.jsonl -o released/ --key chartveil.key --workers 0
      chartveil run NOTE.parquet -o out/ --key k.key --columns patient_id=person_id,text=note_text
    """
    if key_file is None:
        raise click.UsageError(
            "a key is required: surrogates and date shifts are derived from it, so the same key keeps them "
            "consistent across runs. Create one with `chartveil keygen -o chartveil.key`, keep it secret, "
            "and pass --key chartveil.key (or try `chartveil demo`, which uses a public demo key)."
        )
    key = load_key_file(key_file)
    summary = api.deidentify(input_path, out_dir, key, policy=_policy(policy), columns=ColumnMap.parse(columns),
                             manifest=manifest, input_format=input_format, output_format=output_format,
                             workers=_workers(workers), batch_size=batch_size, keep_originals=keep_originals,
                             roster=roster, progress=_Progress(not quiet))
    _summary(summary, "de-identified")
    click.echo(CAUTION)


@cli.command()
@click.argument("input_path", metavar="INPUT", type=click.Path(exists=True, path_type=Path))
@click.option("-o", "--output", "spans_path", required=True, type=click.Path(dir_okay=False, path_type=Path),
              help="Spans file to write (JSONL); rejects.jsonl and a run manifest go beside it.")
@_input_options
def scan(input_path: Path, spans_path: Path, policy: str | None, columns: str | None, manifest: Path | None,
         input_format: str | None, workers: int, batch_size: int, roster: Path | None, keep_originals: bool,
         quiet: bool) -> None:
    """Find the identifiers in INPUT and write their spans, without changing any note.

    \b
    Example:
      chartveil scan notes.jsonl -o found/spans.jsonl
    """
    summary = api.scan(input_path, spans_path, policy=_policy(policy), columns=ColumnMap.parse(columns),
                       manifest=manifest, input_format=input_format, workers=_workers(workers),
                       batch_size=batch_size, keep_originals=keep_originals, roster=roster,
                       progress=_Progress(not quiet))
    _summary(summary, "scanned")


@cli.command()
@click.option("-o", "--output", "path", type=click.Path(dir_okay=False, path_type=Path),
              default=Path("chartveil.key"), show_default=True, help="Where to write the new key.")
@click.option("--force", is_flag=True, help="Overwrite an existing key file (its surrogates cannot be recomputed).")
def keygen(path: Path, force: bool) -> None:
    """Write a new secret key, readable by its owner only.

    Keep it as you would keep the notes: whoever holds it can recompute the
    surrogates of known originals. Losing it means later runs will not match
    earlier ones.

    \b
    Example:
      chartveil keygen -o /secure/chartveil.key
    """
    key = generate_key_file(path, overwrite=force)
    click.echo(f"wrote {path} (fingerprint {key.fingerprint()}, mode 0600)")


@cli.command()
@click.option("-o", "--output", "out_dir", type=click.Path(file_okay=False, path_type=Path),
              default=Path("chartveil-demo-output"), show_default=True, help="Folder for the demo's outputs.")
@click.option("--quiet", is_flag=True, help="No progress lines.")
def demo(out_dir: Path, quiet: bool) -> None:
    """De-identify the bundled invented demo notes with the public demo key.

    \b
    Example:
      chartveil demo -o demo-out/
    """
    from deid.demo import run_demo

    click.echo("Using the bundled PUBLIC demo key: fine for the invented demo notes, never for real notes.")
    report = run_demo(out_dir, progress=_Progress(not quiet))
    _summary(report.summary, "demo de-identified")
    for line in report.lines:
        click.echo(line)
    click.echo(CAUTION)


@cli.command()
@click.argument("gold_path", metavar="GOLD", type=click.Path(exists=True, path_type=Path))
@click.option("-o", "--output", "out_dir", required=True, type=click.Path(file_okay=False, path_type=Path),
              help="Folder for leakage-report.html and leakage-report.json.")
@click.option("--policy", metavar="FILE|NAME", help="Policy TOML file, or a built-in: 'default', 'safe-harbor'.")
@click.option("--spans", "spans_path", type=click.Path(exists=True, dir_okay=False, path_type=Path),
              help="Score this spans file from `chartveil scan` instead of running detection here.")
@click.option("--label-map", type=click.Path(exists=True, dir_okay=False, path_type=Path),
              help="TOML or CSV mapping the gold's label names onto chartveil's.")
@click.option("--roster", type=click.Path(exists=True, dir_okay=False, path_type=Path),
              help="CSV of known identifiers per patient, as for `run`.")
@click.option("--min-recall", type=click.FloatRange(0, 1),
              help="Gate: overall Safe Harbor token recall needed to pass (default: the policy's).")
@click.option("--seed", type=int, default=20240229, show_default=True, help="Bootstrap seed (reports are reproducible).")
@click.option("--resamples", type=click.IntRange(100), default=2000, show_default=True, help="Bootstrap resamples.")
@click.option("--workers", type=click.IntRange(0), default=1, show_default=True, help="Worker processes; 0 = all cores.")
def evaluate(gold_path: Path, out_dir: Path, policy: str | None, spans_path: Path | None, label_map: Path | None,
             roster: Path | None, min_recall: float | None, seed: int, resamples: int, workers: int) -> None:
    """Measure what leaks on a labelled test set GOLD and write a leakage report.

    GOLD is a JSONL file (note_id, patient_id, text, spans with start, end,
    label) or a BRAT standoff folder (.txt + .ann pairs). Exits 1 when token
    recall misses the gate (overall, or per label from the policy's
    [gate.per_label]) and names the failing labels; 2 on a usage or input error.

    \b
    Example:
      chartveil evaluate labelled.jsonl -o report/ --min-recall 0.99
      chartveil evaluate brat_folder/ -o report/ --label-map labels.toml --spans found/spans.jsonl
    """
    from deid.leakage import assess

    outcome = assess(gold_path, out_dir, policy=_policy(policy), spans_path=spans_path, label_map=label_map,
                     roster=roster, min_recall=min_recall, seed=seed, resamples=resamples,
                     workers=_workers(workers))
    click.echo(outcome.summary)
    for name, path in outcome.files.items():
        click.echo(f"  {name:>5}: {path}")
    click.echo(CAUTION)
    if not outcome.passed:
        click.echo("gate failed: " + ", ".join(outcome.failing), err=True)
        raise click.exceptions.Exit(EXIT_GATE)


def main() -> None:
    """Console entry point."""
    cli()
