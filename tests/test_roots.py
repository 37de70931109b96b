"""Root finding (screening.physics.roots): scipy's compiled Brent solver loaded without scipy.optimize."""

import math
import subprocess
import sys
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq as scipy_brentq

from screening.physics import roots

ROOT = Path(__file__).resolve().parents[1]

FUNCTIONS = [
    (lambda x: x * x - 2.0, 0.0, 2.0),
    (lambda x: math.cos(x) - x, 0.0, 1.0),
    (lambda x: math.exp(x) - 1e3, 0.0, 20.0),
    (lambda x: (x - 300.0) ** 3 + 1e-3 * (x - 300.0), 250.0, 400.0),
    (lambda x: 1.0 / x - 0.3, 0.1, 100.0),
]


def test_the_loaded_solver_is_scipys_compiled_brent():
    how, _ = roots._load()
    assert how == "compiled"


@pytest.mark.parametrize("f, a, b", FUNCTIONS)
@pytest.mark.parametrize("kwargs", [{}, {"xtol": 1e-9, "rtol": 1e-13, "maxiter": 200}, {"xtol": 1e-6, "maxiter": 60},
                                    {"rtol": 1e-9, "xtol": 1e-9 * 400.0}])
def test_the_same_root_as_scipy_optimize_brentq_to_the_last_bit(f, a, b, kwargs):
    # Reference: scipy.optimize.brentq itself, imported here.
    assert roots.brentq(f, a, b, **kwargs) == scipy_brentq(f, a, b, **kwargs)


@settings(max_examples=60, deadline=None)
@given(st.floats(0.01, 1e4), st.floats(-50.0, 50.0), st.floats(1.0, 1e3))
def test_the_same_root_as_scipy_for_any_shifted_cubic(scale, shift, width):
    # Reference: scipy.optimize.brentq itself.
    def f(x):
        return scale * (x - shift) ** 3 + (x - shift)

    a, b = shift - width, shift + 2.0 * width
    assert roots.brentq(f, a, b, xtol=1e-12, rtol=1e-14) == scipy_brentq(f, a, b, xtol=1e-12, rtol=1e-14)


def test_the_same_errors_as_scipy():
    with pytest.raises(ValueError, match="different signs"):
        roots.brentq(lambda x: x * x + 1.0, -1.0, 1.0)
    with pytest.raises(ValueError, match="NaN"):
        roots.brentq(lambda x: math.nan if x > 0.5 else -1.0, 0.0, 1.0)
    with pytest.raises(RuntimeError):
        roots.brentq(lambda x: math.cos(x) - x, 0.0, 1.0, xtol=1e-15, maxiter=2)
    with pytest.raises(ValueError, match="rtol too small"):
        roots.brentq(lambda x: x, -1.0, 1.0, rtol=1e-17)
    with pytest.raises(ValueError, match="xtol too small"):
        roots.brentq(lambda x: x, -1.0, 1.0, xtol=0.0)


def test_a_root_in_a_fresh_process_does_not_import_scipy_optimize():
    code = ("import sys\n"
            "from screening.physics.roots import brentq\n"
            "print(repr(brentq(lambda x: x * x - 2.0, 0.0, 2.0, xtol=1e-12)))\n"
            "print('scipy.optimize' in sys.modules)\n"
            "import scipy.optimize\n"
            "print(repr(scipy.optimize.brentq(lambda x: x * x - 2.0, 0.0, 2.0, xtol=1e-12)))\n")
    done = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    ours, imported, theirs = done.stdout.split()
    assert imported == "False"
    assert ours == theirs
