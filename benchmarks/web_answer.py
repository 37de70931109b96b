"""Speed of the local page (`screening serve`), as a person would meet it.

Starts the server as its own process on a free loopback port and measures, with plain HTTP requests
from this process:

* the server's ready time: from the command's start to its address line, and to the first answer of a
  pure-gas vessel (which waits for the worker processes to warm up);
* warm answers: a pure-gas vessel (form posted, answer page and its isochore plot fetched), and a
  mixture, each several times; median and worst;
* for comparison, one `screening check` of the same pure-gas case as a fresh process.

Targets: pure gas with plot < 0.3 s warm; mixture < 1 s; ready within the time of one `screening check`.
Run from the repository root:  python benchmarks/web_answer.py [repeats]
"""

from __future__ import annotations

import re
import signal
import socket
import statistics
import subprocess
import sys
import time
import urllib.parse
import urllib.request
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
PURE = dict(id="KQ-N2-014", water_capacity="50", water_capacity_unit="L", rated_pressure="300",
            rated_pressure_unit="bar(g)", gas_mode="single", gas="nitrogen", fill_by="pressure",
            fill_pressure="200", fill_pressure_unit="bar(g)", fill_temperature="15", fill_temperature_unit="degC",
            exposure_by="stated", ambient_max="45", ambient_max_unit="degC", gas_temperature="65",
            gas_temperature_unit="degC")
MIXTURE = dict(PURE, id="KQ-ARCO2-021", water_capacity="20", gas_mode="mixture", mix1_gas="argon", mix1_pct="82",
               mix2_gas="carbon dioxide", mix2_pct="18", gas_temperature="60", ambient_max="")


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _answer(base: str, data: dict) -> float:
    """Seconds for one answer: the form posted, the page read, its plot fetched."""
    t0 = time.perf_counter()
    req = urllib.request.Request(base + "vessel", data=urllib.parse.urlencode(data).encode(),
                                 headers={"Origin": base.rstrip("/")})
    with urllib.request.urlopen(req, timeout=120) as r:
        page = r.read().decode("utf-8")
    token = re.search(r"/answer/([\w-]+)/plot\.svg", page)
    assert token, "no plot in the answer"
    with urllib.request.urlopen(f"{base}answer/{token.group(1)}/plot.svg", timeout=60) as r:
        r.read()
    return time.perf_counter() - t0


def main(repeats: int = 10) -> None:
    port = _free_port()
    base = f"http://127.0.0.1:{port}/"
    t0 = time.perf_counter()
    proc = subprocess.Popen([sys.executable, "-m", "screening.cli", "serve", "--port", str(port)], cwd=ROOT,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    try:
        proc.stdout.readline()
        listening = time.perf_counter() - t0
        _answer(base, PURE)
        first = time.perf_counter() - t0
        _answer(base, MIXTURE)   # the mixture's first answer loads its fluids in the worker
        pure = [_answer(base, PURE) for _ in range(repeats)]
        mixture = [_answer(base, MIXTURE) for _ in range(max(3, repeats // 2))]
    finally:
        proc.send_signal(signal.SIGINT)
        proc.wait(timeout=60)
    t1 = time.perf_counter()
    subprocess.run([sys.executable, "-m", "screening.cli", "check", "cases/kq-n2-014.toml"], cwd=ROOT,
                   capture_output=True, check=False)
    check = time.perf_counter() - t1

    def line(name, xs, target):
        med, worst = statistics.median(xs), max(xs)
        print(f"{name:<34} median {med:6.3f} s  worst {worst:6.3f} s  ({len(xs)} runs; target < {target} s: "
              f"{'met' if med < target else 'NOT met'})")

    print(f"server listening after               {listening:6.2f} s")
    print(f"first pure-gas answer after start    {first:6.2f} s  (one `screening check` process: {check:.2f} s; "
          f"{'met' if first <= check else 'NOT met'})")
    line("pure gas, answer + plot, warm", pure, 0.3)
    line("mixture, answer + plot, warm", mixture, 1.0)


if __name__ == "__main__":
    main(int(sys.argv[1]) if len(sys.argv) > 1 else 10)
