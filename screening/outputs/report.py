"""The PDF report: a view of a finished screening result.

``render_report(result, case_text, out_path, report_date=...)`` formats the result dict into HTML
(Jinja2, autoescaped, strict about undefined names), lays it out with WeasyPrint and writes a PDF
that carries the case file as entered and the JSON result as attachments.

Rules this module keeps:

* It computes no physics. Every number shown comes from the result dict; the only arithmetic is
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
import hashlib
import json
import mimetypes
import os
import tempfile
from pathlib import Path, PurePath
from urllib.parse import unquote, urlsplit
from urllib.request import url2pathname

import jinja2
from markupsafe import Markup

from screening.constants import R
from screening.errors import InputError
from screening.outputs.plot import drawable_models, margin_line_pa, plot_svg, svg_data_uri
from screening.units import format_percent, format_pressure, format_quantity, format_temperature

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

VALIDITY = {
    "ideal": (
        "Shown for comparison. Close to real behaviour only far from the critical point and at low "
        "reduced pressure; at cylinder pressures it can be wrong by tens of percent, in either "
        "direction depending on the gas."
    ),
    "generalized": Markup(
        "Three-parameter corresponding states. The Lee\u2013Kesler tables span reduced temperature "
        "0.3 to 4 and reduced pressure 0 to 10; meant for non-polar and slightly polar gases in a "
        "single phase. Mixtures enter through Kay&rsquo;s rule pseudocritical constants "
        "(T<sub>pc</sub> = \u03a3 y<sub>i</sub> T<sub>c,i</sub>, P<sub>pc</sub> = \u03a3 y<sub>i</sub> P<sub>c,i</sub>). "
        "Quantum gases at low temperature and strongly polar or associating fluids are outside it."
    ),
    "reference": (
        "Multiparameter Helmholtz-energy equation of state of the named fluid, evaluated with "
        "CoolProp, inside the temperature and pressure range its authors state. Where it applies it "
        "is the most accurate model of the three."
    ),
}

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
        format_pressure(101325.0, candidate, 101325.0)
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


def build_view(result: dict, case_text: str, report_date: _dt.date) -> dict:
    """Everything the template shows, as strings (and lists of strings), from the result dict."""
    units = result["display_units"]
    p_unit, t_unit = units["pressure"], units["temperature"]
    v_unit = units.get("volume", "L")
    m_unit = units.get("mass", "kg")
    atm = result["site"]["atmospheric_pressure_pa"]
    p_abs_unit = _absolute_label(p_unit)

    def P(pa):
        return format_pressure(pa, p_unit, atm)

    def Pabs(pa):
        return format_pressure(pa, p_abs_unit, atm)

    def PP(pa):
        """Gauge and absolute side by side (as the display unit's basis allows)."""
        if pa is None:
            return "\u2014"
        return P(pa) if p_abs_unit == p_unit else f"{P(pa)} = {Pabs(pa)}"

    def T(k):
        return format_temperature(k, t_unit)

    def TK(k):
        return "\u2014" if k is None else f"{num(k, 2)} K"

    verdict_code = result["verdict"]
    verdict = dict(VERDICTS.get(verdict_code, dict(mark="?", label=str(verdict_code), line="")))
    verdict["code"] = str(verdict_code)
    verdict["css"] = "v-" + (verdict_code if verdict_code in VERDICTS else "unknown")

    site = result["site"]
    site_parts = []
    if site.get("name"):
        site_parts.append(str(site["name"]))
    if site.get("elevation_m") is not None:
        site_parts.append(f"elevation {num(site['elevation_m'], 0)} m")
    site_parts.append(f"atmospheric pressure {format_pressure(atm, 'kPa(a)', atm, 2)}")

    doc_id = str(result["input_sha256"])[:12]
    models = result["models"]
    governing = result["governing_model"]
    t_fill = result["fill"]["temperature_k"]
    t_peak = result["worst_case_temperature_k"]
    fill = result["fill"]

    # Key figures under the verdict.
    m_line = margin_line_pa(result)
    key_figures = [
        ("Peak pressure (governing model)", P(result["peak_pressure_pa"])),
        ("at worst-case gas temperature", f"{T(t_peak)} ({result['worst_case_basis']})"),
        ("Rated pressure", P(result["rated_pressure_pa"])),
        ("Margin to rated", format_percent(result["margin_fraction"])),
        ("Required margin", format_percent(result["required_margin_fraction"])
         + (" (default)" if result["required_margin_is_default"] else " (stated in the case)")),
    ]
    if result["relief_set_pressure_pa"] is not None:
        key_figures += [
            ("Relief set pressure", P(result["relief_set_pressure_pa"])),
            ("Margin to relief set pressure", format_percent(result["relief_margin_fraction"])),
        ]
    key_figures.append(("Governing model", MODEL_TITLES.get(governing, "none") if governing else "none"))

    inputs = [
        dict(key=str(row["key"]), entered=_text(row["entered"]) or "",
             si="\u2014" if row["si_value"] is None else sig(row["si_value"], 7),
             si_unit=_text(row["si_unit"]) or "")
        for row in result["inputs"]
    ]

    gas = result["gas"]
    components = [
        dict(name=str(c["name"]), formula=_text(c.get("formula")) or "",
             fraction=num(c["fraction"], 4),
             molar_mass=num(c["molar_mass_kg_mol"] * 1000.0, 4) if c.get("molar_mass_kg_mol") is not None else "\u2014",
             coolprop=_text(c.get("coolprop_name")) or "\u2014")
        for c in gas["components"]
    ]

    vessel = result["vessel"]
    fill_rows = [
        ("Water capacity", format_quantity(vessel["water_capacity_m3"], v_unit)),
        ("Fill given by", str(fill["given"])),
        ("Fill pressure", f"not given (fill by {fill['given']})" if fill["pressure_pa"] is None
         else f"{P(fill['pressure_pa'])} = {mpa_abs(fill['pressure_pa'])} absolute"),
        ("Fill temperature", f"{T(t_fill)} = {TK(t_fill)}"
         + (" (assumed: none given)" if fill.get("temperature_given") is False else "")),
        ("Fill mass", format_quantity(fill["mass_kg"], m_unit, 3)),
        ("Mass density at fill", _unit(sig(fill["density_kg_m3"], 6), "kg/m\u00b3")),
        (Markup("Molar density at fill, &rho;<sub>m</sub>"), _unit(sig(fill["molar_density_mol_m3"], 6), "mol/m\u00b3")),
        ("Filling ratio", _unit(num(fill["filling_ratio_kg_per_l"], 4), "kg/L")
         + ("" if vessel.get("max_filling_ratio_kg_per_l") is None
            else f" (largest allowed {num(vessel['max_filling_ratio_kg_per_l'], 3)} kg/L)")),
        ("Phase at fill", _text(fill["phase"]) or "\u2014"),
    ]
    if fill.get("vapour_pressure_pa") is not None:
        fill_rows.append(("Vapour pressure at the fill temperature", P(fill["vapour_pressure_pa"])))
    if vessel.get("rated_pressure_kind"):
        fill_rows.insert(1, ("Rated pressure is the", f"{vessel['rated_pressure_kind']} pressure"))

    # Models: every intermediate a reviewer needs.
    model_views = []
    for name in ("ideal", "generalized", "reference"):
        m = models.get(name)
        if m is None:
            continue
        rows: list[tuple[str, str]] = []
        check = None
        rho = m.get("fill_molar_density_mol_m3")
        peak = m.get("peak_pressure_pa")
        if name == "ideal":
            if rho is not None:
                rows.append((Markup("&rho;<sub>m</sub> = P<sub>1</sub> / (R T<sub>1</sub>)"), _unit(sig(rho, 6), "mol/m\u00b3")))
            if m.get("equation"):
                rows.append(("Equation used", str(m["equation"])))
            if m["applicable"] and peak is not None and fill["pressure_pa"] is not None:
                check = Markup("P<sub>2</sub> = P<sub>1</sub> &middot; T<sub>2</sub> / T<sub>1</sub> = "
                               "{} &times; {} K / {} K = {}").format(
                    mpa_abs(fill["pressure_pa"]), num(t_peak, 2), num(t_fill, 2), mpa_abs(peak))
            elif m["applicable"] and peak is not None and rho is not None:
                check = Markup("P<sub>2</sub> = &rho;<sub>m</sub> R T<sub>2</sub> = {} mol/m&sup3; &times; {} "
                               "J/(mol&middot;K) &times; {} K = {}").format(sig(rho, 6), R, num(t_peak, 2), mpa_abs(peak))
        elif name == "generalized":
            rows += [
                (Markup("Pseudocritical temperature T<sub>pc</sub>"), TK(m.get("pseudocritical_temperature_k"))),
                (Markup("Pseudocritical pressure P<sub>pc</sub>"), mpa_abs(m.get("pseudocritical_pressure_pa"))),
                (Markup("Acentric factor &omega;"), num(m.get("acentric_factor"), 4)),
                (Markup("Molar density used, &rho;<sub>m</sub>"), _unit(sig(rho, 6), "mol/m\u00b3")),
                (Markup("At fill: T<sub>r</sub> = T<sub>1</sub>/T<sub>pc</sub>, P<sub>r</sub> = P<sub>1</sub>/P<sub>pc</sub>"),
                 Markup("T<sub>r</sub> = {}, P<sub>r</sub> = {}").format(
                     num(m.get('reduced_temperature_fill'), 4), num(m.get('reduced_pressure_fill'), 4))),
                (Markup("At fill: Z<sub>1</sub>"), num(m.get("z_fill"), 5)),
                (Markup("At peak: T<sub>r</sub> = T<sub>2</sub>/T<sub>pc</sub>, P<sub>r</sub> = P<sub>2</sub>/P<sub>pc</sub>"),
                 Markup("T<sub>r</sub> = {}, P<sub>r</sub> = {}").format(
                     num(m.get('reduced_temperature_peak'), 4), num(m.get('reduced_pressure_peak'), 4))),
                (Markup("At peak: Z<sub>2</sub>"), num(m.get("z_peak"), 5)),
            ]
            if m["applicable"] and peak is not None and rho is not None and m.get("z_peak") is not None:
                check = _z_check(m["z_peak"], rho, t_peak, peak)
        else:
            rows += [
                ("Fluid (CoolProp)", _text(m.get("fluid")) or "\u2014"),
                (Markup("Molar density used, &rho;<sub>m</sub>"), _unit(sig(rho, 6), "mol/m\u00b3")),
                ("Phase at fill / at peak", "\u2014" if m.get("phase_fill") is None and m.get("phase_peak") is None
                 else f"{_text(m.get('phase_fill')) or '—'} / {_text(m.get('phase_peak')) or '—'}"),
                (Markup("At fill: Z<sub>1</sub>"), num(m.get("z_fill"), 5)),
                (Markup("At peak: Z<sub>2</sub>"), num(m.get("z_peak"), 5)),
            ]
            if m["applicable"] and peak is not None and rho is not None and m.get("z_peak") is not None:
                check = _z_check(m["z_peak"], rho, t_peak, peak)
        rows = [(label, value) for label, value in rows if _has_value(value)]
        model_views.append(dict(
            key=name, title=MODEL_TITLES[name], applicable=bool(m["applicable"]),
            governs=(name == governing), peak=P(peak), peak_abs=mpa_abs(peak),
            note=_text(m.get("note")) or "", rows=rows, check=check, validity=VALIDITY[name],
        ))

    comparison = [
        dict(title=mv["title"], applicable="yes" if mv["applicable"] else "no", peak=mv["peak"],
             peak_abs=mv["peak_abs"], governs="governs" if mv["governs"] else "")
        for mv in model_views
    ]

    # Margin section.
    margin_rows = [
        ("Peak pressure", PP(result['peak_pressure_pa'])),
        ("Rated pressure", PP(result['rated_pressure_pa'])),
        ("Rated \u00d7 (1 \u2212 required margin), on gauge pressure", P(m_line)),
        (Markup("Margin to rated, 1 &minus; P<sub>2,g</sub> / P<sub>rated,g</sub>"), format_percent(result["margin_fraction"], 2)),
        ("Required margin", format_percent(result["required_margin_fraction"], 1)
         + (" (tool default)" if result["required_margin_is_default"] else " (stated in the case)")),
    ]
    margin_check = None
    if result["peak_pressure_pa"] is not None and result["margin_fraction"] is not None:
        margin_check = (f"1 \u2212 {format_pressure(result['peak_pressure_pa'], 'MPa(g)', atm, 4)} / "
                        f"{format_pressure(result['rated_pressure_pa'], 'MPa(g)', atm, 4)} = "
                        f"{format_percent(result['margin_fraction'], 2)}")
    if result["relief_set_pressure_pa"] is not None:
        margin_rows += [
            ("Relief set pressure", PP(result['relief_set_pressure_pa'])),
            ("Margin to relief set pressure", format_percent(result["relief_margin_fraction"], 2)),
        ]
    else:
        margin_rows.append(("Relief set pressure", "not stated"))

    limits = result["limits"]
    max_fill_p = limits.get("max_fill_pressure_pa")
    limit_rows = [
        ("Highest gas temperature", T(limits.get("max_gas_temperature_k"))),
        ("Highest fill pressure at the stated fill temperature",
         "not given (fill by mass)" if max_fill_p is None and fill["given"] == "mass" else P(max_fill_p)),
    ]
    if limits.get("max_fill_mass_kg") is not None:
        limit_rows.append(("Largest fill mass", format_quantity(limits["max_fill_mass_kg"], m_unit, 3)))
    if limits.get("target_peak_pressure_pa") is not None:
        limit_rows.append(("Peak pressure these limits aim at", P(limits["target_peak_pressure_pa"])))
    # Phase-change temperatures matter only on the heating path, from the fill temperature upwards.
    if limits.get("dry_out_temperature_k") is not None and limits["dry_out_temperature_k"] >= t_fill:
        limit_rows.append(("Temperature at which the last liquid evaporates", T(limits["dry_out_temperature_k"])))
    if limits.get("liquid_full_temperature_k") is not None and limits["liquid_full_temperature_k"] >= t_fill:
        limit_rows.append(("Temperature at which the liquid fills the vessel", T(limits["liquid_full_temperature_k"])))

    eos_refs = [str(x) for x in (models.get("reference") or {}).get("eos_references") or []]

    created = f"{report_date.isoformat()}T00:00:00Z"
    cautions = result["cautions"]
    description = _text(result.get("description"))
    title = f"Heat-exposure pressure screening \u2014 {result['id']}"
    return dict(
        title=title,
        # The <meta> tags carry only text this tool writes; case text is added to the PDF
        # metadata in Python (pdf_metadata), never placed in an HTML attribute.
        meta=dict(
            description=f"Pressure screening: {verdict['label']} ({verdict_code})",
            keywords=", ".join(("pressure screening", f"verdict {verdict_code}", f"document {doc_id}")),
            created=created,
            generator=f"screening {result['tool_version']}",
        ),
        pdf_metadata=dict(
            description=f"Pressure screening: {verdict['label']} ({verdict_code}). " + (description or ""),
            keywords=["pressure screening", f"verdict {verdict_code}", f"document {doc_id}",
                      f"case {result['id']}", f"gas {gas['name']}"],
        ),
        case_id=str(result["id"]), description=description, site_line=" \u00b7 ".join(site_parts),
        source=str(result["source"]), report_date=report_date.isoformat(),
        tool_version=str(result["tool_version"]), doc_id=doc_id, input_sha256=str(result["input_sha256"]),
        verdict=verdict, reasons=[str(r) for r in result["reasons"]],
        warnings=[dict(code=str(w["code"]), message=str(w["message"])) for w in result["warnings"]],
        key_figures=key_figures,
        inputs=inputs,
        gas=dict(name=str(gas["name"]), kind=str(gas["kind"]), hazards=", ".join(str(h) for h in gas["hazards"]) or "none listed"),
        components=components, fill_rows=fill_rows,
        worst_case=dict(temperature=f"{T(t_peak)} = {TK(t_peak)}", basis=str(result["worst_case_basis"])),
        models=model_views, comparison=comparison,
        governing=dict(title=MODEL_TITLES.get(governing, "none") if governing else "none",
                       reason=str(result["governing_reason"])),
        margin_rows=margin_rows, margin_check=margin_check,
        limit_rows=limit_rows, limits_note=_text(limits.get("note")) or "",
        plot_uri=svg_data_uri(plot_svg(result)) if drawable_models(result) else None,
        p_unit=p_unit, t_unit=format_temperature(0.0, t_unit).split(" ", 1)[1],
        R=str(R),
        caution=str(cautions["caution"]), short_caution=str(cautions["short_caution"]),
        assumptions=[str(a) for a in cautions["assumptions"]],
        references=list(GENERAL_REFERENCES) + eos_refs,
        eos_refs_given=bool(eos_refs),
        case_text=case_text,
        result_name=_result_name(result),
    )


def _case_name(result: dict) -> str:
    name = PurePath(str(result["source"]).replace("\\", "/")).name
    return name or "case.toml"


def _result_name(result: dict) -> str:
    return PurePath(_case_name(result)).stem + ".result.json"


def result_json(result: dict) -> str:
    """The result as the JSON text that travels inside the PDF (stable key order)."""
    return json.dumps(result, sort_keys=True, indent=2, ensure_ascii=False) + "\n"


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


def _render_html(view: dict, folder: Path) -> str:
    return _environment(folder).get_template(TEMPLATE_NAME).render(v=view)


def render_html(result: dict, case_text: str, report_date: _dt.date) -> str:
    """The report's HTML (useful for looking at the layout in a browser)."""
    return _render_html(build_view(result, case_text, report_date), templates_dir())


def _check_target(out_path: Path) -> Path:
    target = Path(out_path)
    if target.exists() and target.is_dir():
        raise InputError("the report target is a directory", given=str(target), expected="a file path ending in .pdf")
    parent = target.parent if str(target.parent) else Path(".")
    if not parent.exists():
        raise InputError("the folder for the report does not exist", given=str(target))
    if not parent.is_dir():
        raise InputError("the report's folder is not a folder", given=str(target))
    if target.exists() and not os.access(target, os.W_OK):
        raise InputError("the report target is not writable", given=str(target))
    if not os.access(parent, os.W_OK | os.X_OK):
        raise InputError("the report's folder is not writable", given=str(target))
    return target


def render_pdf_bytes(result: dict, case_text: str, *, report_date: _dt.date) -> bytes:
    """The PDF bytes of the report (no file written)."""
    import weasyprint

    folder = templates_dir()
    view = build_view(result, case_text, report_date)
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
        f"{result['input_sha256']}|{result['tool_version']}|{report_date.isoformat()}".encode()
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


def _file_mode(target: Path) -> int:
    """Keep an earlier report's mode; a new file gets 0o666 less the umask, like open() would."""
    with contextlib.suppress(OSError):
        return target.stat().st_mode & 0o777
    mask = os.umask(0)
    os.umask(mask)
    return 0o666 & ~mask


def render_report(result: dict, case_text: str, out_path: str | os.PathLike, *, report_date: _dt.date) -> Path:
    """Write the PDF report of `result` (with `case_text` attached) to `out_path`; return the path.

    Raises InputError if the target is a directory, its folder is missing or it cannot be written.
    The file appears complete or not at all; an earlier file at `out_path` survives a failed render.
    """
    if not isinstance(report_date, _dt.date):
        raise TypeError("report_date must be a datetime.date")
    if isinstance(report_date, _dt.datetime):
        report_date = report_date.date()
    target = _check_target(Path(out_path))
    pdf = render_pdf_bytes(result, case_text, report_date=report_date)
    tmp_name = None
    try:
        try:
            fd, tmp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent or ".")
        except OSError as exc:
            raise InputError(f"cannot write the report: {exc.strerror or exc}", given=str(target)) from None
        with os.fdopen(fd, "wb") as fh:
            fh.write(pdf)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp_name, _file_mode(target))
        try:
            os.replace(tmp_name, target)
        except OSError as exc:
            raise InputError(f"cannot write the report: {exc.strerror or exc}", given=str(target)) from None
        tmp_name = None
    finally:
        if tmp_name is not None:
            with contextlib.suppress(OSError):
                os.unlink(tmp_name)
    return target
