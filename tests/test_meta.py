"""Meta-tests: every command is documented, the registries are complete, imports point one way."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

import deid
from deid.cli import cli
from deid.registry import detectors, operators, readers, writers

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = Path(deid.__file__).resolve().parent


@pytest.mark.parametrize("command", sorted(cli.commands))
def test_every_command_is_documented(command: str) -> None:
    assert f"chartveil {command}" in (ROOT / "docs" / "usage.md").read_text(encoding="utf-8")


def test_registered_names_snapshot() -> None:
    import deid.detectors.builtins  # noqa: F401
    import deid.io  # noqa: F401
    import deid.operators  # noqa: F401

    assert operators.names() == sorted([
        "age_cap.v1", "date_shift.v1", "date_year.v1", "email_reserved.v1", "id_format.v1",
        "ip_documentation.v1", "keep.v1", "mask.v1", "name_surrogate.v1", "phone_fiction.v1",
        "place_list.v1", "ssn_unissued.v1", "url_reserved.v1", "zip3.v1",
    ])
    assert readers.names() == writers.names() == ["csv.v1", "jsonl.v1", "parquet.v1", "txt_dir.v1"]
    assert {"presidio.v1", "regex.v1", "names.v1", "name_lists.v1", "spacy_ner.v1", "gazetteer.v1",
            "roster.v1", "clinical_numbers.v1", "eponyms.v1"} <= set(detectors.names())


def test_every_operator_named_by_the_policies_exists() -> None:
    import deid.operators  # noqa: F401
    from deid.policy import load_policy
    from deid.resources import data_file

    for name in ("policy_default.toml", "policy_safe_harbor.toml"):
        policy = load_policy(data_file(name))
        for rule in policy.rules.values():
            if rule.operator:
                assert rule.operator in operators


def _imports(path: Path) -> set[str]:
    tree = ast.parse(path.read_text(encoding="utf-8"))
    out: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.module:
            out.add(node.module)
        elif isinstance(node, ast.Import):
            out.update(a.name for a in node.names)
    return out


def test_nothing_imports_the_cli() -> None:
    offenders = [p.name for p in PACKAGE.rglob("*.py") if p.name not in ("cli.py", "__main__.py")
                 and "deid.cli" in _imports(p)]
    assert offenders == []


@pytest.mark.parametrize("layer", ["detectors", "operators", "io", "eval"])
def test_lower_layers_do_not_import_the_api_or_pipeline(layer: str) -> None:
    upper = {"deid.api", "deid.pipeline", "deid.parallel", "deid.leakage", "deid.demo", "deid.cli"}
    for path in (PACKAGE / layer).rglob("*.py"):
        assert not (_imports(path) & upper), path.name


def test_readme_states_the_two_setup_commands_and_ci_runs_the_test_one() -> None:
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    test_cmd = "python3 -m venv .venv && .venv/bin/pip install '.[test]' && .venv/bin/pytest"
    assert "python3 -m venv .venv && .venv/bin/pip install . && .venv/bin/chartveil demo" in readme
    assert test_cmd in readme
    assert test_cmd in (ROOT / ".ci" / "run").read_text(encoding="utf-8")
