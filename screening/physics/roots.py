"""Root finding for the physics modules: scipy's Brent method (`scipy.optimize.brentq`), loaded on first use.

Importing the package `scipy.optimize` takes about 0.3 s of CPU (it imports linear programming, global
optimisers, scipy.linalg, scipy.special ...), a third of a one-case command's whole budget, for the one
function the physics uses. So the first call loads scipy's own compiled Brent solver, the extension
module `scipy.optimize._zeros` that `scipy.optimize.brentq` calls, from scipy's installed files without
running the package's ``__init__`` (about 0.015 s), and applies the same checks `brentq` applies before
it calls that solver (the tolerances, a NaN from `f` raised as ValueError). Same compiled code, same
arguments: the same root to the last bit (tests/test_roots.py compares with `scipy.optimize.brentq`).
Where the extension cannot be loaded so (another layout of scipy's files), `scipy.optimize.brentq`
itself is used. A process that imports `scipy.optimize` anyway (a batch, the web page) gets the same
answers either way.
"""

from __future__ import annotations

import operator
import threading

import numpy as np

#: scipy.optimize.brentq's own defaults and lower bound on rtol (4 machine epsilons).
_XTOL = 2e-12
_RTOL = 4 * float(np.finfo(float).eps)
_ITER = 100

_LOCK = threading.Lock()
_solver = None          # scipy's compiled `_brentq`, or scipy.optimize.brentq itself (see _load)


def _compiled_brentq():
    """scipy's `scipy.optimize._zeros._brentq`, loaded from its file without importing scipy.optimize;
    None where that file is not where this scipy keeps it."""
    import importlib.machinery
    import importlib.util
    from pathlib import Path

    import scipy

    folder = Path(scipy.__file__).parent / "optimize"
    for suffix in importlib.machinery.EXTENSION_SUFFIXES:
        path = folder / f"_zeros{suffix}"
        if path.is_file():
            name = "scipy.optimize._zeros"
            loader = importlib.machinery.ExtensionFileLoader(name, str(path))
            spec = importlib.util.spec_from_file_location(name, str(path), loader=loader)
            module = importlib.util.module_from_spec(spec)
            loader.exec_module(module)
            return getattr(module, "_brentq", None)
    return None


def _load():
    global _solver
    with _LOCK:
        if _solver is None:
            compiled = None
            try:
                compiled = _compiled_brentq()
            except (ImportError, OSError, AttributeError):
                compiled = None
            if compiled is None:
                from scipy.optimize import brentq as _scipy_brentq

                _solver = ("scipy.optimize", _scipy_brentq)
            else:
                _solver = ("compiled", compiled)
    return _solver


def brentq(f, a: float, b: float, args=(), xtol: float = _XTOL, rtol: float = _RTOL, maxiter: int = _ITER,
           full_output: bool = False, disp: bool = True) -> float:
    """scipy.optimize.brentq(f, a, b, ...): a root of f in [a, b], where f(a) and f(b) differ in sign
    (Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4). Same arguments, same
    errors (ValueError for a sign error, a NaN value or a tolerance out of range; RuntimeError when it
    does not converge in `maxiter` steps). `full_output` is not offered: the physics needs the root only."""
    if full_output:
        raise TypeError("screening.physics.roots.brentq gives the root only (full_output=False)")
    how, solver = _solver or _load()
    if how == "scipy.optimize":
        return solver(f, a, b, args=args, xtol=xtol, rtol=rtol, maxiter=maxiter, disp=disp)
    if not isinstance(args, tuple):
        args = (args,)
    maxiter = operator.index(maxiter)
    if xtol <= 0:
        raise ValueError(f"xtol too small ({xtol:g} <= 0)")
    if rtol < _RTOL:
        raise ValueError(f"rtol too small ({rtol:g} < {_RTOL:g})")

    def f_checked(x, *more):
        fx = f(x, *more)
        if np.isnan(fx):
            raise ValueError(f"The function value at x={x} is NaN; solver cannot continue.")
        return fx

    return solver(f_checked, a, b, xtol, rtol, maxiter, args, False, disp)
