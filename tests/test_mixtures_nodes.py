"""A mixture's isochores are established through shared nodes of a fixed density grid: a node covers only the
states the bound on the two-phase boundary's slope allows, the states it covers are one phase by CoolProp and by
thermo evaluated here, and screenings with nodes give exactly the answers of screenings without them, in any
order, for fewer flashes."""

from __future__ import annotations

import json
import math
import random

import CoolProp.CoolProp as CP
import pytest
from helpers import GAS_TEMPERATURE_CASE as CASE

from screening.engine import screen_text
from screening.physics import mixtures as mix
from screening.physics.eos import reference as ref
from screening.physics.eos.reference import liquefied_blend, reference_fluid

AR_CO2 = "argon 82% + carbon dioxide 18%"
AIR = "nitrogen 79% + oxygen 21%"
NATURAL_GAS = "methane 90% + ethane 6% + nitrogen 4%"

# rows as a batch of the trade has them: cold and hot worst cases, partly used cylinders, fills over the rating
ROWS = [
    (AR_CO2, 262.8, 151.5, -15.7, 14.7), (AR_CO2, 106.2, 72.1, 7.5, 26.0), (AR_CO2, 300.0, 200.0, 15.0, 65.0),
    (AR_CO2, 400.0, 250.0, -20.0, -40.0), (AR_CO2, 200.0, 180.0, 25.0, 10.0), (AR_CO2, 300.0, 20.0, 30.0, 85.0),
    (AIR, 300.0, 200.0, 15.0, 65.0), (AIR, 60.0, 30.0, -10.0, 40.0), (AIR, 310.0, 290.0, 40.0, -40.0),
    (NATURAL_GAS, 300.0, 200.0, 15.0, -30.0), (NATURAL_GAS, 150.0, 100.0, 0.0, 50.0),
]


def _texts() -> list[tuple[str, str]]:
    return [(f"R{i}", CASE.format(name=f"R{i}", gas=g, rated=r, fill=p, t_fill=tf, t_gas=tg))
            for i, (g, r, p, tf, tg) in enumerate(ROWS)]


def _forget_every_fluid() -> None:
    """Drop the cached fluids (and with them their kept answers, isochores and nodes)."""
    reference_fluid.cache_clear()
    liquefied_blend.cache_clear()


def _screen_all(texts: list[tuple[str, str]]) -> dict[str, str]:
    return {name: json.dumps(screen_text(text, source=name).to_json(), sort_keys=True, allow_nan=False)
            for name, text in texts}


def test_a_node_covers_a_state_only_within_the_slope_bound():
    memo = mix.IsochoreMemo()
    memo.record_node(5000.0, 250.0)
    assert memo.covers(5000.0, 250.0 + mix.NEIGHBOUR_MARGIN_K)
    assert not memo.covers(5000.0, 250.0 + 0.5 * mix.NEIGHBOUR_MARGIN_K)
    for d_ln in (0.001, 0.01, 0.03, -0.01, -0.03):
        rho = 5000.0 * math.exp(d_ln)
        edge = 250.0 + mix.NODE_SLOPE_K * abs(d_ln) + mix.NEIGHBOUR_MARGIN_K
        assert memo.covers(rho, edge + 1e-6)
        assert not memo.covers(rho, edge - 0.01)
    # a lower temperature recorded on the same node widens what it covers; a plain isochore is no node
    memo.record_node(5000.0, 240.0)
    assert memo.covers(5000.0 * math.exp(0.01), 240.0 + mix.NODE_SLOPE_K * 0.01 + mix.NEIGHBOUR_MARGIN_K + 1e-6)
    plain = mix.IsochoreMemo()
    plain.record(5000.0, 250.0)
    assert not plain.covers(5000.0 * math.exp(0.001), 300.0)


@pytest.mark.parametrize("depth", mix.NODE_DEPTHS_K)
def test_the_nearest_node_covers_the_isochore_and_its_neighbours_from_the_temperature_asked(depth):
    rnd = random.Random(7)
    for _ in range(300):
        rho, t_need = math.exp(rnd.uniform(math.log(10.0), math.log(30000.0))), rnd.uniform(200.0, 400.0)
        memo = mix.IsochoreMemo()
        memo.record_node(mix.node_density(rho, depth), t_need - mix.ESTABLISH_BELOW_K - depth)
        # what establishing the isochore itself 2 K under t_need covers: itself from there, its neighbours 1 K up
        assert memo.covers(rho, t_need - mix.ESTABLISH_BELOW_K)
        for near in (rho * (1 - mix.NEIGHBOUR_RTOL), rho * (1 + mix.NEIGHBOUR_RTOL)):
            assert memo.covers(near, t_need - mix.ESTABLISH_BELOW_K + mix.NEIGHBOUR_MARGIN_K)
    # the grid is fixed: the same node for every density of a cell, in every process
    assert mix.node_density(1234.5, depth) == mix.node_density(1234.5 * (1 + 1e-9), depth)


def _thermo_phase_count(zs, T, P):
    """Phases at (T, P) by thermo's Peng–Robinson flash with its stability test, built here from chemicals'
    constants and thermo's ChemSep k_ij (independently of the project's cubic route)."""
    from thermo import PRMIX, CEOSGas, CEOSLiquid, ChemicalConstantsPackage, FlashVL, HeatCapacityGas
    from thermo.interaction_parameters import IPDB

    constants = ChemicalConstantsPackage.constants_from_IDs(["argon", "carbon dioxide"])
    kijs = IPDB.get_ip_asymmetric_matrix("ChemSep PR", constants.CASs, "kij")
    kw = dict(Tcs=constants.Tcs, Pcs=constants.Pcs, omegas=constants.omegas, kijs=kijs)
    cp = [HeatCapacityGas(poly_fit=(1.0, 10000.0, [0.0] * 8 + [29.1])) for _ in zs]
    flasher = FlashVL(constants, None, liquid=CEOSLiquid(PRMIX, eos_kwargs=kw, HeatCapacityGases=cp),
                      gas=CEOSGas(PRMIX, eos_kwargs=kw, HeatCapacityGases=cp))
    return flasher.flash(T=T, P=P, zs=zs).phase_count


def test_states_a_node_covers_are_one_phase_by_coolprop_and_thermo():
    _forget_every_fluid()
    fluid = reference_fluid(("Argon", "CarbonDioxide"), (0.82, 0.18))
    heos = "HEOS::Argon[0.82]&CarbonDioxide[0.18]"
    checked = 0
    for rho, t_need in ((9000.0, 275.0), (3000.0, 262.0), (14000.0, 290.0)):
        fluid.establish_isochore(rho, t_need)
        nodes = [(math.exp(ln), t) for ln, t in zip(fluid._memo._node_ln, fluid._memo._node_t)]
        assert nodes, "a node one phase 20-40 K under these temperatures (CoolProp and thermo, below)"
        for rho_node, t_node in nodes:
            for d_ln in (-0.02, 0.0, 0.02):
                r = rho_node * math.exp(d_ln)
                T = t_node + mix.NODE_SLOPE_K * abs(d_ln) + mix.NEIGHBOUR_MARGIN_K + 1e-6
                assert fluid.phase_established(r, T)
                # source: CoolProp's mixture model evaluated here (its density-temperature flash runs a
                # stability analysis): not two-phase
                assert CP.PhaseSI("Dmolar", r, "T", T, heos) != "twophase"
                # source: thermo's Peng–Robinson flash with its stability test at the same (T, p): one phase
                p = CP.PropsSI("P", "Dmolar", r, "T", T, heos)
                assert _thermo_phase_count([0.82, 0.18], T, p) == 1
                checked += 1
    assert checked >= 9


def test_screenings_through_nodes_give_the_answers_without_them_in_any_order(monkeypatch):
    texts = _texts()
    flashes = {"n": 0}
    route = ref.ReferenceFluid._reference_route

    def counted(self, *args):
        flashes["n"] += 1
        return route(self, *args)

    monkeypatch.setattr(ref.ReferenceFluid, "_reference_route", counted)
    monkeypatch.setattr(mix, "NODE_DEPTHS_K", ())
    _forget_every_fluid()
    without = _screen_all(texts)
    flashes_without = flashes["n"]

    monkeypatch.setattr(mix, "NODE_DEPTHS_K", (40.0, 20.0))
    _forget_every_fluid()
    flashes["n"] = 0
    with_nodes = _screen_all(texts)
    flashes_with = flashes["n"]
    _forget_every_fluid()
    reversed_order = _screen_all(texts[::-1])
    _forget_every_fluid()

    assert with_nodes == without
    assert reversed_order == without
    assert flashes_with < flashes_without



def test_no_node_is_made_of_one_route_alone(monkeypatch):
    # the reference route does not answer: the cubic route's one phase establishes the row's own isochore (as
    # before nodes), but no node, which would stand for the states of many rows
    _forget_every_fluid()
    monkeypatch.setattr(ref.ReferenceFluid, "_reference_route",
                        lambda self, rho, p, T, budget: mix.RouteAnswer("reference", None, "did not converge"))
    fluid = reference_fluid(("Nitrogen", "Oxygen"), (0.79, 0.21))
    fluid.establish_isochore(8000.0, 300.0)
    assert fluid._memo._node_ln == []
    assert fluid.phase_established(8000.0, 300.0 - mix.ESTABLISH_BELOW_K)
    _forget_every_fluid()
