"""The CSV output's rows as the standard library's csv module writes them (QUOTE_MINIMAL, its excel dialect), byte for
byte: CsvTable joins a row that needs no quoting, or only for its separator, itself and leaves the others to the
module; random rows of texts, numbers and None with every character that calls for quoting (half of the rows without
quotes, line breaks and NULs), for each separator and decimal mark a register uses."""

import csv
import io
import random

import pytest

from screening.outputs.tables import CsvTable

PIECES = ["a", "peak", " ", "12.5", ",", ";", "\t", "|", '"', "\n", "\r", "\r\n", "é", "°C", "%", "", "\0"]
PLAIN = [p for p in PIECES if not any(c in p for c in '"\r\n\0')]


def _value(rnd: random.Random, pieces: list[str]):
    k = rnd.random()
    if k < 0.15:
        return None
    if k < 0.3:
        return rnd.choice([0.0, -0.0, 250.0, 1e16, 3e17, 12.345678, -1.5e-7, float("inf"), float("nan")])
    if k < 0.35:
        return rnd.randint(-5, 10 ** 6)
    return "".join(rnd.choice(pieces) for _ in range(rnd.randint(0, 6)))


@pytest.mark.parametrize("delimiter,decimal", [(",", "."), (";", ","), (";", "."), ("\t", "."), ("|", ",")])
def test_rows_as_the_csv_module_writes_them(delimiter, decimal):
    rnd = random.Random(sum(map(ord, delimiter + decimal)))
    rows = [[rnd.randint(2, 10 ** 6)] + [_value(rnd, pieces) for _ in range(rnd.randint(1, 20))]
            for pieces in [PIECES, PLAIN] * 1500]
    rows += [["a"], [""], [None], ["x", "y"]]
    out = io.StringIO(newline="")
    table = CsvTable(out, ["row", "h"], delimiter, decimal)
    for row in rows:
        table.write(row)
    table.close()
    expected = io.StringIO(newline="")
    expected.write("\ufeff")
    w = csv.writer(expected, delimiter=delimiter)
    w.writerow(["row", "h"])
    for row in rows:        # the texts CsvTable makes of the values (CsvTable._text), written by the module
        w.writerow([v if type(v) is str else table._text(v) for v in row])
    assert out.getvalue() == expected.getvalue()
    texts = ["".join(map(str, row)) for row in rows]
    plain = [t for t in texts if not any(c in t for c in '"\r\n\0')]
    assert sum(1 for t in plain if delimiter not in t) > 100       # rows joined as they are
    assert sum(1 for t in plain if delimiter in t) > 100           # rows joined with a text in quotes
