"""Cautions and assumptions: the one place their wording lives.

SAFETY.md, the terminal summary, the JSON result and every report page take their text from here;
a test checks that SAFETY.md still carries it.
"""

#: One line for page headers and footers.
SHORT_CAUTION = (
    "Screening aid only. Does not replace the applicable codes, the vessel's marking and inspection, "
    "or a licensed engineer."
)

#: The boxed caution shown above the results.
CAUTION = (
    "This is a screening aid only. It does not replace the applicable pressure-equipment, gas-cylinder "
    "and transport codes, the vessel's marking and periodic inspection, or review by a licensed engineer. "
    "Fire exposure, corrosion, mechanical damage and relief-device flow are outside the method. "
    "Defer to local codes and licensed practice."
)

#: The assumptions of the method, in plain words.
ASSUMPTIONS = (
    "The vessel is rigid and closed: its volume and the mass of gas in it do not change while it heats.",
    "The gas temperature is uniform and equal to the stated worst-case temperature.",
    "There is no fire exposure, no local heating and no relief-device flow.",
    "The vessel's own strength, corrosion, damage and fatigue are not assessed.",
    "The fill record (gas, water capacity, fill pressure and temperature or fill mass) is correct.",
)


def ceiling_name(relief: float | None, rated: float) -> str:
    """What the limits are solved against, in words: the rated pressure [Pa], or the relief set pressure [Pa]
    where it is lower (above it the relief device opens; screen.limit_ceiling)."""
    return "the relief set pressure" if relief is not None and relief < rated else "the rated pressure"


#: How the limits of a vessel with reading tolerances are found, in words (screen.take_off_tolerances): the
#: limits' note and the terminal summary say it.
TOLERANCES_TAKEN_OFF = ("the reading tolerances are taken off: the limits are solved at the tolerances' bounding "
                        "corner, less the gas-temperature band and the fill-pressure band")
