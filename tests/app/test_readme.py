"""The README's two commands are the ones the project really supports."""

from tests.conftest import ROOT


def test_readme_commands_match_ci():
    readme = (ROOT / "README.md").read_text()
    ci = (ROOT / ".ci" / "run").read_text()
    assert "pip install . && thermoplane serve" in readme
    assert 'pip install ".[test]" && python -m pytest -q' in readme
    assert 'pip install --quiet --disable-pip-version-check ".[test]"' in ci
    assert "python3 -m pytest -q" in ci
