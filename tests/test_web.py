"""The local page's routes and defences, through Starlette's test client (no browser).

The pages are views: the numbers they show are checked against the engine's own result for the same
case text and, for the reference model, against CoolProp's PropsSI evaluated here."""

import hashlib
import json
import re
import time
import tomllib
from pathlib import Path

import pytest
from starlette.testclient import TestClient

from screening.inputs.case import parse_case_text
from screening.web import form
from screening.web.app import FORM_LIMIT, create_app
from screening.web.runner import Runner

ROOT = Path(__file__).resolve().parents[1]
BASE = "http://127.0.0.1:8765"
N2 = dict(id="KQ-N2-014", water_capacity="50", water_capacity_unit="L", rated_pressure="300",
          rated_pressure_unit="bar(g)", gas_mode="single", gas="nitrogen", fill_by="pressure", fill_pressure="200",
          fill_pressure_unit="bar(g)", fill_temperature="15", fill_temperature_unit="degC", exposure_by="stated",
          ambient_max="45", ambient_max_unit="degC", gas_temperature="65", gas_temperature_unit="degC")


@pytest.fixture(scope="module")
def client():
    runner = Runner(vessel_workers=1)
    try:
        with TestClient(create_app(runner, "127.0.0.1", 8765), base_url=BASE) as c:
            yield c
    finally:
        runner.close()


def _token(page: str) -> str:
    return re.search(r"/answer/([\w-]+)/report\.pdf", page).group(1)


# ----------------------------------------------------------------------------- the form and the case reader

@pytest.mark.parametrize("path", sorted((ROOT / "cases").glob("*.toml")), ids=lambda p: p.name)
def test_a_case_file_read_into_the_form_writes_the_same_case(path):
    text = path.read_text(encoding="utf-8")
    values, notes = form.values_from_case_text(text)
    original, again = parse_case_text(text, "a.toml"), parse_case_text(form.case_text(values), "a.toml")
    skip = {"text", "source", "inputs", "scenarios"}
    for name in original.__dataclass_fields__:
        if name not in skip:
            assert getattr(again, name) == getattr(original, name), name
    assert [s.__dict__ for s in again.scenarios] == [s.__dict__ for s in original.scenarios]


def test_form_text_is_escaped_toml():
    v = form.values_from_form(dict(N2, id='a "quoted" \\ id', description="line\x00 one\x1b"))
    case = parse_case_text(form.case_text(v))
    assert case.id == 'a "quoted" \\ id'
    assert case.description == "line one"


def test_fields_of_the_choice_not_taken_are_not_written():
    v = form.values_from_form(dict(N2, fill_mass="30", exposure_by="stated", finish="black paint"))
    data = tomllib.loads(form.case_text(v))
    assert "mass" not in data["fill"] and "finish" not in data["exposure"]


# ----------------------------------------------------------------------------- the vessel answer

def test_a_nitrogen_cylinder_gets_its_verdict_in_words_and_the_reference_peak_of_coolprop(client):
    from CoolProp.CoolProp import PropsSI

    page = client.post("/vessel", data=N2)
    assert page.status_code == 200
    text = page.text
    assert text.index('id="verdict"') < text.index("Peak and margins") < text.index("The three models")
    assert "Stays within rating" in text and "(verdict: within)" in text
    # CoolProp's reference EOS for nitrogen (PropsSI, an independent call path): the fill density at
    # 200 bar(g) + 1.01325 bar, 288.15 K, then the pressure at that density and 338.15 K, as gauge bar
    rho = PropsSI("Dmolar", "P", 201.01325e5, "T", 288.15, "Nitrogen")
    p_ref = PropsSI("P", "Dmolar", rho, "T", 338.15, "Nitrogen")
    row = re.search(r"Reference equation of state.*?</th><td>yes</td>\s*<td>([\d.]+) bar\(g\)</td>", text, re.S)
    assert float(row.group(1)) == pytest.approx((p_ref - 101325.0) / 1e5, abs=0.051)
    svg = client.get(f"/answer/{_token(text)}/plot.svg")
    assert svg.status_code == 200 and svg.headers["content-type"].startswith("image/svg+xml")
    assert svg.text.lstrip().startswith("<?xml") and "<svg" in svg.text


def test_a_vessel_that_does_not_pass_gets_the_line_of_what_would_make_it_pass(client):
    # the same nitrogen cylinder filled to 240 bar(g): its peak at 65 degC is above 270 bar(g) (CoolProp's nitrogen,
    # as above), within 10 % of its 300 bar(g) rating, so it is not within and the page says what would pass
    page = client.post("/vessel", data=dict(N2, fill_pressure="240")).text
    assert "(verdict: within)" not in page
    assert 'id="action"' in page and "What would make it pass." in page and "fill to at most" in page


def test_downloads_carry_the_case_text_and_the_engine_result(client):
    from screening.engine import screen_text

    page = client.post("/vessel", data=N2).text
    token = _token(page)
    case = client.get(f"/answer/{token}/case.toml")
    assert case.status_code == 200
    assert 'filename="KQ-N2-014.toml"' in case.headers["content-disposition"]
    result = client.get(f"/answer/{token}/result.json").json()
    again = screen_text(case.text, "KQ-N2-014.toml").to_json()
    assert result["verdict"] == again["verdict"] == "within"
    assert result["peak_pressure_pa"] == again["peak_pressure_pa"]
    assert result["input_sha256"] == hashlib.sha256(case.content).hexdigest()


@pytest.mark.parametrize("field,value,words", [
    ("rated_pressure", "three hundred", "Rated pressure:"),
    ("water_capacity", "", "Water capacity:"),
    ("gas", "nitrogn", "Gas:"),
    ("fill_temperature", "-300", "Fill temperature:"),
])
def test_a_wrong_entry_is_shown_beside_its_field_in_label_words(client, field, value, words):
    page = client.post("/vessel", data=dict(N2, **{field: value}))
    assert page.status_code == 422
    beside = re.search(rf'<p class="error" id="{field}-error"><strong>Check this:</strong> (.*?)</p>', page.text, re.S)
    assert beside, page.text[:2000]
    assert beside.group(1).startswith(words)
    assert "vessel." not in beside.group(1) and "fill." not in beside.group(1)
    assert re.search(rf'<input id="{field}"[^>]*aria-invalid="true"', page.text)
    # what was typed stays in the form
    assert f'value="{value}"' in page.text


def test_every_wrong_entry_of_a_form_is_shown_in_one_round_trip(client):
    # three fields wrong at once: each gets its message beside it, the box on top lists them, the first has focus
    page = client.post("/vessel", data=dict(N2, rated_pressure="three hundred", water_capacity="",
                                            fill_temperature="-300"))
    assert page.status_code == 422
    for field, words in (("rated_pressure", "Rated pressure:"), ("water_capacity", "Water capacity:"),
                         ("fill_temperature", "Fill temperature:")):
        beside = re.search(rf'<p class="error" id="{field}-error"><strong>Check this:</strong> (.*?)</p>',
                           page.text, re.S)
        assert beside and beside.group(1).startswith(words), field
        assert f'href="#{field}"' in page.text
    assert "3 fields need a change." in page.text
    assert len(re.findall(r"<input [^>]*aria-invalid=\"true\"[^>]*autofocus", page.text)) == 1


def test_key_names_in_a_message_become_label_words_and_ordinary_words_stay():
    from screening.errors import InputError

    both = InputError("give either atmospheric_pressure or elevation, not both", key="site.elevation",
                      given="240 m", expected="one of the two")
    assert form.message_for_field(both, form.BY_KEY["site.elevation"]) == (
        "Site elevation: give either atmospheric pressure at the site or elevation, not both "
        "(given: '240 m'; expected: one of the two)")
    unit = InputError("not a number followed by a unit", key="vessel.rated_pressure", given="x bar(g)",
                      expected="a number and a pressure unit with its basis")
    assert "a number and a pressure unit" in form.message_for_field(unit, form.BY_KEY["vessel.rated_pressure"])


def test_a_mixture_wrong_sum_is_shown_beside_its_first_component(client):
    data = dict(N2, gas_mode="mixture", mix1_gas="argon", mix1_pct="80", mix2_gas="carbon dioxide", mix2_pct="10")
    page = client.post("/vessel", data=data)
    assert page.status_code == 422
    assert 'id="mix1_gas-error"' in page.text


def test_user_text_is_escaped_everywhere(client):
    evil = '<script>alert(1)</script>"><img src=x>'
    page = client.post("/vessel", data=dict(N2, id=evil, description=evil)).text
    assert "<script>alert" not in page and "<img src=x>" not in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in page


def test_a_case_file_uploaded_into_the_form_is_screened_as_written(client):
    path = ROOT / "cases" / "kq-c3h8-009.toml"
    page = client.post("/vessel/upload", files={"case_file": (path.name, path.read_bytes(), "application/toml")})
    assert page.status_code == 200
    assert 'value="propane"' in page.text and 'id="fill_by_mass" value="mass" checked' in page.text
    token = _token(page.text)
    assert client.get(f"/answer/{token}/case.toml").text == path.read_text(encoding="utf-8")


def test_a_file_that_is_not_toml_is_refused_with_its_name(client):
    page = client.post("/vessel/upload", files={"case_file": ("x.toml", b"id = [unclosed", "text/plain")})
    assert page.status_code == 422 and "x.toml: not valid TOML" in page.text


# ----------------------------------------------------------------------------- defences

def test_a_foreign_host_name_is_refused(client):
    page = client.get("/", headers={"host": "attacker.example:8765"})
    assert page.status_code == 421


@pytest.mark.parametrize("origin", ["http://attacker.example", "null", "http://127.0.0.1:9999"])
def test_a_post_from_another_origin_is_refused(client, origin):
    page = client.post("/vessel", data=N2, headers={"origin": origin})
    assert page.status_code == 403


def test_a_post_from_the_page_itself_is_accepted(client):
    assert client.post("/vessel", data=N2, headers={"origin": BASE}).status_code == 200


def test_every_page_allows_only_itself_and_names_no_other_host(client):
    for path in ("/", "/inventory", "/gases", "/static/web.css"):
        page = client.get(path)
        assert page.status_code == 200
        csp = page.headers["content-security-policy"]
        assert "default-src 'self'" in csp and "script-src 'self'" in csp and "unsafe" not in csp
        assert page.headers["x-content-type-options"] == "nosniff"
        assert not re.search(r'(?:src|href|action)="(?:https?:)?//', page.text)


def test_an_upload_over_the_limit_gets_a_clear_message(client):
    big = b"#" * (FORM_LIMIT + 10)
    page = client.post("/vessel/upload", files={"case_file": ("big.toml", big, "text/plain")})
    assert page.status_code == 413
    assert "larger than the 1.0 MB this page accepts" in page.text


def test_vendored_htmx_matches_its_recorded_sha256():
    folder = ROOT / "screening" / "web" / "static"
    recorded = re.search(r"sha256:\s+([0-9a-f]{64})\s+htmx\.min\.js", (folder / "htmx.txt").read_text()).group(1)
    assert hashlib.sha256((folder / "htmx.min.js").read_bytes()).hexdigest() == recorded


# ----------------------------------------------------------------------------- inventory and gas library

def test_an_inventory_is_screened_with_every_row_counted(client):
    path = ROOT / "cases" / "inventory.csv"
    rows = len(path.read_text(encoding="utf-8").strip().splitlines()) - 1
    sent = client.post("/inventory", files={"inventory_file": (path.name, path.read_bytes(), "text/csv")},
                       follow_redirects=False)
    assert sent.status_code == 303
    job = sent.headers["location"]
    deadline = time.monotonic() + 240
    while "Done:" not in (status := client.get(job + "/status").text):
        assert time.monotonic() < deadline and "could not be read:" not in status
        time.sleep(0.5)
    counts = {k: int(v) for k, v in re.findall(r'id="count-([\w-]+)">(\d+)<', status)}
    assert counts.pop("rows") == rows == sum(counts.values())
    for name in ("inventory.result.csv", "inventory.result.json", "inventory.report.pdf"):
        got = client.get(f"{job}/file/{name}")
        assert got.status_code == 200 and got.content
    data = json.loads(client.get(f"{job}/file/inventory.result.json").content)
    assert data["summary"]["rows"] == rows and len(data["results"]) == rows


def test_an_inventory_of_another_kind_is_refused(client):
    page = client.post("/inventory", files={"inventory_file": ("list.pdf", b"%PDF", "application/pdf")})
    assert page.status_code == 422 and "expected a .csv or .xlsx file" in page.text


def test_the_gas_library_lists_every_gas_with_its_sources(client):
    from screening.physics.gases import citations, library

    page = client.get("/gases").text
    for g in library().values():
        assert f">{g.name} <span" in page
    for k in citations():
        assert f'id="src-{k}"' in page


# ----------------------------------------------------------------------------- the command

def _serve(*args):
    import subprocess
    import sys

    return subprocess.run([sys.executable, "-m", "screening.cli", "serve", *args], cwd=ROOT, capture_output=True,
                          text=True, timeout=120)


def test_serve_warns_when_asked_to_listen_beyond_loopback_and_says_when_it_cannot():
    # 192.0.2.1 is a documentation address (RFC 5737), not this machine's: nothing is sent anywhere
    done = _serve("--host", "192.0.2.1", "--port", "8766")
    assert "warning: listening on 192.0.2.1, not on this computer's loopback address" in done.stderr
    assert done.returncode == 2
    assert "could not listen on 192.0.2.1:8766" in done.stderr
    assert "Traceback" not in done.stderr


def test_loopback_names_are_recognised():
    from screening.web.server import is_loopback

    assert is_loopback("127.0.0.1") and is_loopback("localhost") and is_loopback("::1") and is_loopback("127.0.0.2")
    assert not is_loopback("0.0.0.0") and not is_loopback("192.168.1.10")


def _inventory_csv(rows: int, spread: int = 120) -> bytes:
    """A register of `rows` nitrogen cylinders (invented, for the page's mechanics only)."""
    head = "id;gas;water_capacity [L];rated_pressure [bar(g)];fill_pressure [bar(g)];fill_temperature [degC];" \
           "gas_temperature [degC]\n"
    return (head + "".join(f"T-{i:06d};nitrogen;50;300;{150 + i % spread};15;65\n" for i in range(rows))).encode()


def _wait_done(client, job, seconds=300):
    deadline = time.monotonic() + seconds
    while "Done:" not in (status := client.get(job + "/status").text):
        assert time.monotonic() < deadline and "could not be read:" not in status
        time.sleep(0.5)
    return status


def test_a_long_inventory_is_listed_page_by_page(client):
    sent = client.post("/inventory", files={"inventory_file": ("register.csv", _inventory_csv(120), "text/csv")},
                       follow_redirects=False)
    job = sent.headers["location"]
    _wait_done(client, job)
    first = client.get(job).text
    assert first.count('<tr class="v-') == 50 and "page 1 of 3" in first
    last = client.get(job + "?page=3").text
    assert last.count('<tr class="v-') == 20 and "Rows 101–120 of 120" in last


def test_an_xlsx_inventory_is_screened(client, tmp_path):
    import csv as _csv

    from openpyxl import Workbook

    wb = Workbook()
    ws = wb.active
    with open(ROOT / "cases" / "inventory.csv", newline="", encoding="utf-8") as fh:
        rows = list(_csv.reader(fh, delimiter=";"))
    for r in rows:
        ws.append(r)
    path = tmp_path / "register.xlsx"
    wb.save(path)
    sent = client.post("/inventory", files={"inventory_file": (path.name, path.read_bytes(), "application/octet-stream")},
                       follow_redirects=False)
    status = _wait_done(client, sent.headers["location"])
    assert f'id="count-rows">{len(rows) - 1}<' in status


def test_a_long_inventory_does_not_hold_up_a_vessel_answer(client):
    sent = client.post("/inventory", files={"inventory_file": ("big.csv", _inventory_csv(30000), "text/csv")},
                       follow_redirects=False)
    job = sent.headers["location"]
    page = client.post("/vessel", data=N2)
    assert page.status_code == 200 and "Stays within rating" in page.text
    assert "Done:" not in client.get(job + "/status").text


def test_a_case_with_a_pressure_basis_fills_the_form_with_explicit_units():
    text = (ROOT / "cases" / "kq-n2-014.toml").read_text(encoding="utf-8")
    bare = 'pressure_basis = "gauge"\n' + text.replace("bar(g)", "bar")
    values, notes = form.values_from_case_text(bare)
    assert values["rated_pressure_unit"] == values["fill_pressure_unit"] == "bar(g)"
    assert parse_case_text(form.case_text(values)).rated_pressure_pa == parse_case_text(text).rated_pressure_pa
    assert notes


@pytest.mark.parametrize("path", sorted((ROOT / "cases").glob("*.toml")), ids=lambda p: p.name)
def test_every_demo_case_gets_its_engine_verdict_on_the_page(client, path):
    from screening.engine import screen_text
    from screening.outputs.report import VERDICTS

    text = path.read_text(encoding="utf-8")
    page = client.post("/vessel/upload", files={"case_file": (path.name, text.encode(), "application/toml")})
    assert page.status_code == 200
    verdict = screen_text(text, path.name).verdict
    assert f"<strong>{VERDICTS[verdict]['label']}</strong> <span class=\"code\">(verdict: {verdict})</span>" in page.text


def test_an_unreadable_inventory_says_why(client):
    # a header that nearly names a key the tool reads: the whole file is refused with a "did you mean"
    # (a column of the user's own, such as "colour", would be carried through instead)
    sent = client.post("/inventory", files={"inventory_file": ("bad.csv", b"id;gas;colour;fill_presure\nA;nitrogen;red;200\n",
                                                               "text/csv")}, follow_redirects=False)
    job = sent.headers["location"]
    deadline = time.monotonic() + 120
    while "could not be read:" not in (status := client.get(job + "/status").text):
        assert time.monotonic() < deadline and "Done:" not in status
        time.sleep(0.3)
    assert "bad.csv" in status and "fill_presure" in status


def test_an_inventory_whose_pressure_header_lacks_its_basis_says_so_once(client):
    # 'rated_pressure [bar]' says neither gauge nor absolute and nothing else does: the file is refused, naming
    # the column, instead of every row being refused for it
    text = (b"id,gas,water_capacity [L],rated_pressure [bar],fill_pressure [bar(g)],fill_temperature [degC],"
            b"ambient_max [degC]\nA,nitrogen,50,300,200,15,45\n")
    sent = client.post("/inventory", files={"inventory_file": ("basis.csv", text, "text/csv")}, follow_redirects=False)
    job = sent.headers["location"]
    deadline = time.monotonic() + 120
    while "could not be read:" not in (status := client.get(job + "/status").text):
        assert time.monotonic() < deadline and "Done:" not in status
        time.sleep(0.3)
    assert "basis.csv" in status and "rated_pressure [bar]" in status and "gauge or absolute" in status


def test_a_large_inventory_offers_its_batch_pdf_and_writes_it_on_request(client):
    from screening.web.engine import PDF_AT_ONCE_ROWS

    rows = PDF_AT_ONCE_ROWS + 1
    sent = client.post("/inventory", files={"inventory_file": ("large.csv", _inventory_csv(rows, spread=1), "text/csv")},
                       follow_redirects=False)
    job = sent.headers["location"]
    status = _wait_done(client, job)
    assert 'id="make-pdf"' in status and "large.report.pdf" not in status
    assert client.post(job + "/pdf", follow_redirects=False).status_code == 303
    deadline = time.monotonic() + 300
    while "large.report.pdf" not in (status := client.get(job + "/status").text):
        assert time.monotonic() < deadline
        time.sleep(0.5)
    pdf = client.get(f"{job}/file/large.report.pdf")
    assert pdf.status_code == 200 and pdf.content.startswith(b"%PDF")
    assert f'id="count-rows">{rows}<' in status


def test_the_inventory_page_writes_an_xlsx_and_a_batch_pdf_that_verifies(tmp_path):
    # the page's downloads come from the batch's own writers; its PDF carries the uploaded inventory, so
    # `screening verify` screens it again and renders the same pages
    import shutil

    from openpyxl import load_workbook

    from screening.batch import run as run_batch
    from screening.outputs.verify import verify_report
    from screening.web.engine import inventory

    shutil.copy(ROOT / "cases" / "inventory.csv", tmp_path / "inventory.csv")
    state = inventory(str(tmp_path), "inventory.csv", None, "2026-12-03", pdf=True)
    assert state["stage"] == "done"
    book = load_workbook(tmp_path / "inventory.result.xlsx", read_only=True)
    assert "summary" in book.sheetnames
    ok, message = verify_report(str(tmp_path / "inventory.report.pdf"), run_batch=run_batch)
    assert ok, message


def _descendants(pid: int) -> set[int]:
    """The processes started by `pid`, and theirs (Linux /proc)."""
    found: set[int] = set()
    todo = [pid]
    while todo:
        p = todo.pop()
        for task in Path(f"/proc/{p}/task").glob("*"):
            try:
                kids = {int(x) for x in (task / "children").read_text().split()}
            except OSError:
                continue
            todo += list(kids - found)
            found |= kids
    return found


@pytest.mark.skipif(not Path("/proc/self/task").exists(), reason="needs Linux /proc to list a process's children")
def test_a_termination_signal_stops_the_server_and_its_worker_processes():
    # SIGTERM (a service manager's stop, `kill`) stops the page as Ctrl-C does: exit 0, "stopped", and no
    # worker process of its pools is left running
    import signal
    import socket
    import subprocess
    import sys

    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    proc = subprocess.Popen([sys.executable, "-m", "screening.cli", "serve", "--port", str(port)], cwd=ROOT,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        line = proc.stdout.readline()
        assert f"http://127.0.0.1:{port}/" in line, line + proc.stderr.read()
        deadline = time.monotonic() + 30
        kids = _descendants(proc.pid)
        while not kids and time.monotonic() < deadline:
            time.sleep(0.2)
            kids = _descendants(proc.pid)
        assert kids                             # the warm pools' processes
        proc.send_signal(signal.SIGTERM)
        out, err = proc.communicate(timeout=60)
    finally:
        if proc.poll() is None:
            proc.kill()
    assert proc.returncode == 0, err
    assert "stopped" in out and "Traceback" not in err
    deadline = time.monotonic() + 10
    while time.monotonic() < deadline and any(Path(f"/proc/{k}").exists() for k in kids):
        time.sleep(0.2)
    assert not [k for k in kids if Path(f"/proc/{k}").exists()]
