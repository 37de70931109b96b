"""Every command's exit codes are in its --help and in the README."""

from __future__ import annotations

from pathlib import Path

import pytest

from screening.cli import run

README = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")


@pytest.mark.parametrize("command", ["check", "report", "verify", "batch", "gases"])
def test_help_and_readme_give_the_exit_codes(command, capsys):
    with pytest.raises(SystemExit) as stop:
        run([command, "--help"])
    assert stop.value.code == 0
    out = " ".join(capsys.readouterr().out.split())
    assert "exit codes: 0" in out
    assert f"| `{command}` |" in README


def test_report_documents_that_it_exits_1_after_writing_a_report_not_within(capsys):
    with pytest.raises(SystemExit):
        run(["report", "--help"])
    out = " ".join(capsys.readouterr().out.split())
    assert "1 the report was written but the verdict is low-margin, over or out-of-scope" in out
    assert "the report **was written**, but the verdict is low-margin" in README
