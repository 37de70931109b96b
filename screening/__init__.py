"""screening: peak-pressure screening of gas cylinders and small rigid pressure vessels.

A screening aid only; see SAFETY.md.
"""

#: The release. Bumped with every change to a result (a number, a verdict, a message of the JSON) or to
#: the bytes of a report for the same case and date: a report names it, and `screening verify` renders
#: the pages again with the version it runs (see DEVELOPERS.md, "Versions").
__version__ = "0.2.0"
