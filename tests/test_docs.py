"""Committed generated artefacts are current."""

from pathlib import Path

from xlfuncs.docgen import render

ROOT = Path(__file__).parent.parent


def test_function_reference_is_current():
    committed = (ROOT / "docs" / "FUNCTIONS.md").read_text(encoding="utf-8")
    assert committed == render(), "run `make docs` and commit docs/FUNCTIONS.md"


def test_every_worksheet_function_is_documented():
    from xlfuncs import worksheet

    names = [n for n in worksheet.__all__ if n.startswith("CKT_")]
    text = render()
    for n in names:
        assert f"## `{n}(" in text
