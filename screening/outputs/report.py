"""The PDF report: a view of a finished screening result.

``render_report(result, case_text, out_path, report_date=...)`` formats the typed result
(:class:`screening.result.Result`) into HTML (Jinja2, autoescaped, strict about undefined names), lays
it out with WeasyPrint and writes a PDF that carries the case file as entered and the JSON result as
attachments.

Rules this module keeps:

* It computes no physics. Every number shown comes from the result; the only arithmetic is
  unit conversion for display (screening.units) and the gauge-basis margin line.
* Text from the case (id, description, site, file name) is only ever element content, escaped.
  Numbers are formatted here, in Python, never in the template.
* WeasyPrint may fetch only ``data:`` URIs and files inside the packaged templates folder; any
  other URL, or a missing stylesheet or image, stops the render.
* The same result, case text, report date and tool version give the same PDF bytes.
* The PDF is written to a temporary file beside the target and moved into place; a failed render
  leaves no partial file and does not touch an earlier report.
"""

from __future__ import annotations

import contextlib
import datetime as _dt
import functools
import hashlib
import json
import mimetypes
import os
from pathlib import Path, PurePath
from urllib.parse import unquote, urlsplit
from urllib.request import url2pathname

import jinja2
from markupsafe import Markup

from screening.cautions import ceiling_name
from screening.constants import P_STANDARD_ATMOSPHERE, R
from screening.outputs.actions import action_line
from screening.outputs.files import check_target, write_bytes
from screening.outputs.plot import (
    CONDENSED_PHASES,
    drawable_models,
    liquid_full_marked,
    margin_line_pa,
    phase_diagram_drawable,
    phase_diagram_svg,
    phase_diagram_wanted,
    plot_svg,
    svg_data_uri,
    worst_case_point_temperature,
)
from screening.outputs.summary import scenarios_worst_first
from screening.outputs.text import (
    fmt_pressure,
    percent_pair,
    phase_words,
    pressure_unit,
    reasons_shown,
    visible,
)
from screening.physics.eos.generalized import (
    SRK_QUANTUM_PRESSURE_MAX,
    SRK_QUANTUM_TEMPERATURE_RANGE,
    SRK_QUANTUM_Z_ERROR,
)
from screening.result import ModelResult, Result
from screening.units import format_percent, format_pressure, format_quantity, format_temperature, pressure_in

TEMPLATE_NAME = "report.html.j2"

#: PDF/A-3 allows embedded files (the case and the result ride along); fonts are embedded DejaVu.
PDF_VARIANT = "pdf/a-3b"

#: Verdict words and marks of this report. The shape and the frame style carry the meaning in
#: black-and-white print; the word carries it for everyone.
VERDICTS = {
    "within": dict(mark="\u2713", label="Stays within rating",
                   line="The worst-case peak pressure stays below the rated pressure with at least the "
                        "required margin."),
    "low-margin": dict(mark="!", label="Too close to the limit",
                       line="The worst-case peak pressure stays below the rated pressure, but not with the "
                            "margin or the certainty this screening requires; the reasons say which."),
    "over": dict(mark="\u2715", label="Exceeds rated pressure",
                 line="The worst-case peak pressure reaches or exceeds the rated pressure."),
    "out-of-scope": dict(mark="?", label="Not screened: outside the method",
                         line="No model of this tool applies to this case; no pressure is claimed."),
}

MODEL_TITLES = {
    "ideal": "Ideal gas",
    "generalized": "Generalized compressibility (Lee\u2013Kesler)",
    "reference": "Reference equation of state (Helmholtz energy)",
}

#: Model names short enough for the key figures under the verdict.
MODEL_SHORT = {"ideal": "Ideal gas", "generalized": "Generalized (Lee\u2013Kesler)",
               "reference": "Reference EOS (Helmholtz)"}


def model_title(result: Result, name: str | None, short: bool = False, none: str = "none") -> str:
    """The title of model `name` in `result` (MODEL_SHORT's with `short`): the generalized model's by the
    equation it used (the quantum-gas Soave–Redlich–Kwong model for pure hydrogen, helium and neon); `none`
    where there is no such model."""
    if not name or name not in MODEL_TITLES:
        return none
    model = result.models.get(name)
    if name == "generalized" and model is not None and model.method:
        return "Generalized (quantum-gas SRK)" if short else f"Generalized compressibility ({model.method})"
    return (MODEL_SHORT if short else MODEL_TITLES)[name]


#: The validity text of the generalized model where it is the quantum-gas Soave–Redlich–Kwong model.
SRK_VALIDITY = (
    "Soave\u2013Redlich\u2013Kwong with the Gunn\u2013Chueh\u2013Prausnitz effective critical constants, for pure "
    "hydrogen, helium and neon, whose reduced temperatures lie above the Lee\u2013Kesler tables: checked against "
    "their reference equations of state from {lo:g} to {hi:g} \u00b0C up to {pmax:g} bar(a), |Z/Z_ref \u2212 1| at "
    "most {errors}.").format(
        lo=SRK_QUANTUM_TEMPERATURE_RANGE[0] - 273.15, hi=SRK_QUANTUM_TEMPERATURE_RANGE[1] - 273.15,
        pmax=SRK_QUANTUM_PRESSURE_MAX / 1e5,
        errors=", ".join(f"{100 * e:.1f} % ({g})" for g, e in SRK_QUANTUM_Z_ERROR.items()))

#: References of the quantum-gas Soave–Redlich–Kwong model (with the Gunn–Chueh–Prausnitz citation of the gas
#: library's sources).
SRK_REFERENCES = (
    "Soave, G. (1972). Equilibrium constants from a modified Redlich\u2013Kwong equation of state. "
    "Chem. Eng. Sci. 27, 1197\u20131203. doi:10.1016/0009-2509(72)80096-4",
)

VALIDITY = {
    "ideal": (
        "For comparison only: close to real behaviour far from the critical point at low reduced pressure; at "
        "cylinder pressures it can be wrong by tens of percent, either way."
    ),
    "generalized": Markup(
        "Lee\u2013Kesler tables: reduced temperature 0.3 to 4, reduced pressure 0 to 10, non-polar and slightly "
        "polar gases in one phase; mixtures by Kay&rsquo;s rule (T<sub>pc</sub> = \u03a3 y<sub>i</sub> T<sub>c,i</sub>, "
        "P<sub>pc</sub> = \u03a3 y<sub>i</sub> P<sub>c,i</sub>). Not for quantum gases at low temperature or strongly "
        "polar or associating fluids."
    ),
    "reference": (
        "Multiparameter Helmholtz-energy equation of state of the named fluid (CoolProp), inside the temperature "
        "and pressure range its authors state; where it applies, the most accurate of the three."
    ),
}


def _references(result: Result) -> list[str]:
    """The general references of `result`: Lee–Kesler (whose tables' range decides where the quantum-gas model
    takes over), the quantum-gas Soave–Redlich–Kwong model with the Gunn–Chueh–Prausnitz constants where it was
    used, Kay's rule for a mixture, then the rest."""
    gen = result.models.get("generalized")
    refs = [GENERAL_REFERENCES[0]]
    if gen is not None and gen.method:
        from screening.physics.gases import citations

        refs += [*SRK_REFERENCES, citations()["gcp-quantum"]]
    if len(result.gas.components) > 1:
        refs.append(GENERAL_REFERENCES[1])
    return refs + list(GENERAL_REFERENCES[2:])


#: Lee–Kesler, Kay's rule (mixtures only), then the references of every result (:func:`_references`).
GENERAL_REFERENCES = (
    "Lee, B.I., Kesler, M.G. (1975). A generalized thermodynamic correlation based on three-parameter "
    "corresponding states. AIChE Journal 21(3), 510\u2013527. doi:10.1002/aic.690210313",
    "Kay, W.B. (1936). Density of hydrocarbon gases and vapors at high temperature and pressure. "
    "Industrial & Engineering Chemistry 28(9), 1014\u20131019 (pseudocritical constants of mixtures).",
    "Tiesinga, E., Mohr, P.J., Newell, D.B., Taylor, B.N. (2021). CODATA recommended values of the "
    "fundamental physical constants: 2018. Rev. Mod. Phys. 93, 025010 (R = 8.314462618 J/(mol\u00b7K)).",
    "Bell, I.H., Wronski, J., Quoilin, S., Lemort, V. (2014). Pure and pseudo-pure fluid thermophysical "
    "property evaluation and the open-source thermophysical property library CoolProp. "
    "Ind. Eng. Chem. Res. 53(6), 2498\u20132508.",
)


# ----------------------------------------------------------------------------- templates and fetching

def templates_dir() -> Path:
    """The folder holding report.html.j2 and report.css.

    Installed wheel: ``screening/templates`` inside the package. Source or editable checkout: the
    repository's top-level ``templates/``.
    """
    candidates: list[Path] = []
    with contextlib.suppress(Exception):
        from importlib.resources import files

        candidates.append(Path(str(files("screening") / "templates")))
    here = Path(__file__).resolve()
    candidates += [here.parent.parent / "templates", here.parents[2] / "templates"]
    for c in candidates:
        if (c / TEMPLATE_NAME).is_file():
            return c.resolve()
    raise FileNotFoundError("report templates not found; looked in: " + ", ".join(str(c) for c in candidates))


def _environment(folder: Path) -> jinja2.Environment:
    # autoescape=True on purpose: select_autoescape() would not cover the .html.j2 suffix.
    return jinja2.Environment(
        loader=jinja2.FileSystemLoader(str(folder)),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
    )


class ResourceRefused(ValueError):
    """A URL the report is not allowed to fetch."""


class ReportRenderError(RuntimeError):
    """The layout engine could not build the report (a missing or refused stylesheet or image)."""


def _make_fetcher(folder: Path):
    """A WeasyPrint URL fetcher that serves data: URIs and files inside `folder`, and nothing else."""
    from weasyprint.urls import URLFetcher, URLFetcherResponse

    root = folder.resolve()

    class LocalOnlyFetcher(URLFetcher):
        def __init__(self) -> None:
            super().__init__(allowed_protocols=("data", "file"), allow_redirects=False, fail_on_errors=True,
                             timeout=1)

        def fetch(self, url, headers=None):  # noqa: D401 - WeasyPrint's interface
            scheme = url.split(":", 1)[0].lower() if ":" in url else ""
            if scheme == "data":
                return super().fetch(url, headers)
            if scheme != "file":
                raise ResourceRefused(f"the report may not fetch {url[:80]!r}")
            parts = urlsplit(url)
            if parts.netloc not in ("", "localhost"):
                raise ResourceRefused(f"the report may not fetch {url[:80]!r}")
            path = Path(url2pathname(unquote(parts.path))).resolve()
            if not path.is_relative_to(root) or not path.is_file():
                raise ResourceRefused(f"the report may fetch only files of its templates folder, not {url[:80]!r}")
            body = path.read_bytes()
            mime = mimetypes.guess_type(path.name)[0] or "application/octet-stream"
            return URLFetcherResponse(path.as_uri(), body=body, headers={"Content-Type": mime})

    return LocalOnlyFetcher()


# ----------------------------------------------------------------------------- number formatting

def _group(text: str) -> str:
    """Thin-space thousands grouping of the integer part of a formatted number."""
    sign = ""
    if text.startswith("-"):
        sign, text = "\u2212", text[1:]
    intpart, dot, frac = text.partition(".")
    if len(intpart) > 4:
        groups = []
        while intpart:
            groups.insert(0, intpart[-3:])
            intpart = intpart[:-3]
        intpart = "\u2009".join(groups)
    return sign + intpart + dot + frac


def num(x: float | None, digits: int = 4) -> str:
    """A plain number with `digits` decimals; '—' for None."""
    if x is None:
        return "\u2014"
    return _group(f"{x:.{digits}f}")


def sig(x: float | None, figures: int = 6) -> str:
    """A number to `figures` significant figures, fixed-point where sensible; '—' for None."""
    if x is None:
        return "\u2014"
    if x == 0:
        return "0"
    import math

    exponent = math.floor(math.log10(abs(x)))
    if -4 <= exponent < 9:
        decimals = max(figures - 1 - exponent, 0)
        text = f"{x:.{decimals}f}"
        if "." in text:
            text = text.rstrip("0").rstrip(".")
        return _group(text)
    mantissa, exp = f"{x:.{figures - 1}e}".split("e")
    return f"{mantissa} \u00d7 10^{int(exp)}"


def mpa_abs(p_pa: float | None) -> str:
    """Absolute pressure in MPa for the hand check."""
    return "\u2014" if p_pa is None else f"{num(p_pa / 1e6, 4)} MPa"


def _absolute_label(label: str) -> str:
    """The absolute-basis label of a display pressure unit ('bar(g)' -> 'bar(a)', 'psig' -> 'psia')."""
    if label.endswith("(g)"):
        candidate = label[:-3] + "(a)"
    elif label.endswith("g"):
        candidate = label[:-1] + "a"
    else:
        candidate = label
    try:
        format_pressure(P_STANDARD_ATMOSPHERE, candidate, P_STANDARD_ATMOSPHERE)   # a unit the table knows?
    except KeyError:
        return "kPa(a)"
    return candidate


# ----------------------------------------------------------------------------- the view

def _unit(text: str, unit: str) -> str:
    return text if text == "\u2014" else f"{text} {unit}"


def _has_value(value) -> bool:
    """False for a row that would show only dashes (an intermediate the model did not reach)."""
    import re

    return re.sub(r"<[^>]+>|[\u2014,=\sTPr]", "", str(value)) != ""


def _z_check(z: float, rho: float, t_k: float, p_pa: float) -> Markup:
    """The substituted real-gas equation, for the reviewer to multiply out."""
    return Markup("P<sub>2</sub> = Z<sub>2</sub> &rho;<sub>m</sub> R T<sub>2</sub> = {} &times; {} mol/m&sup3; "
                  "&times; {} J/(mol&middot;K) &times; {} K = {}").format(
        num(z, 5), sig(rho, 6), R, num(t_k, 2), mpa_abs(p_pa))


def _text(value) -> str | None:
    return None if value is None else str(value)


def _difference_label(label: str) -> str:
    """The unit of a pressure difference in the display unit's scale ('bar(g)' -> 'bar', 'psig' -> 'psi')."""
    for suffix in ("(g)", "(a)"):
        if label.endswith(suffix):
            return label[: -len(suffix)]
    try:
        format_pressure(0.0, label[:-1], 0.0)
    except KeyError:
        return label
    return label[:-1] if label[-1:] in ("g", "a") else label


class _Fmt:
    """The display formatting of one result: pressures, temperatures and differences in its units."""

    def __init__(self, result: dict) -> None:
        units = result.display_units
        self.result = result
        self.p_unit, self.t_unit = pressure_unit(result), units["temperature"]
        self.m_unit = units.get("mass", "kg")
        self.atm = result.site.atmospheric_pressure_pa
        self.p_abs_unit = _absolute_label(self.p_unit)
        self.dp_unit = _difference_label(self.p_unit)
        try:
            format_pressure(0.0, self.dp_unit, 0.0)
        except KeyError:
            self.dp_unit = "kPa"

    def P(self, pa, digits=None):
        return fmt_pressure(self.result, pa, digits)

    def Pabs(self, pa):
        return format_pressure(pa, self.p_abs_unit, self.atm)

    def PP(self, pa):
        if pa is None:
            return "\u2014"
        return self.P(pa) if self.p_abs_unit == self.p_unit else f"{self.P(pa)} = {self.Pabs(pa)}"

    def T(self, k):
        return format_temperature(k, self.t_unit)

    def TK(self, k):
        return "\u2014" if k is None else f"{num(k, 2)} K"

    def TT(self, k):
        """Display temperature and kelvin side by side (one of them when the display unit is K)."""
        if k is None:
            return "\u2014"
        shown = self.T(k)
        return shown if shown.endswith(" K") else f"{shown} = {self.TK(k)}"

    def dP_value(self, dpa: float) -> float:
        """A pressure difference [Pa] in the display unit's scale (no gauge offset)."""
        return pressure_in(dpa, self.dp_unit, self.atm)

    def dP(self, dpa, digits: int = 2):
        return "\u2014" if dpa is None else f"{num(self.dP_value(dpa), digits)} {self.dp_unit}"


def _sci(x: float) -> Markup:
    """A small or large number as m × 10<sup>e</sup> (two significant figures), plain otherwise."""
    import math

    if x == 0:
        return Markup("0")
    exponent = math.floor(math.log10(abs(x)))
    if -3 <= exponent < 4:
        return Markup("{}").format(sig(x, 2))
    mantissa = x / 10 ** exponent
    return Markup("{} &times; 10<sup>{}</sup>").format(f"{mantissa:.1f}", _group(str(exponent)))


def _exposure_view(result: Result, f: _Fmt) -> dict | None:
    """A sun energy balance, as rows a reviewer can add up: the governing scenario's, or where it has none,
    that of the first scenario in the sun (so every balance the screening used can be checked)."""
    b, name = result.exposure, result.governing_scenario
    if not b:
        sunny = [sc for sc in result.scenarios if sc.exposure]
        if not sunny:
            return None
        b, name = sunny[0].exposure, sunny[0].name

    def W(x):
        return _unit(num(x, 2), "W/m\u00b2")

    balance = [
        ("Absorbed sunlight (direct and ground-reflected)", W(b.absorbed_w_m2)),
        ("Carried away by convection", W(b.convected_w_m2)),
        ("Carried away by long-wave radiation", W(b.radiated_w_m2)),
    ]
    closure = None
    if b.residual_fraction is not None:
        closure = Markup("absorbed = convected + radiated: {} = {} + {}; |absorbed &minus; convected &minus; "
                         "radiated| is {} of the largest term").format(
            W(b.absorbed_w_m2), W(b.convected_w_m2), W(b.radiated_w_m2),
            _sci(b.residual_fraction))
    estimated = b.dimensions_estimated
    dims = (f"{num(b.outside_diameter_m, 3)} m \u00d7 {num(b.length_m, 3)} m"
            + (" (estimated from the water capacity)" if estimated else " (as entered)"))
    inputs = [
        ("Solar irradiance", _unit(num(b.irradiance_w_m2, 0), "W/m\u00b2")),
        ("Solar absorptivity of the surface", num(b.absorptivity, 2)),
        ("Long-wave emissivity of the surface", num(b.emissivity, 2)),
        ("Wind speed", _unit(num(b.wind_speed_m_s, 1), "m/s")),
        ("Outside diameter \u00d7 length", dims),
        ("Orientation", _text(b.orientation) or "\u2014"),
        ("Ground albedo (solar reflectance)", num(b.ground_albedo, 2)),
        ("Ambient air temperature", f.TT(b.ambient_k)),
        ("Sky temperature", f.TT(b.sky_temperature_k)),
    ]
    balance.append(("Convection coefficient h", _unit(num(b.h_convection_w_m2k, 3), "W/(m\u00b2\u00b7K)")
                    + (f" ({b.regime} convection)" if b.regime else "")))
    outcome = [("Wall temperature, taken as the gas temperature", f.TT(b.wall_temperature_k))]
    check = None
    tw, ta, h, q = b.wall_temperature_k, b.ambient_k, b.h_convection_w_m2k, b.convected_w_m2
    if None not in (tw, ta, h, q) and tw > ta:
        check = Markup("q<sub>conv</sub> = h (T<sub>w</sub> &minus; T<sub>a</sub>) = {} W/(m&sup2;&middot;K) &times; "
                       "({} K &minus; {} K) = {} W/m&sup2;").format(num(h, 4), num(tw, 2), num(ta, 2), num(q, 2))
    return dict(balance=balance, closure=closure, inputs=inputs, outcome=outcome, check=check,
                notes=[str(n) for n in b.notes],
                scenario=visible(name or ""), governing=(b is result.exposure))


def _scenario_rows(result: Result, f: _Fmt) -> list[dict] | None:
    """One row per scenario, the governing one marked in words; None for a single scenario."""
    scenarios = result.scenarios
    if len(scenarios) < 2:
        return None
    rows = []
    for sc in scenarios_worst_first(result):
        code = str(sc.verdict)
        word = VERDICTS.get(code, dict(mark="?", label=code))
        rows.append(dict(
            name=visible(sc.name), temperature=f.T(sc.worst_case_temperature_k),
            basis=str(sc.worst_case_basis or ""), peak=f.P(sc.peak_pressure_pa),
            margin=format_percent(sc.margin_fraction),
            verdict=f"{word['mark']} {word['label']}", governs=bool(sc.governing),
        ))
    return rows


def tolerance_bands(result: Result) -> str | None:
    """The reading tolerances of a result in one line ("fill pressure ± 6.00 bar, …", the bands it has), for a
    view that has no room for the tolerance section; None where there are none."""
    tol = result.tolerance
    if not tol:
        return None
    f = _Fmt(result)
    bands = [f"fill pressure \u00b1 {f.dP(tol.fill_pressure_band_pa)}" if tol.fill_pressure_band_pa else None,
             f"fill temperature \u00b1 {_unit(num(tol.fill_temperature_band_k, 2), 'K')}"
             if tol.fill_temperature_band_k else None,
             f"gas temperature \u00b1 {_unit(num(tol.gas_temperature_band_k, 2), 'K')}"
             if tol.gas_temperature_band_k else None]
    return ", ".join(b for b in bands if b) or None


def _tolerance_view(result: Result, f: _Fmt) -> dict | None:
    """Nominal against bounding peak, the bands as entered, the bounding corner and the sensitivities."""
    tol = result.tolerance
    if not tol:
        return None
    fill = result.fill
    corner = tol.bounding_corner
    by_mass = fill.pressure_pa is None
    no_reading = "no reading (fill by mass)"
    side = [
        ("Fill pressure", no_reading if by_mass else f.P(fill.pressure_pa),
         no_reading if corner.fill_pressure_pa is None else f.P(corner.fill_pressure_pa)),
        ("Fill temperature", f.T(fill.temperature_k), f.T(corner.fill_temperature_k)),
        ("Worst-case gas temperature", f.T(result.worst_case_temperature_k),
         f.T(corner.worst_case_temperature_k)),
        ("Peak pressure, governing model", f.PP(tol.nominal_peak_pressure_pa),
         f.PP(tol.bounding_peak_pressure_pa)),
    ]
    entered = tol.entered
    bands = [
        ("tolerance.fill_pressure", _text(entered.get("fill_pressure")) or "not given",
         "\u00b1 " + f.dP(tol.fill_pressure_band_pa)),
        ("tolerance.fill_temperature", _text(entered.get("fill_temperature")) or "not given",
         "\u00b1 " + _unit(num(tol.fill_temperature_band_k, 2), "K")),
        ("tolerance.gas_temperature", _text(entered.get("gas_temperature")) or "not given",
         "\u00b1 " + _unit(num(tol.gas_temperature_band_k, 2), "K")),
    ]
    sens = tol.sensitivities

    def per_k(x):
        return "\u2014" if x is None else f"{num(f.dP_value(x), 4)} {f.dp_unit}/K"

    fill_na = " (fill by mass: no fill-pressure reading)" if by_mass else ""
    sensitivities = [
        (Markup("&part;P<sub>peak</sub> / &part;T, worst-case gas temperature"), per_k(sens.dp_peak_dt_gas)),
        (Markup("&part;P<sub>peak</sub> / &part;T<sub>1</sub>, fill temperature at a fixed fill pressure"),
         per_k(sens.dp_peak_dt_fill) + ("" if sens.dp_peak_dt_fill is not None else fill_na)),
        (Markup("&part;P<sub>peak</sub> / &part;P<sub>1</sub>, fill pressure"),
         ("\u2014" if sens.dp_peak_dp_fill is None else f"{num(sens.dp_peak_dp_fill, 4)} (dimensionless)")
         + ("" if sens.dp_peak_dp_fill is not None else fill_na)),
    ]
    n = tol.corners_evaluated
    if tol.expected_corner_confirmed:
        corners = ("The sensitivities of every applicable model have the expected signs (the peak rises with the "
                   "fill pressure and the gas temperature and falls with the fill temperature), so the expected "
                   f"corner \u2014 fill pressure high, fill temperature low, gas temperature high \u2014 is the "
                   f"bounding one; {n} corner{'s' if n != 1 else ''} evaluated.")
    else:
        corners = ("Not every sensitivity has the expected sign, so the expected corner is not taken on trust: "
                   f"all {n} corners of the bands were evaluated and the highest governing peak is the bounding one.")
    check = None
    g, tf, pf = sens.dp_peak_dt_gas, sens.dp_peak_dt_fill, sens.dp_peak_dp_fill
    nominal = tol.nominal_peak_pressure_pa
    if nominal is not None and g is not None:
        terms = [Markup("{}").format(f.Pabs(nominal))]
        if pf is not None and tol.fill_pressure_band_pa:
            terms.append(Markup("{} &times; {}").format(num(pf, 4), f.dP(tol.fill_pressure_band_pa, 2)))
        if tf is not None and tol.fill_temperature_band_k:
            terms.append(Markup("{} {}/K &times; {} K").format(num(abs(f.dP_value(tf)), 4), f.dp_unit,
                                                                  num(tol.fill_temperature_band_k, 2)))
        if tol.gas_temperature_band_k:
            terms.append(Markup("{} {}/K &times; {} K").format(num(f.dP_value(g), 4), f.dp_unit,
                                                                  num(tol.gas_temperature_band_k, 2)))
        check = Markup("First order: P<sub>bound</sub> &asymp; ") + Markup(" + ").join(terms) + Markup(
            "; this should come close to the bounding peak, {} (not equal it: the isochores are not straight)."
        ).format(f.Pabs(tol.bounding_peak_pressure_pa))
    return dict(side=side, bands=bands, sensitivities=sensitivities, corners=corners, check=check,
                bounding_model=model_title(result, str(result.curves.bounding_model if result.curves else None),
                                           none=""))


def _phase_view(result: Result, f: _Fmt, plot_uri: str | None) -> dict | None:
    """Phase diagram (`plot_uri`, from plot.report_plots) and filling-ratio paragraph of a liquefiable or
    condensed fill."""
    if not phase_diagram_wanted(result):
        return None
    fill, vessel, limits = result.fill, result.vessel, result.limits
    ref = result.models["reference"]
    pd = result.phase_diagram
    t_fill, t_wc = fill.temperature_k, result.worst_case_temperature_k
    rows = [
        ("Fill density", _unit(sig(fill.density_kg_m3, 6), "kg/m\u00b3")),
        ("Filling ratio (fill mass per litre of water capacity)", _unit(num(fill.filling_ratio_kg_per_l, 4), "kg/L")),
        ("Largest filling ratio allowed for the vessel",
         "not stated in the case" if vessel.max_filling_ratio_kg_per_l is None
         else _unit(num(vessel.max_filling_ratio_kg_per_l, 4), "kg/L")),
        ("Phase at fill / at the worst case",
         f"{phase_words(result, ref.phase_fill or fill.phase)} / {phase_words(result, ref.phase_peak)}"),
    ]
    if fill.vapour_pressure_pa is not None:
        rows.append(("Vapour pressure at the fill temperature", f.P(fill.vapour_pressure_pa)))
    if pd:
        rows += [
            ("Critical point", f"{f.TT(pd.critical_temperature_k)}, {f.PP(pd.critical_pressure_pa)}"),
            ("Critical density", _unit(sig(pd.critical_density_kg_m3, 5), "kg/m\u00b3")
             + f" = {num((pd.critical_density_kg_m3 or 0.0) / 1000.0, 4)} kg/L"
             if pd.critical_density_kg_m3 is not None else "\u2014"),
        ]
    t_lf, t_do = limits.liquid_full_temperature_k, limits.dry_out_temperature_k
    rows.append(("Liquid-full temperature", "none reported" if t_lf is None else f.TT(t_lf)
                 + (" (at or below the fill temperature)" if t_lf <= t_fill else "")))
    if t_do is not None and t_do >= t_fill:
        rows.append(("Temperature at which the last liquid evaporates", f.TT(t_do)))
    if limits.max_fill_mass_kg is not None:
        rows.append(("Highest fill mass (filling ratio)",
                     f"{format_quantity(limits.max_fill_mass_kg, f.m_unit, 3)} "
                     f"({num(limits.max_filling_ratio_kg_per_l, 4)} kg/L)"))

    paras = []
    ratio = fill.filling_ratio_kg_per_l
    if ratio is not None:
        paras.append(f"The fill is {format_quantity(fill.mass_kg, f.m_unit, 3)} in "
                     f"{format_quantity(vessel.water_capacity_m3, 'L')} of water capacity: a fill density of "
                     f"{sig(fill.density_kg_m3, 5)} kg/m\u00b3, that is a filling ratio of {num(ratio, 4)} kg/L"
                     + ("." if vessel.max_filling_ratio_kg_per_l is None else
                        f", against the vessel's largest allowed filling ratio of "
                        f"{num(vessel.max_filling_ratio_kg_per_l, 4)} kg/L."))
    if t_lf is not None:
        if t_lf > t_fill:
            text = (f"As the contents warm, the liquid expands into the vapour space; at {f.TT(t_lf)}, the "
                    "liquid-full temperature, it fills the whole vessel. Below that temperature the pressure is the "
                    "vapour pressure and climbs slowly; above it no vapour space is left, and the pressure of the "
                    "compressed liquid rises by many bar per kelvin, so a small error in the temperature or in the "
                    "fill mass means a large error in pressure.")
        else:
            text = (f"The fill is denser than the fluid at its critical point. The reported liquid-full temperature, "
                    f"{f.TT(t_lf)}, is at or below the fill temperature: there is no vapour space between the fill "
                    "and the worst case, so no boiling liquid sets the pressure; the isochore of the single dense "
                    "phase does.")
        if t_lf > t_fill:
            text += (" The worst-case temperature is above it." if t_wc >= t_lf
                     else " The worst-case temperature stays below it.")
        paras.append(text)
    elif t_do is not None and t_do >= t_fill:
        paras.append(f"The fill is less dense than at the critical point: on heating the liquid evaporates, the "
                     f"last of it at {f.TT(t_do)}; above that the contents are gas and the pressure rises gently.")
    if limits.max_fill_mass_kg is not None:
        paras.append(f"The highest fill mass for this vessel and worst case is "
                     f"{format_quantity(limits.max_fill_mass_kg, f.m_unit, 3)} (filling ratio "
                     f"{num(limits.max_filling_ratio_kg_per_l, 4)} kg/L), set by "
                     f"{_text(limits.max_fill_mass_basis) or 'the limits of the screening'}.")
    drawable = phase_diagram_drawable(result)
    no_plot = None
    if not drawable:
        no_plot = ("The result carries no vapour-pressure curve for this gas (only a pure fluid has a single "
                   "saturation curve), so no phase diagram is drawn.")
    return dict(rows=rows, row_pairs=[rows[i:i + 2] for i in range(0, len(rows), 2)], paras=paras, plot_uri=plot_uri if drawable else None,
                no_plot=no_plot, liquid_full=liquid_full_marked(result))


def _condensed_note(result: Result) -> str | None:
    """The method section's statement for liquid and two-phase states."""
    ref = result.models["reference"]
    fill_phase = ref.phase_fill or result.fill.phase
    peak_phase = ref.phase_peak
    where = []
    if fill_phase in CONDENSED_PHASES:
        where.append(f"{fill_phase} at fill")
    if peak_phase in CONDENSED_PHASES:
        where.append(f"{peak_phase} at the worst-case temperature")
    if not where:
        return None
    text = ("The contents are " + " and ".join(where) + ". The ideal-gas law and the generalized (Lee\u2013Kesler) "
            "correlation describe a single gas phase only, so they do not apply to a liquid or a liquid\u2013vapour "
            "mixture; ")
    if ref.applicable:
        text += ("the reference equation of state, which covers the liquid, the vapour and the two-phase region, "
                 "governs.")
    else:
        text += "the reference equation of state does not apply either, so no pressure is claimed."
    return text


def _verdict_view(result: Result) -> dict:
    """The verdict's mark, label, line, code and style class."""
    code = result.verdict
    verdict = dict(VERDICTS.get(code, dict(mark="?", label=str(code), line="")))
    verdict["code"] = str(code)
    verdict["css"] = "v-" + (code if code in VERDICTS else "unknown")
    return verdict


def _site_line(result: Result) -> str:
    """Site name, elevation and atmospheric pressure, as one line."""
    site, atm = result.site, result.site.atmospheric_pressure_pa
    parts = []
    if site.name:
        parts.append(visible(site.name))
    if site.elevation_m is not None:
        parts.append(f"elevation {num(site.elevation_m, 0)} m")
    parts.append(f"atmospheric pressure {format_pressure(atm, 'kPa(a)', atm, 2)}")
    return " \u00b7 ".join(parts)


def _key_figures(result: Result, f: _Fmt) -> list[tuple[str, str]]:
    """The key figures under the verdict."""
    P, T = f.P, f.T
    t_peak = result.worst_case_temperature_k
    tol = result.tolerance
    scenarios = result.scenarios
    figures = []
    if len(scenarios) > 1:
        figures.append(("Governing scenario", f"{visible(result.governing_scenario)} (worst of {len(scenarios)})"))
    if _bounding(result):
        figures += [
            ("Peak pressure, bounding the input tolerances", P(result.peak_pressure_pa)),
            ("at gas temperature", f"{T(worst_case_point_temperature(result))} (worst case "
             f"{T(t_peak)} + {num(tol.gas_temperature_band_k, 1)} K; {result.worst_case_basis})"),
            ("Nominal peak pressure", P(tol.nominal_peak_pressure_pa)),
        ]
    else:
        figures += [
            ("Peak pressure", P(result.peak_pressure_pa)),
            ("at gas temperature", f"{T(t_peak)} ({result.worst_case_basis})"),
        ]
    margin, required = percent_pair(result.margin_fraction, result.required_margin_fraction)
    figures += [
        ("Rated pressure", P(result.rated_pressure_pa)),
        ("Margin to rated", margin),
        ("Required margin", required + (" (default)" if result.required_margin_is_default else " (stated in the case)")),
    ]
    if result.relief_set_pressure_pa is not None:
        figures += [
            ("Relief set pressure", P(result.relief_set_pressure_pa)),
            ("Margin to relief set", format_percent(result.relief_margin_fraction)),
        ]
    governing = result.governing_model
    figures.append(("Governing model", model_title(result, governing, short=True)))
    return figures


def _bounding(result: Result) -> bool:
    """Whether the verdict rests on the peak bounding the input tolerances."""
    return result.tolerance is not None and result.tolerance.bounding_peak_pressure_pa is not None


def _input_rows(result: Result) -> list[dict]:
    """The inputs as entered and in SI."""
    return [
        dict(key=visible(row.key), entered=visible(row.entered or ""),
             si="\u2014" if row.si_value is None else sig(row.si_value, 7),
             si_unit=_text(row.si_unit) or "")
        for row in result.inputs
    ]


def _component_rows(result: Result) -> list[dict]:
    """The gas's components."""
    return [
        dict(name=str(c.name), formula=_text(c.formula) or "",
             fraction=num(c.fraction, 4),
             molar_mass=num(c.molar_mass_kg_mol * 1000.0, 4) if c.molar_mass_kg_mol is not None else "\u2014",
             coolprop=_text(c.coolprop_name) or "\u2014")
        for c in result.gas.components
    ]


def _fill_rows(result: Result, f: _Fmt) -> list[tuple[str, str]]:
    """The vessel and its fill."""
    P, T, TK = f.P, f.T, f.TK
    vessel, fill = result.vessel, result.fill
    t_fill = fill.temperature_k
    rows = [
        ("Water capacity", format_quantity(vessel.water_capacity_m3, result.display_units.get("volume", "L"))),
        ("Fill given by", str(fill.given)),
        ("Fill pressure", f"not given (fill by {fill.given})" if fill.pressure_pa is None
         else f"{P(fill.pressure_pa)} = {mpa_abs(fill.pressure_pa)} absolute"),
        ("Fill temperature", f"{T(t_fill)} = {TK(t_fill)}"
         + (" (assumed: none given)" if fill.temperature_given is False else "")),
        ("Fill mass", format_quantity(fill.mass_kg, f.m_unit, 3)),
        ("Mass density at fill", _unit(sig(fill.density_kg_m3, 6), "kg/m\u00b3")),
        (Markup("Molar density at fill, &rho;<sub>m</sub>"), _unit(sig(fill.molar_density_mol_m3, 6), "mol/m\u00b3")),
        ("Filling ratio", _unit(num(fill.filling_ratio_kg_per_l, 4), "kg/L")
         + ("" if vessel.max_filling_ratio_kg_per_l is None
            else f" (largest allowed {num(vessel.max_filling_ratio_kg_per_l, 3)} kg/L)")),
        ("Phase at fill", phase_words(result, fill.phase)),
    ]
    if fill.vapour_pressure_pa is not None:
        rows.append(("Vapour pressure at the fill temperature", P(fill.vapour_pressure_pa)))
    if vessel.rated_pressure_kind:
        rows.insert(1, ("Rated pressure stands for", vessel.rated_pressure_kind))
    return rows


def _model_view(result: Result, name: str, m: ModelResult, f: _Fmt) -> dict:
    """One model's section: every intermediate a reviewer needs, and the substituted equation."""
    t_fill, t_peak = result.fill.temperature_k, result.worst_case_temperature_k
    fill_p = result.fill.pressure_pa
    rows: list[tuple[str, str]] = []
    check = None
    rho = m.fill_molar_density_mol_m3
    peak = m.peak_pressure_pa
    if name == "ideal":
        if rho is not None:
            rows.append((Markup("&rho;<sub>m</sub> = P<sub>1</sub> / (R T<sub>1</sub>)"), _unit(sig(rho, 6), "mol/m\u00b3")))
        if m.equation:
            rows.append(("Equation used", str(m.equation)))
        if m.applicable and peak is not None and fill_p is not None:
            check = Markup("P<sub>2</sub> = P<sub>1</sub> &middot; T<sub>2</sub> / T<sub>1</sub> = "
                           "{} &times; {} K / {} K = {}").format(
                mpa_abs(fill_p), num(t_peak, 2), num(t_fill, 2), mpa_abs(peak))
        elif m.applicable and peak is not None and rho is not None:
            check = Markup("P<sub>2</sub> = &rho;<sub>m</sub> R T<sub>2</sub> = {} mol/m&sup3; &times; {} "
                           "J/(mol&middot;K) &times; {} K = {}").format(sig(rho, 6), R, num(t_peak, 2), mpa_abs(peak))
    elif name == "generalized":
        rows += [
            (Markup("Pseudocritical temperature T<sub>pc</sub>"), f.TK(m.pseudocritical_temperature_k)),
            (Markup("Pseudocritical pressure P<sub>pc</sub>"), mpa_abs(m.pseudocritical_pressure_pa)),
            (Markup("Acentric factor &omega;"), num(m.acentric_factor, 4)),
            (Markup("Molar density used, &rho;<sub>m</sub>"), _unit(sig(rho, 6), "mol/m\u00b3")),
            (Markup("At fill: T<sub>r</sub> = T<sub>1</sub>/T<sub>pc</sub>, P<sub>r</sub> = P<sub>1</sub>/P<sub>pc</sub>"),
             Markup("T<sub>r</sub> = {}, P<sub>r</sub> = {}").format(
                 num(m.reduced_temperature_fill, 4), num(m.reduced_pressure_fill, 4))),
            (Markup("At fill: Z<sub>1</sub>"), num(m.z_fill, 5)),
            (Markup("At peak: T<sub>r</sub> = T<sub>2</sub>/T<sub>pc</sub>, P<sub>r</sub> = P<sub>2</sub>/P<sub>pc</sub>"),
             Markup("T<sub>r</sub> = {}, P<sub>r</sub> = {}").format(
                 num(m.reduced_temperature_peak, 4), num(m.reduced_pressure_peak, 4))),
            (Markup("At peak: Z<sub>2</sub>"), num(m.z_peak, 5)),
            ("Equation used", _text(m.method) or "\u2014"),
            ("Mixing rule", _text(m.mixing_rule) or "\u2014"),
        ]
        if m.applicable and peak is not None and rho is not None and m.z_peak is not None:
            check = _z_check(m.z_peak, rho, t_peak, peak)
    else:
        rows += [
            ("Fluid (CoolProp)", _text(m.fluid) or "\u2014"),
            (Markup("Molar density used, &rho;<sub>m</sub>"), _unit(sig(rho, 6), "mol/m\u00b3")),
            ("Phase at fill / at peak", "\u2014" if m.phase_fill is None and m.phase_peak is None
             else f"{phase_words(result, m.phase_fill)} / {phase_words(result, m.phase_peak)}"),
            (Markup("At fill: Z<sub>1</sub>"), num(m.z_fill, 5)),
            (Markup("At peak: Z<sub>2</sub>"), num(m.z_peak, 5)),
            ("Mixing rule", _text(m.mixing_rule) or "\u2014"),
        ]
        if m.applicable and peak is not None and rho is not None and m.z_peak is not None:
            check = _z_check(m.z_peak, rho, t_peak, peak)
    rows = [(label, value) for label, value in rows if _has_value(value)]
    return dict(
        key=name, title=model_title(result, name),
        applicable=bool(m.applicable),
        governs=(name == result.governing_model), peak=f.P(peak), peak_abs=mpa_abs(peak),
        note=_text(m.note) or "", rows=rows, check=check,
        validity=SRK_VALIDITY if name == "generalized" and m.method else VALIDITY[name],
    )


def _margin_view(result: Result, f: _Fmt) -> tuple[list[tuple[str, str]], str | None]:
    """The margin section's rows and its worked check."""
    atm = result.site.atmospheric_pressure_pa
    margin, required = percent_pair(result.margin_fraction, result.required_margin_fraction)
    rows = [
        ("Peak pressure" + (", bounding the input tolerances" if _bounding(result) else ""),
         f.PP(result.peak_pressure_pa)),
        ("Rated pressure", f.PP(result.rated_pressure_pa)),
        ("Rated \u00d7 (1 \u2212 required margin)", f.P(margin_line_pa(result))),
        ("Margin to rated", margin),
        ("Required margin", required
         + (" (tool default)" if result.required_margin_is_default else " (stated in the case)")),
    ]
    check = None
    if result.peak_pressure_pa is not None and result.margin_fraction is not None:
        check = (f"1 \u2212 {format_pressure(result.peak_pressure_pa, 'MPa(g)', atm, 4)} / "
                 f"{format_pressure(result.rated_pressure_pa, 'MPa(g)', atm, 4)} = "
                 f"{format_percent(result.margin_fraction, 2)}")
    if result.relief_set_pressure_pa is not None:
        rows += [
            ("Relief set pressure", f.PP(result.relief_set_pressure_pa)),
            ("Margin to relief set pressure", format_percent(result.relief_margin_fraction, 2)),
        ]
    else:
        rows.append(("Relief set pressure", "not stated"))
    return rows, check


def _limit_rows(result: Result, f: _Fmt) -> list[tuple[str, str]]:
    """What the vessel allows."""
    P, T = f.P, f.T
    limits, t_fill = result.limits, result.fill.temperature_k
    max_fill_p = limits.max_fill_pressure_pa
    rows = [
        (f"Highest gas temperature ({ceiling_name(result.relief_set_pressure_pa, result.rated_pressure_pa)} "
         "reached)", T(limits.max_gas_temperature_k)),
        (f"Highest fill pressure at {T(t_fill)}",
         "not given (fill by mass)" if max_fill_p is None and result.fill.given == "mass" else P(max_fill_p)),
    ]
    if limits.max_fill_mass_kg is not None:
        rows.append(("Largest fill mass", format_quantity(limits.max_fill_mass_kg, f.m_unit, 3)))
    if limits.target_peak_pressure_pa is not None:
        rows.append(("Peak these limits aim at", P(limits.target_peak_pressure_pa)))
    # Phase-change temperatures matter only on the heating path, from the fill temperature upwards.
    if limits.dry_out_temperature_k is not None and limits.dry_out_temperature_k >= t_fill:
        rows.append(("Temperature at which the last liquid evaporates", T(limits.dry_out_temperature_k)))
    if limits.liquid_full_temperature_k is not None and limits.liquid_full_temperature_k >= t_fill:
        rows.append(("Temperature at which the liquid fills the vessel", T(limits.liquid_full_temperature_k)))
    return rows


def _worst_case_line(result: Result, f: _Fmt, exposure: dict | None, scenario_rows: list | None) -> str:
    """Where the worst-case gas temperature comes from, in one sentence."""
    t_peak = result.worst_case_temperature_k
    if exposure is None or not exposure["governing"]:
        basis = str(result.worst_case_basis)
        return (f"The worst-case gas temperature, {f.T(t_peak)}, is the {basis}"
                + (f" of the governing scenario, \u2018{visible(result.governing_scenario)}\u2019" if scenario_rows else "")
                + (". No sun exposure is modelled for it, so no energy balance is shown."
                   if exposure is None else
                   f". The energy balance below is that of the scenario \u2018{exposure['scenario']}\u2019 "
                   "in the sun, which does not govern."))
    return (f"The worst-case gas temperature, {f.T(t_peak)}, is the {result.worst_case_basis}"
            + (f" of the governing scenario, \u2018{exposure['scenario']}\u2019" if scenario_rows else "")
            + ": the steady wall temperature at which the sunlight absorbed balances the heat "
              "carried away by convection and radiation. The gas is taken at the wall temperature.")


def report_plots(result: Result) -> dict[str, str | None]:
    """The report's plots as data: URIs, drawn from the finished result: ``"isochore"`` (None where no
    model is drawable) and ``"phase"`` (the phase diagram; None where the report shows no phase section
    or the result carries no saturation curve). build_view draws them unless it is handed them;
    screening.cli has them drawn in its screening worker while it imports the layout engine."""
    return {
        "isochore": svg_data_uri(plot_svg(result)) if drawable_models(result) else None,
        "phase": (svg_data_uri(phase_diagram_svg(result))
                  if phase_diagram_wanted(result) and phase_diagram_drawable(result) else None),
    }


def build_view(result: Result, case_text: str, report_date: _dt.date, plots: dict | None = None) -> dict:
    """Everything the template shows, as strings (and lists of strings), from the result; each section
    is built by its own function above. `plots`: the result's plots as plot.report_plots gives them, where
    they were drawn already (in the command's screening worker); drawn here otherwise."""
    if plots is None:
        plots = report_plots(result)
    f = _Fmt(result)
    verdict = _verdict_view(result)
    verdict_code = result.verdict
    doc_id = str(result.input_sha256)[:12]
    governing = result.governing_model
    t_peak = result.worst_case_temperature_k
    gas = result.gas

    key_figures = _key_figures(result, f)
    inputs = _input_rows(result)
    fill_rows = _fill_rows(result, f)
    fill_all = [("Gas", f"{visible(gas.name)} ({gas.kind}); hazards: "
                        f"{', '.join(str(h) for h in gas.hazards) or 'none listed'}")] + fill_rows + [
        ("Worst-case gas temperature", f"{f.T(t_peak)} = {f.TK(t_peak)} ({result.worst_case_basis})")]
    model_views = [_model_view(result, name, result.models[name], f)
                   for name in ("ideal", "generalized", "reference") if name in result.models]
    comparison = [
        dict(title=mv["title"], applicable="yes" if mv["applicable"] else "no", peak=mv["peak"],
             peak_abs=mv["peak_abs"], governs="governs" if mv["governs"] else "")
        for mv in model_views
    ]
    margin_rows, margin_check = _margin_view(result, f)
    eos_refs = [str(x) for x in result.models["reference"].eos_references or ()]

    exposure = _exposure_view(result, f)
    scenario_rows = _scenario_rows(result, f)
    tolerance = _tolerance_view(result, f)
    phase = _phase_view(result, f, plots["phase"])
    order = ["results", "inputs", "exposure"] \
        + (["phase"] if phase else []) + (["tolerance"] if tolerance else [])
    sections = {key: str(i) for i, key in enumerate(order, start=1)}

    created = f"{report_date.isoformat()}T00:00:00Z"
    cautions = result.cautions
    description = None if result.description is None else visible(result.description)
    title = f"Heat-exposure pressure screening \u2014 {result.id}"
    return dict(
        title=title,
        # The <meta> tags carry only text this tool writes; case text is added to the PDF
        # metadata in Python (pdf_metadata), never placed in an HTML attribute.
        meta=dict(
            description=f"Pressure screening: {verdict['label']} ({verdict_code})",
            keywords=", ".join(("pressure screening", f"verdict {verdict_code}", f"document {doc_id}")),
            created=created,
            generator=f"screening {result.tool_version}",
        ),
        pdf_metadata=dict(
            description=f"Pressure screening: {verdict['label']} ({verdict_code}). " + (description or ""),
            keywords=["pressure screening", f"verdict {verdict_code}", f"document {doc_id}",
                      f"case {result.id}", f"gas {gas.name}"],
        ),
        case_id=visible(result.id), description=description, site_line=_site_line(result),
        source=visible(_case_name(result)), report_date=report_date.isoformat(),
        tool_version=str(result.tool_version), doc_id=doc_id, input_sha256=str(result.input_sha256),
        verdict=verdict, reasons=reasons_shown(result), action=action_line(result),
        warnings=[dict(code=str(w.code), message=visible(w.message)) for w in result.warnings],
        key_figures=key_figures,
        key_figure_rows=[key_figures[i:i + 2] for i in range(0, len(key_figures), 2)],
        inputs=inputs,
        input_rows=[inputs[i:i + 3] for i in range(0, len(inputs), 3)],
        fill_pairs=[fill_all[i:i + 2] for i in range(0, len(fill_all), 2)],
        gas=dict(name=str(gas.name), kind=str(gas.kind), hazards=", ".join(str(h) for h in gas.hazards) or "none listed"),
        components=_component_rows(result), fill_rows=fill_rows,
        worst_case=dict(temperature=f"{f.T(t_peak)} = {f.TK(t_peak)}", basis=str(result.worst_case_basis)),
        models=model_views, comparison=comparison,
        governing=dict(title=model_title(result, governing),
                       reason=str(result.governing_reason)),
        margin_rows=margin_rows, margin_check=margin_check,
        limit_rows=_limit_rows(result, f), limits_note=_text(result.limits.note) or "",
        plot_uri=plots["isochore"],
        sections=sections, exposure=exposure, worst_case_line=_worst_case_line(result, f, exposure, scenario_rows),
        scenarios=scenario_rows,
        scenario_tolerance=_bounding(result), tolerance=tolerance, phase=phase, condensed_note=_condensed_note(result),
        governing_scenario=visible(result.governing_scenario or ""),
        p_unit=f.p_unit, t_unit=format_temperature(0.0, f.t_unit).split(" ", 1)[1],
        R=str(R),
        caution=str(cautions.caution), short_caution=str(cautions.short_caution),
        assumptions=[str(a) for a in cautions.assumptions],
        references=_references(result) + eos_refs,
        generalized_srk=bool(result.models.get("generalized") and result.models["generalized"].method),
        eos_refs_given=bool(eos_refs),
        case_text=visible(case_text, keep_newlines=True),
        case_columns=_case_columns(visible(case_text, keep_newlines=True)),
        result_name=_result_name(result),
    )


#: Characters per line of the case file's two columns (DejaVu Sans Mono at 6.8 pt on the page's width).
CASE_COLUMN_WIDTH = 60


def _case_columns(text: str) -> str:
    """The case file as fixed-width text in two side-by-side columns (a plain block the layout may break
    across pages): the first half of the lines on the left, the rest on the right, split at the blank
    line (a new TOML table) nearest the middle; long lines wrap inside their column."""
    import textwrap

    width = CASE_COLUMN_WIDTH
    lines: list[str] = []
    for line in text.rstrip("\n").split("\n"):
        lines += textwrap.wrap(line, width, break_long_words=True, break_on_hyphens=False,
                               drop_whitespace=False, replace_whitespace=False) or [""]
    if len(lines) < 3:
        return "\n".join(lines) + "\n"
    middle = (len(lines) + 1) // 2
    blanks = [i for i, line in enumerate(lines) if not line.strip() and 0 < i < len(lines) - 1]
    cut = min(blanks, key=lambda i: abs(i - middle)) if blanks else middle
    if abs(cut - middle) > len(lines) // 4:
        cut = middle
    left, right = lines[:cut], lines[cut:]
    while right and not right[0].strip():
        right = right[1:]
    rows = max(len(left), len(right))
    left += [""] * (rows - len(left))
    right += [""] * (rows - len(right))
    return "\n".join((a.ljust(width) + "   " + b).rstrip() for a, b in zip(left, right)) + "\n"


def _case_name(result: Result) -> str:
    name = PurePath(str(result.source).replace("\\", "/")).name
    return name or "case.toml"


def _result_name(result: Result) -> str:
    return PurePath(_case_name(result)).stem + ".result.json"


def result_json(result: Result) -> str:
    """The result as the JSON text that travels inside the PDF (stable key order). Its ``source`` is the
    case file's name only: a document sent out carries no folder of the machine it was made on, and its
    bytes do not depend on how the path was typed."""
    shown = result.to_json()
    shown["source"] = _case_name(result)
    return json.dumps(shown, sort_keys=True, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


# ----------------------------------------------------------------------------- rendering

@contextlib.contextmanager
def _source_date_epoch(epoch: int):
    old = os.environ.get("SOURCE_DATE_EPOCH")
    os.environ["SOURCE_DATE_EPOCH"] = str(epoch)
    try:
        yield
    finally:
        if old is None:
            os.environ.pop("SOURCE_DATE_EPOCH", None)
        else:
            os.environ["SOURCE_DATE_EPOCH"] = old


@functools.lru_cache(maxsize=8)
def _report_environment(folder: Path) -> jinja2.Environment:
    """The one-case report's template environment of `folder`, kept: it keeps the compiled template (and
    compiles it again when the file changes)."""
    return _environment(folder)


def _render_html(view: dict, folder: Path) -> str:
    return _report_environment(folder).get_template(TEMPLATE_NAME).render(v=view)


def prepare_layout() -> None:
    """A head start for a command about to write a report, while its result is computed elsewhere:
    compiles the template and lays out a line in the report's fonts, so that the layout engine has read
    its font configuration and the fonts before the report itself is laid out (about 0.08 s). Any
    failure is left for the render itself to raise."""
    import weasyprint

    with contextlib.suppress(Exception):
        _report_environment(templates_dir()).get_template(TEMPLATE_NAME)
        weasyprint.HTML(string='<p style="font-family: \'DejaVu Sans\'">Ab <b>Cd</b> '
                               '<span style="font-family: \'DejaVu Sans Mono\'">Ef</span></p>').render()


def render_html(result: Result, case_text: str, report_date: _dt.date) -> str:
    """The report's HTML (useful for looking at the layout in a browser)."""
    return _render_html(build_view(result, case_text, report_date), templates_dir())


def render_pdf_bytes(result: Result, case_text: str, *, report_date: _dt.date, plots: dict | None = None) -> bytes:
    """The PDF bytes of the report (no file written); `plots` as for build_view."""
    import weasyprint

    folder = templates_dir()
    view = build_view(result, case_text, report_date, plots)
    html_text = _render_html(view, folder)
    stamp = _dt.datetime(report_date.year, report_date.month, report_date.day, tzinfo=_dt.timezone.utc)
    fetcher = _make_fetcher(folder)
    attachments = [
        weasyprint.Attachment(string=case_text.encode("utf-8"), name=_case_name(result),
                              description="Case file as entered", created=stamp, modified=stamp,
                              relationship="Source", url_fetcher=fetcher),
        weasyprint.Attachment(string=result_json(result).encode("utf-8"), name=_result_name(result),
                              description="Screening result (JSON, SI units, absolute pressures)",
                              created=stamp, modified=stamp, relationship="Data", url_fetcher=fetcher),
    ]
    identifier = hashlib.sha256(
        f"{result.input_sha256}|{result.tool_version}|{report_date.isoformat()}".encode()
    ).hexdigest()[:32].encode("ascii")
    from weasyprint.urls import FatalURLFetchingError

    try:
        with _source_date_epoch(int(stamp.timestamp())):
            html = weasyprint.HTML(string=html_text, base_url=str(folder) + os.sep, url_fetcher=fetcher)
            document = html.render()
            document.metadata.description = view["pdf_metadata"]["description"]
            document.metadata.keywords = list(view["pdf_metadata"]["keywords"])
            return document.write_pdf(
                attachments=attachments,
                pdf_identifier=identifier,
                pdf_variant=PDF_VARIANT,
            )
    except FatalURLFetchingError as exc:  # a BaseException in WeasyPrint: turn it into an ordinary error
        cause = exc.__cause__
        raise ReportRenderError(f"{exc}: {cause}" if cause else str(exc)) from cause


def render_report(result: Result, case_text: str, out_path: str | os.PathLike, *, report_date: _dt.date,
                  plots: dict | None = None) -> Path:
    """Write the PDF report of `result` (with `case_text` attached) to `out_path`; return the path.
    `plots`: the result's plots where they were drawn already (plot.report_plots); drawn here otherwise.

    Raises InputError if the target is a directory, its folder is missing or it cannot be written.
    The file appears complete or not at all; an earlier file at `out_path` survives a failed render.
    """
    if not isinstance(report_date, _dt.date):
        raise TypeError("report_date must be a datetime.date")
    if isinstance(report_date, _dt.datetime):
        report_date = report_date.date()
    target = check_target(out_path, "report")
    pdf = render_pdf_bytes(result, case_text, report_date=report_date, plots=plots)
    write_bytes(target, pdf, "report")
    return target
