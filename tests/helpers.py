"""Small helpers shared by the tests: a plain nitrogen case, and the command line run in-process."""

from __future__ import annotations

import math

import pytest

from screening.cli import main


def nitrogen_case(case_id: str) -> str:
    """An ordinary case file's text: nitrogen filled to 200 bar(g) at 15 °C in 50 L rated 300 bar(g), 45 °C
    ambient maximum (an invented vessel)."""
    return (f'id = "{case_id}"\n[vessel]\nwater_capacity = "50 L"\nrated_pressure = "300 bar(g)"\n'
            '[fill]\ngas = "nitrogen"\npressure = "200 bar(g)"\ntemperature = "15 degC"\n'
            '[exposure]\nambient_max = "45 degC"\n')


#: A case filled by pressure with a stated gas temperature, 50 L (fields: name, gas, rated and fill [bar(g)], t_fill
#: and t_gas [degC]).
GAS_TEMPERATURE_CASE = '''id = "{name}"
[vessel]
water_capacity = "50 L"
rated_pressure = "{rated} bar(g)"
[fill]
gas = "{gas}"
pressure = "{fill} bar(g)"
temperature = "{t_fill} degC"
[exposure]
gas_temperature = "{t_gas} degC"
'''


def cli(capsys, *args: str) -> tuple[int, str, str]:
    """Run `screening ARGS` in this process: (exit code, stdout, stderr)."""
    with pytest.raises(SystemExit) as exc:
        main(list(args))
    out = capsys.readouterr()
    return exc.value.code, out.out, out.err


def result_differences(a, b, rtol: float, rtol_limits: float, path: str = "", limits: bool = False) -> list[str]:
    """Where JSON result b differs from a: keys (and their order), texts, flags, list lengths, and numbers
    beyond rtol (rtol_limits under a "limits" key)."""
    if isinstance(a, dict) and isinstance(b, dict):
        if list(a) != list(b):
            return [f"{path}: keys {sorted(set(a) ^ set(b))} or their order"]
        return [d for k in a for d in result_differences(a[k], b[k], rtol, rtol_limits, f"{path}.{k}",
                                                         limits or k == "limits")]
    if isinstance(a, list) and isinstance(b, list):
        if len(a) != len(b):
            return [f"{path}: {len(a)} items against {len(b)}"]
        return [d for k, (x, y) in enumerate(zip(a, b))
                for d in result_differences(x, y, rtol, rtol_limits, f"{path}[{k}]", limits)]
    numbers = (int, float)
    if isinstance(a, numbers) and isinstance(b, numbers) and not isinstance(a, bool) and not isinstance(b, bool):
        tol = rtol_limits if limits else rtol
        if a == b or (math.isfinite(a) and abs(a - b) <= tol * max(abs(a), abs(b))):
            return []
        return [f"{path}: {a!r} against {b!r}"]
    return [] if a == b else [f"{path}: {a!r} against {b!r}"]


#: A defaults file for registers: input tolerances and two scenarios (the listed exposure and a closed van).
TOLERANCES_AND_SCENARIOS = """[tolerance]
fill_pressure = "2 bar"
fill_temperature = "2 K"
gas_temperature = "3 K"

[[scenario]]
name = "as listed"

[[scenario]]
name = "closed van"
gas_temperature = "65 degC"
"""


def batch_on_one_and_two_workers(tmp_path, monkeypatch, lines: list[str], defaults_text: str | None = None,
                                 chunk_rows: int = 7) -> dict[str, list[bytes]]:
    """The CSV and JSON bytes of `screening batch` on the register `lines` (each ending with its newline), with the
    defaults `defaults_text` where given, in chunks of `chunk_rows` rows, run with one worker and with two:
    {"1": [csv, json], "2": [csv, json]}."""
    from screening import batch, parallel
    from screening.cli import run

    inv = tmp_path / "inv.csv"
    inv.write_text("".join(lines), encoding="utf-8")
    extra = []
    if defaults_text is not None:
        defaults = tmp_path / "defaults.toml"
        defaults.write_text(defaults_text, encoding="utf-8")
        extra = ["--defaults", str(defaults)]
    monkeypatch.setattr(batch, "CHUNK_ROWS", chunk_rows)
    outs = {}
    for n in ("1", "2"):
        monkeypatch.setenv(parallel.WORKERS_ENV, n)
        monkeypatch.setattr(parallel, "workers", lambda n=n: int(n))
        names = [tmp_path / f"o{n}.{ext}" for ext in ("csv", "json")]
        run(["batch", str(inv), *extra, "--csv", str(names[0]), "--json", str(names[1]), "--quiet"])
        outs[n] = [p.read_bytes() for p in names]
    return outs


def random_scenarios(rnd, counts: list[int]) -> str:
    """The [[scenario]] tables of a random case: one of `counts` of them, each as listed, with a stated gas
    temperature, or in the sun."""
    text = ""
    for j in range(rnd.choice(counts)):
        text += f'[[scenario]]\nname = "s{j}"\n'
        r = rnd.random()
        if r < 0.4:
            text += f'gas_temperature = "{rnd.uniform(-10, 80):.1f} degC"\n'
        elif r < 0.6:
            text += 'solar = "sun"\n'
    return text
