"""Small helpers shared by the tests: a plain nitrogen case, and the command line run in-process."""

from __future__ import annotations

import pytest

from screening.cli import main


def nitrogen_case(case_id: str) -> str:
    """An ordinary case file's text: nitrogen filled to 200 bar(g) at 15 °C in 50 L rated 300 bar(g), 45 °C
    ambient maximum (an invented vessel)."""
    return (f'id = "{case_id}"\n[vessel]\nwater_capacity = "50 L"\nrated_pressure = "300 bar(g)"\n'
            '[fill]\ngas = "nitrogen"\npressure = "200 bar(g)"\ntemperature = "15 degC"\n'
            '[exposure]\nambient_max = "45 degC"\n')


def cli(capsys, *args: str) -> tuple[int, str, str]:
    """Run `screening ARGS` in this process: (exit code, stdout, stderr)."""
    with pytest.raises(SystemExit) as exc:
        main(list(args))
    out = capsys.readouterr()
    return exc.value.code, out.out, out.err
