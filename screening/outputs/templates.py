"""`screening template inventory|case`: a blank inventory and a commented case file to start from.

The two example rows and the case are invented (the demo scenario, Kestrel Quarry): they show the
form, they are not data about any real vessel.
"""

from __future__ import annotations

import csv
import io
import sys
from pathlib import Path

from screening.outputs.files import atomic_writer

#: The inventory's columns: header (with the unit of bare numbers), and the two invented example rows.
INVENTORY = (
    ("id", "KQ-N2-101", "KQ-AR-102"),
    ("description", "Nitrogen purge, workshop rack", "Argon for the welding bay"),
    ("site", "Kestrel Quarry workshop", "Kestrel Quarry workshop"),
    ("gas", "nitrogen", "argon"),
    ("water_capacity [L]", "50", "20"),
    ("rated_pressure [bar(g)]", "300", "200"),
    ("relief_set_pressure [bar(g)]", "", ""),
    ("fill_pressure [bar(g)]", "200", "150"),
    ("fill_temperature [degC]", "15", "15"),
    ("ambient_max [degC]", "45", "45"),
    ("gas_temperature [degC]", "", "60"),
    ("required_margin [%]", "", ""),
    ("location", "rack 2, north wall", "bay 1"),
)

CASE = '''\
# A screening case: one vessel, its fill record and its worst-case exposure.
# Every quantity is text with its unit; pressures say gauge (g) or absolute (a): "200 bar(g)".
# Invented example (the demo scenario, Kestrel Quarry): replace every value with your vessel's.

id = "KQ-N2-101"                       # your name for the vessel (tag, asset number)
description = "Nitrogen purge, workshop rack"

[site]
name = "Kestrel Quarry workshop"
# atmospheric_pressure = "98.5 kPa(a)" # or the elevation; default: standard atmosphere
# elevation = "240 m"

[vessel]
water_capacity = "50 L"                # internal volume (water capacity)
rated_pressure = "300 bar(g)"          # the pressure the vessel is rated for, as marked
# rated_pressure_kind = "test pressure" # what the rating is, as marked
# relief_set_pressure = "330 bar(g)"   # set pressure of a relief device, if fitted
# max_filling_ratio = "0.75 kg/L"      # liquefied gases filled by mass

[fill]
gas = "nitrogen"                       # a gas of the library: run 'screening gases'
pressure = "200 bar(g)"                # fill pressure ...
temperature = "15 degC"                # ... at this gas temperature
# mass = "10.9 kg"                     # liquefied gases: the mass filled, instead of the pressure

[exposure]
ambient_max = "45 degC"                # highest air temperature where the vessel stands
# gas_temperature = "65 degC"          # or the worst-case gas temperature itself
# solar = "sun"                        # in the sun: the energy balance raises the gas temperature
# finish = "red paint"

[criteria]
# required_margin = "10 %"             # margin below the rating required for 'within' (default 10 %)
'''


def inventory_csv() -> str:
    buf = io.StringIO(newline="")
    w = csv.writer(buf)
    for i in range(3):
        w.writerow([c[i] for c in INVENTORY])
    return "\ufeff" + buf.getvalue()


def write_template(kind: str, output: str | None) -> str | None:
    """Write the template to `output` (its suffix chooses CSV or XLSX for an inventory), or print it."""
    if kind == "case":
        if output is None:
            sys.stdout.write(CASE)
            return None
        with atomic_writer(output, "case template") as fh:
            fh.write(CASE)
        return output
    if output is not None and Path(output).suffix.lower() in (".xlsx", ".xlsm"):
        from openpyxl import Workbook
        from openpyxl.styles import Font

        wb = Workbook()
        ws = wb.active
        ws.title = "inventory"
        for i in range(3):
            ws.append([c[i] if i == 0 or not c[i].replace(".", "", 1).isdigit() else float(c[i])
                       for c in INVENTORY])
        for cell in ws[1]:
            cell.font = Font(bold=True)
        ws.freeze_panes = "A2"
        with atomic_writer(output, "inventory template", binary=True) as fh:
            wb.save(fh)
        return output
    if output is None:
        sys.stdout.write(inventory_csv()[1:])
        return None
    with atomic_writer(output, "inventory template") as fh:
        fh.write(inventory_csv())
    return output
