"""The verdict words, in one place.

A :class:`Verdict` is a ``str`` (its value is the word printed, written to JSON and CSV), so results stay plain
JSON-ready data. Severity orders them for "worst first" listings; the command line maps them to exit codes.

>>> Verdict("low-margin").severity > Verdict.WITHIN.severity
True
>>> worst([Verdict.WITHIN, Verdict.OVER, Verdict.LOW_MARGIN])
<Verdict.OVER: 'over'>
"""

from __future__ import annotations

from enum import StrEnum


class Verdict(StrEnum):
    """What the screening says of one vessel (or, for INPUT_ERROR, of one inventory row)."""

    WITHIN = "within"
    LOW_MARGIN = "low-margin"
    OVER = "over"
    OUT_OF_SCOPE = "out-of-scope"
    INPUT_ERROR = "input-error"

    @property
    def severity(self) -> int:
        """0 for within, rising to 4 for a row that could not be read."""
        return _SEVERITY[self]


_SEVERITY = {Verdict.WITHIN: 0, Verdict.LOW_MARGIN: 1, Verdict.OVER: 2, Verdict.OUT_OF_SCOPE: 3,
             Verdict.INPUT_ERROR: 4}

#: The order of a listing of many vessels, worst first, as the trade reads it: a row that could not be read,
#: then a vessel over its rating, then one that cannot be screened, then too close to the limit, then within.
#: (Between the scenarios of one vessel, `severity` governs: one that cannot be established outweighs one that
#: is over, since nothing is known of it.)
LISTING_ORDER = (Verdict.INPUT_ERROR, Verdict.OVER, Verdict.OUT_OF_SCOPE, Verdict.LOW_MARGIN, Verdict.WITHIN)

#: Exit codes of the commands, the one place they are defined: every vessel within its rating; any other
#: verdict (or a report that does not verify); bad input or an output that cannot be written.
EXIT_WITHIN, EXIT_NOT_WITHIN, EXIT_INPUT = 0, 1, 2

#: The verdicts a screening gives (every one but INPUT_ERROR), least severe first.
SCREENED = (Verdict.WITHIN, Verdict.LOW_MARGIN, Verdict.OVER, Verdict.OUT_OF_SCOPE)


def worst(verdicts) -> Verdict:
    """The most severe of some verdicts (words or Verdict members); WITHIN for none."""
    return max((Verdict(v) for v in verdicts), key=lambda v: v.severity, default=Verdict.WITHIN)
