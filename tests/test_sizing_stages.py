"""The stages of the sizing package: documented, typed, and usable on a fixed airplane.

Source: the project's own stage contract (DEVELOPERS.md); the values compared are the
model's own, bit for bit (no published values)."""

from __future__ import annotations

import dataclasses
import inspect
import re
from pathlib import Path

import numpy as np
import pytest

import optimiser.sizing as sizing
from optimiser.study import load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
NAMES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")

STAGES = [sizing.design_batch, sizing.air_states, sizing.clean_drag, sizing.high_lift,
          sizing.cruise_consumption, sizing.closure_inputs, sizing.close_takeoff_mass,
          sizing.mission_fuel, sizing.mass_groups, sizing.installed_propulsion,
          sizing.low_speed_polar, sizing.maintenance_index, sizing.takeoff,
          sizing.oei_climb_gradient, sizing.takeoff_field, sizing.landing,
          sizing.climb_and_ceiling, sizing.cruise_speed, sizing.constraint_margins]


@pytest.mark.parametrize("stage", STAGES, ids=lambda f: f.__name__)
def test_every_stage_documents_each_parameter_with_a_unit_and_names_a_source(stage):
    doc = inspect.getdoc(stage)
    params = doc.split("Parameters\n----------\n")[1].split("Returns\n-------\n")[0]
    for name in inspect.signature(stage).parameters:
        assert re.search(rf"\b{name}\b", params), f"{stage.__name__}: {name} not documented"
    returns = doc.split("Returns\n-------\n")[1]
    assert re.search(r"\[[^\]]+\]", params + returns), f"{stage.__name__}: no [unit]"
    assert "References\n----------\n" in doc, f"{stage.__name__}: no source"
    assert "<lambda>" not in stage.__qualname__ and "<locals>" not in stage.__qualname__


@pytest.mark.parametrize("stage", STAGES, ids=lambda f: f.__name__)
def test_every_stage_returns_a_frozen_slotted_dataclass_or_an_array(stage):
    kind = inspect.get_annotations(stage, eval_str=True)["return"]
    if kind is np.ndarray:
        return
    assert dataclasses.is_dataclass(kind), f"{stage.__name__} returns {kind!r}"
    assert kind.__dataclass_params__.frozen and hasattr(kind, "__slots__")


@pytest.mark.parametrize("name", NAMES)
def test_performance_stages_on_the_sized_airplane_repeat_the_columns_bit_for_bit(name):
    # the stages after the closure need only the airplane and the air states: run again on
    # the airplane size_batch produced, they give the very numbers size_designs returned
    spec = load_study(PROBLEMS / f"{name}.toml").spec
    rng = np.random.default_rng(5)
    ws = rng.uniform(600.0, 3000.0, 30)
    loading = rng.uniform(0.25, 0.45, 30) if spec.propulsion.family == "turbofan" \
        else rng.uniform(40.0, 110.0, 30)
    ar = rng.uniform(6.0, 12.0, 30)
    idx = rng.integers(0, len(spec.high_lift), 30)
    out = sizing.size_designs(spec, ws, loading, ar, idx)
    sized = sizing.size_batch(spec, ws, loading, ar, idx)
    ap, air = sized.airplane, sizing.air_states(spec)
    to = sizing.takeoff(spec, ap, air)
    np.testing.assert_array_equal(to.distance_m, out["takeoff_distance_m"])
    np.testing.assert_array_equal(sizing.landing(spec, ap, air).distance_m,
                                  out["landing_distance_m"])
    np.testing.assert_array_equal(sizing.climb_and_ceiling(spec, ap).service_ceiling_m,
                                  out["service_ceiling_m"])
    st = sized.closure.state
    eta_cruise = sizing.cruise_consumption(spec, {}).propeller_efficiency
    cruise = sizing.cruise_speed(spec, ap, air, eta_cruise, st.fuel.start_cruise_weight_N,
                                 st.induced_drag_factor_cruise)
    np.testing.assert_array_equal(cruise.speed_m_s, out["cruise_speed_m_s"])
