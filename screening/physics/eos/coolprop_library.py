"""CoolProp's fluid library for a one-case command: loaded without the superancillaries of every fluid,
then each fluid the process uses added back whole before its first state.

Why. CoolProp 8.0.0 loads its whole fluid library (about 136 fluids) the first time it is used, which
`import CoolProp` does. Most of that load is building every fluid's superancillary functions (the
Chebyshev expansions of its saturation curve): measured on 2026-12-03, `import CoolProp.CoolProp` took
2.26 s of CPU, of which 2.05 s went to them (0.22 s with them switched off). Release wheels build them
eagerly (lazy building is a compile-time option of CoolProp's), and no configuration key limits the load
to some fluids. A one-case command needs one fluid, or the components of one mixture.

How. `load_lean()` imports CoolProp with its environment switch
``COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY`` set, so the library loads without superancillaries, and
then removes the switch. The switch is read when the library loads and again whenever a fluid is added
to it. `use(names)`, called before the first state of a fluid is made (`reference.ReferenceFluid`, the
air properties of `exposure`), adds each fluid back to the library from CoolProp's own JSON of it
(`get_fluid_param_string(name, "JSON")`, the fluid exactly as the library holds it, superancillaries
included) with ``OVERWRITE_FLUIDS`` on for that call: about 0.02 s a fluid. The fluid is then the one a
full load gives, bit for bit (tests/test_coolprop_library.py compares the states of every gas of the
library with a fully loaded CoolProp in another process; the golden corpus is unchanged).

Without the superancillaries the numbers would move (phase-diagram critical densities up to 0.2 %),
so a fluid is never used before `use` has added it back.

Only the commands that screen in a fresh process (`check`, `report`, `verify`, and `batch`, which adds back
the fluids of the register's first chunk before any worker forks, so that the workers share them) call
`load_lean()`; everything else (the web page, the tests, a library user) imports CoolProp as usual, which
loads the library whole, and then `use` does nothing. `load_lean()` does nothing either when
CoolProp is already imported or the user has set the switch.

CoolProp prints one line on its standard output when it loads with the switch; that line goes to the
null device (the process's descriptor 1 is pointed there for the import only), so the command's output
stays its own.
"""

from __future__ import annotations

import contextlib
import os
import sys
import threading

#: CoolProp's environment switch, read when its library loads and whenever a fluid is added.
SWITCH = "COOLPROP_DISABLE_SUPERANCILLARIES_ENTIRELY"

_LOCK = threading.Lock()
_lean = False                 # the library was loaded without superancillaries (by load_lean)
_ready: set[str] = set()      # fluids added back whole (names as asked and as CoolProp names them)


def is_lean() -> bool:
    """True when this process's CoolProp library was loaded by `load_lean()`."""
    return _lean


@contextlib.contextmanager
def _stdout_silenced():
    """Point descriptor 1 at the null device for the block (C and C++ streams flushed before it comes
    back), where the platform allows; otherwise leave it alone."""
    for stream in (sys.stdout, sys.stderr):
        with contextlib.suppress(Exception):
            stream.flush()
    try:
        saved = os.dup(1)
    except OSError:
        yield
        return
    try:
        null = os.open(os.devnull, os.O_WRONLY)
        try:
            os.dup2(null, 1)
        finally:
            os.close(null)
        yield
    finally:
        with contextlib.suppress(Exception):
            import ctypes

            ctypes.CDLL(None).fflush(None)   # what the C library still buffers for descriptor 1
        os.dup2(saved, 1)
        os.close(saved)


def load_lean() -> bool:
    """Import CoolProp with its library loaded without superancillaries (see the module docstring).

    Returns True when the library is (now) lean; False when CoolProp was imported already (loaded
    whole) or the user set the switch, in which case nothing is changed."""
    global _lean
    with _LOCK:
        if _lean:
            return True
        if "CoolProp" in sys.modules or SWITCH in os.environ:
            return False
        os.environ[SWITCH] = "1"
        try:
            with _stdout_silenced():
                import CoolProp.CoolProp  # noqa: F401  (loads the library)
        finally:
            del os.environ[SWITCH]
        _lean = True
        return True


def use(names) -> None:
    """Make sure each CoolProp fluid in `names` is in the library whole, superancillaries included,
    before a state of it is made. Nothing to do unless the library was loaded by `load_lean()`. A name
    CoolProp does not know is left for the caller's own look-up to report."""
    if not _lean:
        return
    import CoolProp.CoolProp as CP

    with _LOCK:
        for name in names:
            if name in _ready:
                continue
            try:
                canonical = CP.get_fluid_param_string(name, "name")
            except (ValueError, RuntimeError):
                continue
            if canonical not in _ready:
                text = CP.get_fluid_param_string(canonical, "JSON")
                was = CP.get_config_bool(CP.OVERWRITE_FLUIDS)
                CP.set_config_bool(CP.OVERWRITE_FLUIDS, True)
                try:
                    CP.add_fluids_as_JSON("HEOS", text)
                finally:
                    CP.set_config_bool(CP.OVERWRITE_FLUIDS, was)
                _ready.add(canonical)
            _ready.add(name)
