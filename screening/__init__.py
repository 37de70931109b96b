"""screening: peak-pressure screening of gas cylinders and small rigid pressure vessels.

A screening aid only; see SAFETY.md.
"""

__version__ = "0.1.0"
