"""Every source a user reads can be followed: checked against a source the tests can read, or said
plainly to be not independently checked; no 'from memory' anywhere a user sees."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

import pytest

from screening.outputs.gases_listing import format_library
from screening.physics.gases import citations, library

ROOT = Path(__file__).resolve().parent.parent
DATA = ROOT / "screening" / "physics" / "data"

USER_VISIBLE = [
    DATA / "gases.toml",
    DATA / "finishes.toml",
    ROOT / "screening" / "physics" / "exposure.py",
    ROOT / "screening" / "cautions.py",
    ROOT / "screening" / "outputs" / "report.py",
    ROOT / "screening" / "outputs" / "batch_report.py",
    ROOT / "screening" / "outputs" / "summary.py",
    ROOT / "templates" / "report.html.j2",
    ROOT / "templates" / "batch.html.j2",
    ROOT / "README.md",
    ROOT / "SAFETY.md",
]


@pytest.mark.parametrize("path", USER_VISIBLE, ids=[p.name for p in USER_VISIBLE])
def test_no_source_is_quoted_from_memory(path):
    assert not re.search(r"from memory", path.read_text(encoding="utf-8"), re.IGNORECASE)


def test_gas_listing_says_nothing_from_memory_and_shows_no_bare_key():
    text = format_library()
    assert "memory" not in text.lower()
    assert "bibliography key" not in text


def test_every_finish_names_its_source_and_whether_it_was_checked():
    finishes = tomllib.loads((DATA / "finishes.toml").read_text(encoding="utf-8"))["finish"]
    for key, row in finishes.items():
        # author, year and title of the source, and the plain statement that no copy was read here
        assert re.search(r"\(\d{4}\)", row["source"]), key
        assert "not independently checked" in row["source"], key


def test_acetylene_critical_constants_cite_the_part_of_the_iupac_series_chemicals_names():
    from chemicals import critical

    cite = citations()["chemicals-IUPAC"]
    # chemicals 1.5.2: its IUPAC table gives the reference number of each row; acetylene is row 6 of
    # the series, which chemicals.critical.Tc's docstring cites as Tsonopoulos & Ambrose (1996), part 6.
    row = critical.critical_data_IUPAC.loc["74-86-2"]
    assert int(row["Reference"]) == 6
    doc = critical.Tc.__doc__
    entry = doc[doc.index(".. [6]"):doc.index(".. [7]")]
    assert "Unsaturated Aliphatic" in entry and "je9501999" in entry
    assert "Unsaturated Aliphatic Hydrocarbons" in cite and "10.1021/je9501999" in cite
    gas = library()["acetylene"]
    # chemicals 1.5.2, method 'IUPAC': Tc 308.3 K, Pc 6.138 MPa
    assert gas.critical_temperature == pytest.approx(critical.Tc("74-86-2", method="IUPAC"), rel=1e-9)
    assert gas.critical_pressure == pytest.approx(critical.Pc("74-86-2", method="IUPAC"), rel=1e-9)


def test_ammonia_flammability_range_is_the_one_iec_60079_20_1_tabulates():
    from chemicals import safety

    note = library()["ammonia"].note
    # IEC 60079-20-1 (2010) as tabulated in chemicals 1.5.2: LFL 0.15, UFL 0.336 (volume fractions in air)
    lfl = safety.LFL(CASRN="7664-41-7", method="IEC 60079-20-1 (2010)")
    ufl = safety.UFL(CASRN="7664-41-7", method="IEC 60079-20-1 (2010)")
    assert f"{100 * lfl:g} %" in note and f"{100 * ufl:g} %" in note


def test_gas_constant_is_codata_2018():
    import scipy.constants

    from screening.constants import R

    # CODATA 2018 (Tiesinga et al. 2021) prints R = 8.314 462 618... J/(mol K), exact as N_A k;
    # scipy.constants carries N_A k = 8.31446261815324: the printed digits agree to 2e-11
    assert R == 8.314462618
    assert R == pytest.approx(scipy.constants.N_A * scipy.constants.k, rel=1e-10)
    assert "CODATA 2018" in citations()["derived-Zc"]


def test_unchecked_constants_say_so():
    for key in ("gcp-quantum", "hazards"):
        assert "not independently checked" in citations()[key].lower(), key


def test_oxygen_reference_cites_both_papers_and_no_bare_key():
    from screening.physics.eos.reference import _citation

    # CoolProp's BibTeX-EOS of oxygen names two keys; each is resolved in CoolProp's bibliography
    text = _citation("Schmidt-FPE-1985,Stewart-JPCRD-1991")
    assert "bibliography key" not in text
    assert "Schmidt" in text and "Stewart" in text and "1985" in text and "1991" in text
