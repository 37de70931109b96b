"""The caution wording has one source and reaches every output."""

from pathlib import Path

from screening.cautions import ASSUMPTIONS, CAUTION
from screening.engine import screen_file
from screening.outputs.summary import format_summary

ROOT = Path(__file__).resolve().parent.parent


def test_safety_md_carries_the_caution_and_assumptions():
    text = (ROOT / "SAFETY.md").read_text()
    assert CAUTION in text
    for a in ASSUMPTIONS:
        assert a in text


def test_every_summary_carries_the_caution():
    for case in sorted((ROOT / "cases").glob("*.toml")):
        summary = " ".join(format_summary(screen_file(case)).split())
        assert CAUTION in summary, case.name
