"""Inputs engineers have for a thermoelectric spot: a fluid temperature behind a pipe wall, and a
measured power curve in place of module constants.

Checks: the fluid-to-surface resistance is the series sum 1/h + t/k over the footprint (Incropera &
DeWitt, ch. 3: plane-wall conduction and convection resistances in series), worked by hand for a
steel pipe carrying hot water; the pipe only ever lowers the power against a surface at the fluid's
temperature; a measured curve is returned exactly at its points, and beyond them follows the ideal
module's square law (Rowe 1995, CRC Handbook of Thermoelectrics: matched-load power S^2 dT^2 / 4R).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from siteharvest.context import SpotContext
from siteharvest.sources.thermoelectric import (
    PipeWall,
    ThermoelectricSource,
    curve_power_w,
    matched_load_power_w,
    thermoelectric_output,
)
from siteharvest.timegrid import reference_index


def ctx(air_c: float = 20.0) -> SpotContext:
    weather = pd.DataFrame({"ghi_w_m2": 0.0, "dni_w_m2": 0.0, "dhi_w_m2": 0.0, "temp_air_c": air_c,
                            "wind_speed_m_s": 0.0}, index=reference_index(1.0))
    return SpotContext(weather, 47.5, 7.6, indoors=True, indoor_air_c=air_c)


def test_pipe_resistance_worked_by_hand():
    # water film 2000 W/m2K, 4 mm carbon steel at 50 W/mK, 30 mm square footprint:
    # (1/2000 + 0.004/50) / 0.0009 = (5e-4 + 8e-5) / 9e-4 = 0.6444 K/W
    pipe = PipeWall(film_w_m2k=2000.0, wall_mm=4.0, wall_conductivity_w_mk=50.0)
    assert pipe.resistance_k_w(0.03**2) == pytest.approx(0.644444, rel=1e-5)
    lagged = PipeWall(film_w_m2k=2000.0, wall_mm=4.0, wall_conductivity_w_mk=50.0, lagging_mm=10.0)
    assert lagged.resistance_k_w(0.03**2) == pytest.approx(0.644444 + 0.010 / 0.04 / 0.0009, rel=1e-5)


def test_the_pipe_lowers_the_power_and_the_surface_sits_between_fluid_and_air():
    bare = ThermoelectricSource(id="t", hot_side=80.0)
    piped = ThermoelectricSource(id="t", hot_side=80.0, pipe={"film_w_m2k": 500.0, "wall_mm": 5.0})
    out_bare, out_pipe = thermoelectric_output(bare, ctx()), thermoelectric_output(piped, ctx())
    assert (out_pipe.power_w < out_bare.power_w).all()
    surface = out_pipe.details["pipe_surface_c"]
    assert (surface < 80.0).all() and (surface > 20.0).all()


def test_a_measured_curve_is_used_exactly_and_extends_as_the_square_law():
    curve = [(10.0, 2.0), (20.0, 7.5), (40.0, 28.0)]  # mW, a module a little below the square law
    np.testing.assert_allclose(curve_power_w(curve, np.array([10.0, 20.0, 40.0])), [2e-3, 7.5e-3, 28e-3])
    assert float(curve_power_w(curve, 80.0)) == pytest.approx(28e-3 * 4)  # beyond: as dT^2
    # an ideal module's own curve gives back the Seebeck law everywhere in between
    s, r = 0.0284, 1.12
    ideal = [(dt, float(matched_load_power_w(s, dt, r)) * 1e3) for dt in (5.0, 50.0)]
    dts = np.array([5.0, 12.5, 33.0, 50.0])
    np.testing.assert_allclose(curve_power_w(ideal, dts), matched_load_power_w(s, dts, r), rtol=1e-12)


def test_the_source_uses_its_curve():
    spec = ThermoelectricSource(id="t", hot_side=70.0, power_curve=[(5.0, 0.5), (50.0, 50.0)])
    out = thermoelectric_output(spec, ctx())
    dt = out.details["delta_t_module_k"]
    np.testing.assert_allclose(out.power_w, curve_power_w(spec.power_curve, dt))
    with pytest.raises(ValueError, match="distinct"):
        ThermoelectricSource(id="t", power_curve=[(5.0, 1.0), (5.0, 2.0)])
