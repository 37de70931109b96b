"""Root finding for the physics modules: scipy's Brent method, imported on first use.

Importing scipy.optimize takes a noticeable part of a second; a command that never needs a root (a
batch of gas rows on the vectorised path, a report drawn from a finished result) should not pay for it.
"""

from __future__ import annotations


def brentq(f, a: float, b: float, **kwargs) -> float:
    """scipy.optimize.brentq(f, a, b, **kwargs): a root of f in [a, b], where f(a) and f(b) differ in sign
    (Brent, R.P. (1973). Algorithms for Minimization without Derivatives, ch. 4)."""
    from scipy.optimize import brentq as _brentq

    return _brentq(f, a, b, **kwargs)
