"""The compiled property helpers of the key figures, and the figures' structure cache.

`condensing_enthalpy` (h' at a steam pressure, for the live-steam heat) and
`liquid_temperature` (T of liquid water from its enthalpy, for mixed
condensate temperatures) are compiled CasADi functions a sweep calls for
every case; they are checked here against CoolProp's IAPWS-IF97 backend.
"""

from __future__ import annotations

import os

import pytest
from scipy.optimize import brentq

CP = pytest.importorskip("CoolProp.CoolProp")

from balance.analysis import key_figures as kf  # noqa: E402
from balance.analysis.energy_figures import _mixed_temperature, liquid_temperature  # noqa: E402
from balance.flowsheet.file_format import load  # noqa: E402
from balance.solve.result import StreamResult  # noqa: E402
from balance.solve.solver import Solver  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
DEMO = os.path.join(HERE, "..", "flowsheets", "skim_milk_3_effect_forward.toml")


@pytest.mark.parametrize("pressure", [2.0e3, 1.5e4, 5.0e4, 101325.0, 2.0e5, 6.0e5])
def test_condensing_enthalpy_is_iapws_if97_saturated_liquid(pressure):
    # CoolProp IF97 backend, saturated liquid (Q = 0) at the pressure. Both evaluate the same IF97
    # equations (saturation line, region 1), so they agree to round-off; 1e-9 relative allows for it.
    expected = CP.PropsSI("H", "P", pressure, "Q", 0, "IF97::Water")
    assert kf.condensing_enthalpy(pressure) == pytest.approx(expected, rel=1e-9)


@pytest.mark.parametrize("temperature", [280.0, 320.0, 350.0, 373.15, 400.0, 430.0])
@pytest.mark.parametrize("offset", [-10.0, 0.0, 10.0])
def test_liquid_temperature_inverts_iapws_if97_liquid_enthalpy(temperature, offset):
    # CoolProp IF97 backend: saturated liquid enthalpy at the temperature. Our liquid enthalpy is IF97
    # region 1 at saturation (the same equations), so the inverse must return the temperature to the
    # Newton tolerance; 1e-7 K is far below any accuracy the figure needs.
    h = CP.PropsSI("H", "T", temperature, "Q", 0, "IF97::Water")
    assert liquid_temperature(h, temperature + offset) == pytest.approx(temperature, abs=1e-7)


def test_mixed_condensate_temperature_from_iapws_if97():
    # two condensate streams, 1 kg/s at 60 °C and 3 kg/s at 100 °C, mixed adiabatically: the mix has
    # the flow-weighted enthalpy; its temperature from CoolProp IF97 (saturated liquid) by root finding
    h_cold = CP.PropsSI("H", "T", 333.15, "Q", 0, "IF97::Water")
    h_hot = CP.PropsSI("H", "T", 373.15, "Q", 0, "IF97::Water")
    h_mix = (1.0 * h_cold + 3.0 * h_hot) / 4.0
    expected = brentq(lambda t: CP.PropsSI("H", "T", t, "Q", 0, "IF97::Water") - h_mix, 330.0, 380.0, xtol=1e-10)
    streams = [StreamResult("c1", "water", "a", "b", {"flow": 1.0, "temperature": 333.15}, h_cold, h_cold,
                            1.0, 0.0, 0.0),
               StreamResult("c2", "water", "a", "b", {"flow": 3.0, "temperature": 373.15}, h_hot, 3.0 * h_hot,
                            3.0, 0.0, 0.0)]
    assert _mixed_temperature(streams) == pytest.approx(expected, abs=1e-6)
    # no flow: no temperature, never a made-up number
    streams[0].values["flow"] = streams[1].values["flow"] = 0.0
    assert _mixed_temperature(streams) != _mixed_temperature(streams)   # NaN


def test_structure_cache_reads_a_rewired_solution_again():
    # the live steam is what flows from steam supplies (key_figures' definition): a stream whose
    # source is no longer a steam supply must drop out of it, though the flowsheet object is the same
    solution = Solver(load(DEMO)).solve()
    assert solution.converged
    before = {f.name: f.value for f in kf.evaporation_figures(solution)}
    supply = next(n for n, u in solution.units.items() if u.type_name == "steam_supply")
    feed = next(n for n, u in solution.units.items() if u.type_name not in ("steam_supply",)
                and solution.flowsheet.unit(n).boundary == "source")
    steam = [s for s in solution.streams.values() if s.source == supply]
    assert steam and before["live_steam"] == pytest.approx(sum(s.values["flow"] for s in steam), rel=1e-12)
    for s in steam:
        s.source = feed
    after = {f.name: f.value for f in kf.evaporation_figures(solution)}
    assert after["live_steam"] == 0.0
