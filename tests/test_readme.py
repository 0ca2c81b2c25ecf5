"""The README stays true: its schema table is the one the code validates against, and its
two set-up commands are the ones CI and newcomers use."""
from pathlib import Path

from evidence1d.report.schema import schema_markdown

ROOT = Path(__file__).resolve().parents[1]


def test_readme_schema_table_matches_code():
    assert schema_markdown().strip() in (ROOT / "README.md").read_text()


def test_readme_commands():
    text = (ROOT / "README.md").read_text()
    assert "evidence1d run case_studies/flagship/case.yaml" in text
    assert 'python -m pip install -e ".[test]" && python -m pytest -q' in text
    ci = (ROOT / ".ci" / "run").read_text()
    assert "python -m pytest -q" in ci and '".[test]"' in ci
