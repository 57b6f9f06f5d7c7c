"""Sensitivities of a design (``optimiser sensitivity``).

Sources: central differences (Press et al., "Numerical Recipes", 3rd ed., 2007, sec. 5.7,
from memory); the stall margin of this model is 1 - V_s / V_s,max with V_s = sqrt(2 W /
(rho S CL_max)) (Anderson, "Introduction to Flight", from memory), so at fixed wing loading
its central difference in the limit V is V_s / (V^2 - h^2) exactly.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import optimiser
from optimiser.cli import main
from optimiser.sensitivity import (REQUIREMENTS, _design_arrays, _with, assumption_inputs,
                                   sensitivities)
from optimiser.sizing import size_designs
from optimiser.study import bundled_study_path, load_study

NAMES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")


def _design(study):
    return {"wing_loading_N_m2": 0.6 * study.variables[0].lower + 0.4 * study.variables[0].upper,
            study.loading_column: 0.5 * (study.variables[1].lower + study.variables[1].upper),
            "aspect_ratio": 0.5 * (study.variables[2].lower + study.variables[2].upper),
            "flap": study.flaps[-1]}


@pytest.mark.parametrize("name", NAMES)
def test_batched_differences_equal_one_call_per_input(name):
    """The one batched call gives, for every assumption, the same numbers as sizing the two
    perturbed copies on their own (a slow loop, one call per input and sign)."""
    study = load_study(bundled_study_path(name))
    design = _design(study)
    table = sensitivities(study, design, 0.01)
    for label, key, value, _ in assumption_inputs(study.spec):
        got = []
        for sign in (-1.0, 1.0):
            out = size_designs(study.spec, *_design_arrays(study, design, 1),
                               overrides={key: np.array([value * (1 + sign * 0.01)])})
            got.append(float(out["trip_fuel_kg"][0]))
        row = table[(table["input"] == label) & (table["output"] == "trip_fuel_kg")].iloc[0]
        assert row["derivative"] == pytest.approx((got[1] - got[0]) / (0.02 * value),
                                                  rel=1e-9, abs=1e-12)
    for label, section, field, _, absolute in REQUIREMENTS[:3]:
        v = float(getattr(getattr(study.spec, section), field))
        h = absolute if absolute is not None else 0.01 * v
        ends = [float(size_designs(_with(study.spec, section, field, v + s * h),
                                   *_design_arrays(study, design, 1))["margin_takeoff_field"][0])
                for s in (-1.0, 1.0)]
        row = table[(table["input"] == label)
                    & (table["output"] == "margin_takeoff_field")].iloc[0]
        assert row["derivative"] == pytest.approx((ends[1] - ends[0]) / (2 * h), rel=1e-9)


def test_stall_margin_derivative_matches_its_closed_form():
    study = load_study(bundled_study_path())
    design = _design(study)
    table = sensitivities(study, design, 0.01)
    out = size_designs(study.spec, *_design_arrays(study, design, 1))
    vs = float(out["stall_speed_m_s"][0])
    v = study.spec.requirements.stall_speed_m_s
    h = 0.01 * v
    row = table[(table["input"] == "stall speed limit")
                & (table["output"] == "margin_stall_speed")].iloc[0]
    assert row["derivative"] == pytest.approx(vs / (v * v - h * h), rel=1e-9)
    # the stall speed at fixed wing loading does not follow the design range
    row = table[(table["input"] == "design range")
                & (table["output"] == "margin_stall_speed")].iloc[0]
    assert row["derivative"] == 0.0


@pytest.mark.parametrize("name", NAMES)
def test_more_drag_and_a_heavier_structure_cost_fuel(name):
    study = load_study(bundled_study_path(name))
    table = sensitivities(study, _design(study), 0.01)
    trip = table[table["output"] == "trip_fuel_kg"].set_index("input")
    cd0 = "clean CD0" if "clean CD0" in trip.index else "CD0 build-up factor"
    assert trip.loc[cd0, "change_plus"] > 0 > trip.loc[cd0, "change_minus"]
    assert trip.loc["empty-mass factor", "derivative"] > 0
    assert trip.loc["design range", "derivative"] > 0


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory):
    out = tmp_path_factory.mktemp("sens") / "run"
    optimiser.optimise(load_study(bundled_study_path()), out=out, seed=2, population=48,
                       generations=6)
    return out


def test_command_writes_the_table_and_the_chart(run_dir, capsys):
    assert main(["sensitivity", str(run_dir), "--row", "1"]) == 0
    folder = run_dir / "sensitivity-row-1"
    table = pd.read_csv(folder / "sensitivities.csv")
    assert {"input", "output", "derivative", "change_minus", "change_plus"} <= set(table)
    assert (folder / "tornado.png").stat().st_size > 10_000
    assert "<svg" in (folder / "tornado.svg").read_text()
    text = capsys.readouterr().out
    assert "Conceptual-design estimates only" in text
    # a second time without --force is refused, the first result kept
    before = (folder / "sensitivities.csv").read_bytes()
    assert main(["sensitivity", str(run_dir), "--row", "1"]) == 2
    assert (folder / "sensitivities.csv").read_bytes() == before


@pytest.mark.parametrize("words, needle", [(["--row", "0"], "--row: got 0"),
                                           (["--step", "0.5"], "--step: got 0.5")])
def test_bad_options_are_one_line_errors(run_dir, capsys, words, needle):
    assert main(["sensitivity", str(run_dir), "--out", str(run_dir / "x"), *words]) == 2
    err = capsys.readouterr().err
    assert needle in err and len(err.strip().splitlines()) == 1
    assert not (run_dir / "x").exists()


def test_requirement_prices_on_the_runs_designs(run_dir, capsys):
    """The nominal best of each objective over the archive is the front's own best (the
    front is the archive's feasible non-dominated set, re-sized bit for bit); a longer
    takeoff field never needs a bigger engine (the feasible set only grows), and a hotter
    airfield never allows a smaller one."""
    from optimiser.runfolder import load_run
    from optimiser.sensitivity import requirement_prices
    run = load_run(run_dir)
    table = requirement_prices(run.study, run_dir, 0.05).set_index("requirement")
    front = run.front
    assert (table["best_trip_fuel_kg_nominal"] == front["trip_fuel_kg"].min()).all()
    assert (table["best_engine_power_kW_nominal"] == front["engine_power_kW"].min()).all()
    assert table.loc["takeoff field length", "price_engine_power_kW"] <= 0.0
    assert table.loc["departure temperature offset", "price_engine_power_kW"] >= 0.0
    assert table.loc["takeoff field length", "step"] == pytest.approx(
        0.05 * run.study.spec.departure.field_length_m, rel=1e-12)
    assert main(["sensitivity", str(run_dir), "--front"]) == 0
    assert (run_dir / "sensitivity-front" / "requirement_prices.csv").is_file()
    assert main(["sensitivity", str(run_dir), "--front", "--row", "2"]) == 2


def test_us_units_convert_the_printed_prices_exactly(run_dir, capsys):
    """kg/m in lb/ft: times 0.3048 / 0.45359237 (1 ft = 0.3048 m, 1 lb = 0.45359237 kg,
    exact by the 1959 international yard and pound agreement, from memory); the CSV stays
    SI."""
    import re as _re
    assert main(["--units", "us", "sensitivity", str(run_dir), "--front", "--out",
                 str(run_dir / "us-prices")]) == 0
    text = capsys.readouterr().out
    line = next(x for x in text.splitlines() if x.strip().startswith("takeoff field length"))
    shown = float(_re.search(r"([+-][0-9.e+-]+) lb/ft", line).group(1))
    table = pd.read_csv(run_dir / "us-prices" / "requirement_prices.csv")
    si = float(table.loc[table["requirement"] == "takeoff field length",
                         "price_trip_fuel_kg"].iloc[0])
    assert si < 0  # the field length binds this front: a longer one saves fuel
    assert shown == pytest.approx(si * 0.3048 / 0.45359237, rel=1e-3)


def test_requirement_prices_in_us_units_use_the_tornado_units():
    # a price of 2 kg of trip fuel per m/s of climb rate is 2 / 0.45359237 lb per
    # (60 / 0.3048) ft/min = 0.0224 lb/(ft/min); 2e-4 kg/m of range is
    # 2e-4 x 1852 / 0.45359237 = 0.8166 lb/nmi (exact definitions, NIST SP 811 App. B)
    from optimiser import display_units as du
    from optimiser.cli_sensitivity import _price_text
    climb = {"requirement": "climb rate", "unit": "m/s", "price_trip_fuel_kg": 2.0}
    reach = {"requirement": "design range", "unit": "m", "price_trip_fuel_kg": 2e-4}
    with du.using("us"):
        assert _price_text(climb, "trip_fuel_kg") == f"{2.0 / 0.45359237 / (60 / 0.3048):+.4g} lb/ft/min"
        assert _price_text(reach, "trip_fuel_kg") == f"{2e-4 * 1852 / 0.45359237:+.4g} lb/nmi"
    assert _price_text(climb, "trip_fuel_kg") == "+2 kg/m/s"
