"""Golden corpus: what the screening answers today, kept to check that a rewrite gives the same answers.

    python tests/golden/make_golden.py            # writes tests/golden/{cases,batch}.json.gz

The corpus holds
* `check --json` of every demo case in cases/ (the Python API `screen_file`, which the command prints);
* `check --json` of a few hundred generated cases (fixed seed; the case texts are stored beside the
  results, so the comparison never depends on regenerating them): permanent and quantum gases, partly
  used cylinders, liquefiable gases filled by mass and by pressure, dense supercritical fills, a few
  mixtures, the sun's energy balance, scenarios, tolerances, relief settings, maximum filling ratios,
  required margins, site pressure, out-of-scope gases and cases that the screening refuses as input
  errors (stored as the error's type and message);
* `screening batch --json --csv` of cases/inventory.csv and of a generated 200-row inventory at a fixed
  `--date`, run as a fresh process (`SCREENING_WORKERS=1` and the default give the same bytes, so the
  default is used).

Every generated number is invented: a check of the engine against itself, not of the physics.
"""

from __future__ import annotations

import gzip
import json
import os
import random
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]
CASES_FILE = HERE / "cases.json.gz"
BATCH_FILE = HERE / "batch.json.gz"
SEED = 20261203
BATCH_DATE = "2026-12-01"

PERMANENT = ["air", "nitrogen", "oxygen", "argon", "krypton", "methane", "carbon monoxide"]
QUANTUM = ["helium", "hydrogen", "neon"]
LIQUEFIABLE = ["carbon dioxide", "nitrous oxide", "ethane", "ethylene", "propane", "n-butane", "isobutane",
               "ammonia", "sulfur hexafluoride", "xenon"]
FINISHES = ["white paint", "light grey paint", "aluminium paint", "red paint", "dark green paint",
            "black paint", "galvanised steel weathered"]
MIXTURES = ["argon 82% + carbon dioxide 18%", "argon 92% + carbon dioxide 8%", "nitrogen 95% + hydrogen 5%",
            "helium 79% + oxygen 21%", "nitrogen 90% + carbon dioxide 10%"]


# --------------------------------------------------------------------------------------------------
# generated cases (TOML texts)
# --------------------------------------------------------------------------------------------------

def _q(x: float, nd: int = 1) -> str:
    return f"{round(x, nd):g}"


def _case(rnd: random.Random, cid: str, gas: str, *, pressure: float | None = None, mass: float | None = None,
          wc: float | None = None, rated: float | None = None, fill_t: float | None = None,
          options: dict | None = None) -> str:
    """A case text; pressures in bar(g), temperatures in degC, water capacity in L, mass in kg."""
    o = options or {}
    wc = wc if wc is not None else rnd.choice((1, 2, 5, 10, 20, 26, 47, 50, 80))
    lines = [f'id = "{cid}"', f'description = "generated case {cid}"']
    if "elevation" in o:
        lines += ["[site]", f'elevation = "{o["elevation"]} m"']
    elif "atmospheric_pressure" in o:
        lines += ["[site]", f'atmospheric_pressure = "{o["atmospheric_pressure"]} kPa(a)"']
    lines += ["[vessel]", f'water_capacity = "{wc} L"', f'rated_pressure = "{_q(rated)} bar(g)"']
    if "relief" in o:
        lines.append(f'relief_set_pressure = "{_q(o["relief"])} bar(g)"')
    if "max_filling_ratio" in o:
        lines.append(f'max_filling_ratio = "{o["max_filling_ratio"]} kg/L"')
    if "diameter" in o:
        lines += [f'outside_diameter = "{o["diameter"]} mm"', f'length = "{o["length"]} m"']
    lines += ["[fill]", f'gas = "{gas}"']
    if pressure is not None:
        lines.append(f'pressure = "{_q(pressure)} bar(g)"')
    if mass is not None:
        lines.append(f'mass = "{_q(mass, 3)} kg"')
    if fill_t is not None:
        lines.append(f'temperature = "{_q(fill_t)} degC"')
    lines.append("[exposure]")
    for k, v in o.get("exposure", {}).items():
        lines.append(f'{k} = "{v}"')
    if "margin" in o:
        lines += ["[criteria]", f'required_margin = "{o["margin"]} %"']
    for sc in o.get("scenarios", []):
        lines.append("[[scenario]]")
        for k, v in sc.items():
            lines.append(f'{k} = "{v}"')
    if "tolerance" in o:
        lines.append("[tolerance]")
        for k, v in o["tolerance"].items():
            lines.append(f'{k} = "{v}"')
    return "\n".join(lines) + "\n"


def _exposure(rnd: random.Random) -> dict:
    """An exposure: a stated gas temperature, an ambient maximum, or both."""
    pick = rnd.random()
    if pick < 0.45:
        return {"gas_temperature": f"{_q(rnd.uniform(-40, 85))} degC"}
    if pick < 0.8:
        return {"ambient_max": f"{_q(rnd.uniform(20, 60))} degC"}
    amb = rnd.uniform(20, 50)
    return {"ambient_max": f"{_q(amb)} degC", "gas_temperature": f"{_q(amb + rnd.uniform(0, 25))} degC"}


def _options(rnd: random.Random, rated: float) -> dict:
    o: dict = {"exposure": _exposure(rnd)}
    if rnd.random() < 0.3:
        o["relief"] = rated * rnd.uniform(0.95, 1.15)
    if rnd.random() < 0.2:
        o["margin"] = rnd.choice((0, 5, 15, 25))
    if rnd.random() < 0.1:
        o["elevation"] = rnd.choice((0, 240, 1500, 3000))
    elif rnd.random() < 0.05:
        o["atmospheric_pressure"] = rnd.choice((95.0, 101.325, 103.0))
    return o


def _solar(rnd: random.Random, o: dict) -> None:
    o["exposure"] = {"ambient_max": f"{_q(rnd.uniform(25, 45))} degC", "solar": "sun"}
    if rnd.random() < 0.7:
        o["exposure"]["finish"] = rnd.choice(FINISHES)
    else:
        o["exposure"]["absorptivity"] = f"{rnd.choice((0.2, 0.5, 0.9))}"
    if rnd.random() < 0.5:
        o["exposure"]["orientation"] = rnd.choice(("horizontal", "vertical"))
    if rnd.random() < 0.4:
        o["exposure"]["wind_speed"] = f"{rnd.choice((0, 1, 3))} m/s"
    if rnd.random() < 0.5:
        o["diameter"], o["length"] = rnd.choice(((140, 0.6), (229, 1.4), (267, 1.5), (318, 1.1)))


def generated_cases(seed: int = SEED) -> list[tuple[str, str]]:
    """(name, case text) of every generated case, in a fixed order."""
    rnd = random.Random(seed)
    out: list[tuple[str, str]] = []

    def add(kind: str, gas: str, **kw) -> None:
        cid = f"G-{len(out) + 1:04d}-{kind}"
        out.append((cid, _case(rnd, cid, gas, **kw)))

    # permanent and quantum gases filled by pressure (hydrogen up to 875 bar(g))
    for gas in PERMANENT + QUANTUM:
        for _ in range(12):
            top = 875 if gas == "hydrogen" else 300
            p = rnd.uniform(20, top)
            rated = p * rnd.uniform(1.1, 2.0)
            add("perm" if gas in PERMANENT else "quantum", gas, pressure=p, rated=rated,
                fill_t=rnd.uniform(-20, 40), options=_options(rnd, rated))
    # partly used cylinders: 3-30 % of the rating
    for gas in PERMANENT + QUANTUM:
        for _ in range(3):
            rated = rnd.choice((200, 300, 450))
            p = rated * rnd.uniform(0.03, 0.30)
            add("partly", gas, pressure=p, rated=rated, fill_t=rnd.uniform(-20, 40), options=_options(rnd, rated))
    # liquefiable gases by mass (filling ratios from gas-phase to liquid-full), some with a maximum ratio
    for gas in LIQUEFIABLE:
        for _ in range(5):
            wc = rnd.choice((5, 10, 26, 47, 50))
            ratio = rnd.uniform(0.05, 0.8)
            rated = rnd.choice((30, 60, 125, 190, 250))
            o = _options(rnd, rated)
            if rnd.random() < 0.5:
                o["max_filling_ratio"] = rnd.choice((0.42, 0.5, 0.67, 0.75))
            add("mass", gas, mass=wc * ratio, wc=wc, rated=rated,
                fill_t=rnd.uniform(-10, 30) if rnd.random() < 0.8 else None, options=o)
    # liquefiable gases by pressure, below their vapour pressure (vapour fills)
    for gas in LIQUEFIABLE:
        for _ in range(3):
            p = rnd.uniform(0.5, 8)
            rated = rnd.choice((30, 60, 125))
            add("lqp", gas, pressure=p, rated=rated, fill_t=rnd.uniform(15, 30), options=_options(rnd, rated))
    # dense supercritical fills by pressure
    for gas, lo_t in (("carbon dioxide", 35), ("ethane", 35), ("xenon", 20), ("ethylene", 12),
                      ("sulfur hexafluoride", 48)):
        for _ in range(3):
            p = rnd.uniform(80, 200)
            rated = p * rnd.uniform(1.2, 2.0)
            add("dense", gas, pressure=p, rated=rated, fill_t=rnd.uniform(lo_t, lo_t + 10),
                options=_options(rnd, rated))
    # mixtures (slow: a few)
    for gas in MIXTURES:
        p = rnd.uniform(100, 200)
        rated = rnd.choice((200, 300))
        add("mix", gas, pressure=p, rated=rated, fill_t=rnd.uniform(5, 25),
            options={"exposure": {"gas_temperature": f"{_q(rnd.uniform(40, 65))} degC"}})
    # the sun's energy balance
    for gas in ["nitrogen", "argon", "helium", "hydrogen", "methane", "air", "carbon dioxide", "propane",
                "ammonia", "oxygen"] * 2:
        rated = rnd.choice((30, 60, 250, 300))
        o = _options(rnd, rated)
        _solar(rnd, o)
        if gas in LIQUEFIABLE:
            wc = rnd.choice((10, 26, 47))
            add("sun", gas, mass=wc * rnd.uniform(0.1, 0.6), wc=wc, rated=rated, fill_t=rnd.uniform(0, 25), options=o)
        else:
            add("sun", gas, pressure=rated * rnd.uniform(0.4, 0.8), rated=rated, fill_t=rnd.uniform(0, 25),
                options=o)
    # scenarios
    for gas in ["nitrogen", "oxygen", "hydrogen", "helium", "carbon dioxide", "propane", "argon", "methane",
                "ethane", "air", "neon", "nitrous oxide"]:
        rated = rnd.choice((60, 200, 300))
        o = _options(rnd, rated)
        scs = [{"name": "store", "ambient_max": f"{_q(rnd.uniform(25, 45))} degC"},
               {"name": "vehicle", "gas_temperature": f"{_q(rnd.uniform(50, 80))} degC"}]
        if rnd.random() < 0.5:
            scs.append({"name": "yard, sun", "ambient_max": f"{_q(rnd.uniform(25, 40))} degC", "solar": "sun",
                        "finish": rnd.choice(FINISHES)})
        o["scenarios"] = scs
        if gas in LIQUEFIABLE:
            wc = rnd.choice((10, 26, 47))
            add("scen", gas, mass=wc * rnd.uniform(0.1, 0.5), wc=wc, rated=rated, fill_t=rnd.uniform(0, 25),
                options=o)
        else:
            add("scen", gas, pressure=rated * rnd.uniform(0.3, 0.8), rated=rated, fill_t=rnd.uniform(0, 25),
                options=o)
    # tolerances
    for gas in ["nitrogen", "argon", "hydrogen", "helium", "methane", "oxygen", "air", "carbon dioxide",
                "ethane", "neon", "krypton", "carbon monoxide", "xenon", "ethylene", "nitrogen"]:
        rated = rnd.choice((200, 300, 450))
        p = rated * rnd.uniform(0.4, 0.8) if gas not in ("carbon dioxide", "ethane", "xenon", "ethylene") \
            else rnd.uniform(3, 10)
        if gas in ("carbon dioxide", "ethane", "xenon", "ethylene"):
            rated = rnd.choice((60, 125))
        o = _options(rnd, rated)
        o["tolerance"] = {"fill_pressure": rnd.choice(("2 bar", "1 %", "1.6 % of 400 bar", "0.5 bar")),
                          "fill_temperature": rnd.choice(("1 K", "2 K", "3 degC"))}
        if rnd.random() < 0.6:
            o["tolerance"]["gas_temperature"] = rnd.choice(("2 K", "3 K", "5 K"))
        add("tol", gas, pressure=p, rated=rated, fill_t=rnd.uniform(0, 30), options=o)
    # out of scope (a dissolved gas) and cases the screening itself refuses
    for _ in range(3):
        add("oos", "acetylene", pressure=rnd.uniform(10, 18), rated=60, fill_t=15,
            options={"exposure": {"ambient_max": "45 degC"}})
    add("err", "propane", mass=20.0, wc=26, rated=30, fill_t=10, options={"exposure": {"ambient_max": "35 degC"}})
    add("err", "carbon dioxide", mass=60.0, wc=50, rated=250, fill_t=15,
        options={"exposure": {"ambient_max": "50 degC"}})
    # over-range temperatures and pressures (models near and past their edges)
    add("edge", "nitrogen", pressure=950, rated=1200, fill_t=15, options={"exposure": {"gas_temperature": "85 degC"}})
    add("edge", "hydrogen", pressure=2, rated=300, fill_t=-20, options={"exposure": {"gas_temperature": "-40 degC"}})
    add("edge", "methane", pressure=250, rated=300, fill_t=-20, options={"exposure": {"gas_temperature": "85 degC"}})
    add("edge", "air", pressure=300, rated=350, fill_t=40, options={"exposure": {"gas_temperature": "-40 degC"}})
    return out


def generated_inventory(path: Path, n: int = 200, seed: int = SEED + 1) -> None:
    """An inventory of n rows: pure gases by pressure (some partly used), liquefied gases by mass and by
    pressure, a few mixtures, a share with the sun's balance, relief settings and filling ratios."""
    rnd = random.Random(seed)
    header = ["id", "gas", "water_capacity [L]", "rated_pressure [bar(g)]", "relief_set_pressure [bar(g)]",
              "max_filling_ratio [kg/L]", "fill_pressure [bar(g)]", "fill_mass [kg]", "fill_temperature [degC]",
              "ambient_max [degC]", "gas_temperature [degC]", "solar", "finish"]
    rows = [",".join(header)]
    gases = PERMANENT + QUANTUM
    for i in range(n):
        r = {h: "" for h in header}
        r["id"] = f"GI-{i:04d}"
        wc = rnd.choice((10, 20, 26, 47, 50))
        r["water_capacity [L]"] = str(wc)
        kind = rnd.random()
        if i in (50, 150):
            r["gas"] = "argon 82% + carbon dioxide 18%"
            p = rnd.uniform(100, 200)
            r["fill_pressure [bar(g)]"] = _q(p)
            rated = 300
        elif kind < 0.6:
            r["gas"] = rnd.choice(gases)
            rated = rnd.choice((200, 300, 450)) if r["gas"] != "hydrogen" else rnd.choice((300, 500, 950))
            share = rnd.uniform(0.03, 0.30) if rnd.random() < 0.2 else rnd.uniform(0.5, 0.9)
            r["fill_pressure [bar(g)]"] = _q(rated * share)
        elif kind < 0.85:
            r["gas"] = rnd.choice(LIQUEFIABLE)
            rated = rnd.choice((30, 60, 125, 250))
            r["fill_mass [kg]"] = _q(wc * rnd.uniform(0.05, 0.75), 3)
            if rnd.random() < 0.4:
                r["max_filling_ratio [kg/L]"] = str(rnd.choice((0.42, 0.5, 0.75)))
        elif kind < 0.93:
            r["gas"] = rnd.choice(LIQUEFIABLE)
            rated = rnd.choice((30, 60, 125))
            r["fill_pressure [bar(g)]"] = _q(rnd.uniform(0.5, 6))
        else:
            r["gas"] = "acetylene" if rnd.random() < 0.5 else "nitrogn"  # out of scope / unknown gas row
            rated = 60
            r["fill_pressure [bar(g)]"] = _q(rnd.uniform(5, 15))
        r["rated_pressure [bar(g)]"] = _q(rated)
        if rnd.random() < 0.25:
            r["relief_set_pressure [bar(g)]"] = _q(rated * rnd.uniform(0.95, 1.15))
        r["fill_temperature [degC]"] = _q(rnd.uniform(-20, 40))
        r["ambient_max [degC]"] = _q(rnd.uniform(25, 55))
        if rnd.random() < 0.3:
            r["gas_temperature [degC]"] = _q(rnd.uniform(-40, 85))
        elif rnd.random() < 0.1:
            r["solar"] = "sun"
            r["finish"] = rnd.choice(FINISHES)
        rows.append(",".join(r[h] for h in header))
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")


# --------------------------------------------------------------------------------------------------
# running the code under test
# --------------------------------------------------------------------------------------------------

def _as_cli_json(result) -> object:
    """What `screening check --json` prints, read back (the same serialisation as the command)."""
    return json.loads(json.dumps(result.to_json(), ensure_ascii=False, allow_nan=False))


def screen_text_entry(name: str, text: str) -> dict:
    """{"result": ...} or {"error": "Type: message"} for one case text."""
    from screening.engine import screen_text
    from screening.errors import InputError

    try:
        return {"result": _as_cli_json(screen_text(text, source=name))}
    except InputError as exc:
        return {"error": f"{type(exc).__name__}: {exc}"}


def screen_demo_entry(path: Path) -> dict:
    from screening.engine import screen_file
    from screening.errors import InputError

    try:
        return {"result": _as_cli_json(screen_file(path.relative_to(ROOT)))}
    except InputError as exc:
        return {"error": f"{type(exc).__name__}: {exc}"}


def demo_cases() -> list[Path]:
    return sorted((ROOT / "cases").glob("*.toml"))


def run_case_corpus(names: set[str] | None = None, stored: list[dict] | None = None) -> list[dict]:
    """Fresh entries: demo cases by path, generated cases from the stored texts when given (else generated).
    `names` restricts to those entry names."""
    cwd = os.getcwd()
    os.chdir(ROOT)  # demo results carry their source path relative to the repository root
    try:
        entries = []
        for path in demo_cases():
            name = f"cases/{path.name}"
            if names is None or name in names:
                entries.append({"name": name, **screen_demo_entry(path)})
        texts = [(e["name"], e["text"]) for e in stored if "text" in e] if stored is not None \
            else generated_cases()
        for name, text in texts:
            if names is None or name in names:
                entries.append({"name": name, "text": text, **screen_text_entry(name, text)})
        return entries
    finally:
        os.chdir(cwd)


def run_batch(inventory: str, workdir: Path) -> dict:
    """`screening batch INV --json --csv --date` in a fresh process run in `workdir`, with the inventory's
    path relative to it (messages and sources name the file as given): exit code, JSON (parsed), CSV text."""
    out_json, out_csv = workdir / "out.json", workdir / "out.csv"
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH")])))
    done = subprocess.run([sys.executable, "-m", "screening.cli", "batch", inventory, "--json", "out.json",
                           "--csv", "out.csv", "--date", BATCH_DATE, "--quiet"], cwd=workdir, env=env,
                          capture_output=True, text=True)
    if done.returncode not in (0, 1):
        raise SystemExit(f"batch of {inventory} failed ({done.returncode}): {done.stderr[-2000:]}")
    return {"exit_code": done.returncode, "json": json.loads(out_json.read_text(encoding="utf-8")),
            "csv": out_csv.read_text(encoding="utf-8")}


def run_batch_corpus(stored: dict | None = None) -> dict:
    """Batch outputs of cases/inventory.csv and of the generated inventory (its text stored with it)."""
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        (tmp / "cases").mkdir()
        (tmp / "cases" / "inventory.csv").write_bytes((ROOT / "cases" / "inventory.csv").read_bytes())
        out = {"cases/inventory.csv": run_batch("cases/inventory.csv", tmp)}
        gen = tmp / "generated_inventory.csv"
        if stored is not None and "generated_inventory_text" in stored:
            gen.write_text(stored["generated_inventory_text"], encoding="utf-8")
        else:
            generated_inventory(gen)
        out["generated_inventory.csv"] = run_batch("generated_inventory.csv", tmp)
        out["generated_inventory_text"] = gen.read_text(encoding="utf-8")
        return out


def _dump(obj: object, path: Path) -> None:
    data = json.dumps(obj, ensure_ascii=False, allow_nan=False, separators=(",", ":"), sort_keys=False)
    # mtime=0: the same corpus gives the same bytes
    with open(path, "wb") as raw, gzip.GzipFile(fileobj=raw, mode="wb", mtime=0, filename="") as fh:
        fh.write(data.encode("utf-8"))


def load(path: Path) -> object:
    with gzip.open(path, "rb") as fh:
        return json.loads(fh.read().decode("utf-8"))


def main() -> None:
    sys.path.insert(0, str(ROOT))
    import time

    t0 = time.perf_counter()
    cases = run_case_corpus()
    t1 = time.perf_counter()
    _dump({"seed": SEED, "entries": cases}, CASES_FILE)
    batch = run_batch_corpus()
    _dump({"date": BATCH_DATE, **batch}, BATCH_FILE)
    t2 = time.perf_counter()
    print(f"{len(cases)} cases in {t1 - t0:.1f} s, batches in {t2 - t1:.1f} s; "
          f"{CASES_FILE.stat().st_size / 1e6:.2f} MB + {BATCH_FILE.stat().st_size / 1e6:.2f} MB (gzip)")


if __name__ == "__main__":
    main()
