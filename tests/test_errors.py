"""Every project error survives pickling with its message and fields, so an error raised in a worker
process reaches the caller as itself (and a process pool never waits for an answer it cannot read)."""

from __future__ import annotations

import concurrent.futures as cf
import inspect
import pickle

import pytest

from screening import errors
from screening.errors import InputError, NotApplicable, OutputError, ScreeningError, UnknownGas

#: One instance of every class in screening/errors.py, every field set.
EXAMPLES = {
    ScreeningError: ScreeningError("something went wrong"),
    InputError: InputError("not a volume", file="case.toml", key="vessel.water_capacity", row=3,
                           column="water_capacity", given="fifty L", expected="a volume, e.g. '50 L'"),
    UnknownGas: UnknownGas("nitrogn", ["nitrogen", "nitrous oxide"], file="inv.csv", row=7, column="gas"),
    NotApplicable: NotApplicable("reference", "temperature 2000 K is outside the range", value=2000.0,
                                 valid_range="63.151 K to 2000 K"),
    OutputError: OutputError("cannot write the report: No space left on device", file="out/report.pdf",
                             given="out/report.pdf", expected="a folder with room for the file"),
}


def _project_errors() -> list[type]:
    return [c for _, c in inspect.getmembers(errors, inspect.isclass)
            if issubclass(c, BaseException) and c.__module__ == errors.__name__]


def test_every_error_class_of_the_package_has_an_example_here():
    assert set(_project_errors()) == set(EXAMPLES)


@pytest.mark.parametrize("cls", list(EXAMPLES), ids=lambda c: c.__name__)
def test_every_error_round_trips_through_pickle_with_its_message_and_fields(cls):
    exc = EXAMPLES[cls]
    for protocol in range(2, pickle.HIGHEST_PROTOCOL + 1):
        back = pickle.loads(pickle.dumps(exc, protocol=protocol))
        assert type(back) is cls
        assert str(back) == str(exc) and back.args == exc.args
        assert vars(back) == vars(exc)
        assert isinstance(back, ValueError)


def test_a_located_input_error_round_trips_too():
    exc = InputError("not a number", given="x").located(file="inv.csv", row=4, column="fill_pressure")
    back = pickle.loads(pickle.dumps(exc))
    assert str(back) == str(exc) and (back.row, back.column, back.file) == (4, "fill_pressure", "inv.csv")


def _raise_not_applicable(value: float) -> float:
    raise NotApplicable("reference", f"temperature {value!r} K is outside the range", value=value,
                        valid_range="63.151 K to 2000 K")


def _raise_unknown_gas(name: str) -> None:
    raise UnknownGas(name, ["nitrogen"], row=2, column="gas")


def test_errors_raised_in_a_process_pool_worker_come_back_as_themselves():
    with cf.ProcessPoolExecutor(max_workers=1) as pool:
        fut = pool.submit(_raise_not_applicable, 2500.0)
        with pytest.raises(NotApplicable) as exc:
            fut.result(timeout=120)  # a pool that could not read the error back would wait for ever
        assert exc.value.model == "reference" and exc.value.value == 2500.0
        assert exc.value.valid_range == "63.151 K to 2000 K"
        assert str(exc.value) == "reference: temperature 2500.0 K is outside the range"
        fut = pool.submit(_raise_unknown_gas, "nitrogn")
        with pytest.raises(UnknownGas) as gas:
            fut.result(timeout=120)
        assert gas.value.suggestions == ["nitrogen"] and gas.value.row == 2
        assert "unknown gas 'nitrogn'" in str(gas.value)
