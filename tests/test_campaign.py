"""Campaigns: campaign files, study texts per combination, picking, price arithmetic, a small
campaign on a Dask LocalCluster of 2 workers, and resume after an interruption.

Sources of the expected values: the price of a requirement is a finite difference along a sweep
axis, checked against the same difference worked by hand here (definition); the epsilon-
constraint picking rule follows Haimes, Lasdon & Wismer (1971) (from memory); the weighted-sum
rule and the expected signs of the prices (a shorter field needs more engine, a faster cruise
more fuel) are common practice."""

import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optimiser.campaign import price_table, run_campaign
from optimiser.campaign_file import load_campaign, pick_compromise, toml_text
from optimiser.errors import CampaignError
from optimiser.evaluation import CAUTION, evaluate
from optimiser.report.campaign_plots import plot_campaign
from optimiser.study import load_study, parse_study

try:
    import tomllib
except ModuleNotFoundError:  # pragma: no cover
    import tomli as tomllib

ROOT = Path(__file__).resolve().parent.parent
STUDIES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")

SMALL = """name = "small"
base_study = "{base}"
[budget]
population = 16
generations = 3
seed = 3
[[axis]]
key = "departure.field_length"
values = ["600 m", "900 m"]
tighter = "smaller"
also = ["destination.field_length"]
[[axis]]
key = "variables.flaps"
values = [["fowler"], ["single_slotted", "fowler"]]
"""


def _small(tmp_path, text=SMALL):
    path = tmp_path / "small.campaign.toml"
    path.write_text(text.format(base=(ROOT / "problems" / "high_strip_utility.toml").as_posix()),
                    encoding="utf-8")
    return path


@pytest.mark.parametrize("name", STUDIES)
def test_study_text_round_trip_keeps_the_study(name):
    study = load_study(ROOT / "problems" / f"{name}.toml")
    again = parse_study(toml_text(tomllib.loads(study.text)), "x")
    assert repr(again.spec) == repr(study.spec) and again.flaps == study.flaps  # nan-safe
    assert again.variables == study.variables


def test_example_campaign_is_valid_and_every_combination_is_a_complete_study():
    c = load_campaign(ROOT / "problems" / "strip_requirements.campaign.toml")
    assert len(c.combinations) == 5 * 3
    first = parse_study(c.combinations[0].study_text, "first")
    assert first.spec.departure.field_length_m == pytest.approx(500.0)
    assert first.spec.destination.field_length_m == pytest.approx(500.0)
    assert first.spec.mission.cruise_speed_m_s == pytest.approx(60.0)
    assert first.search == {"population": 60, "generations": 30, "seed": 1}
    assert c.axes[0].numbers == (500.0, 600.0, 700.0, 800.0, 900.0) and c.axes[0].unit == "m"


@pytest.mark.parametrize("change,message", [
    (("tighter = \"smaller\"", "tighter = \"shorter\""), "tighter: got 'shorter'"),
    (("\"600 m\", \"900 m\"", "\"600 kg\", \"900 kg\""),
     "combination 001_field_length-600kg"),
    (("key = \"departure.field_length\"", "key = \"departure\""), "key: got 'departure'"),
    (("population = 16", "population = 2"), "[budget] population: got 2"),
    (("seed = 3", "seed = 3\nspeed = 1"), "unknown key 'speed'"),
    (("[\"fowler\"], [", "[\"fowler\"], [\"fowler\"], ["), None),
])
def test_bad_campaign_files_are_one_line(tmp_path, change, message):
    text = SMALL.replace(*change)
    if message is None:  # a duplicated flap list is fine; a duplicated value is not
        text = SMALL.replace("[\"fowler\"], [", "[\"fowler\"], [\"fowler\"], [")
        message = "expected each value once"
    with pytest.raises(CampaignError, match=message.replace("[", r"\[")) as exc:
        load_campaign(_small(tmp_path, text))
    assert "\n" not in str(exc.value)


def test_cli_refuses_a_bad_campaign_with_status_2_and_writes_nothing(tmp_path):
    path = _small(tmp_path, SMALL.replace("\"600 m\", \"900 m\"", "\"600 kg\", \"900 kg\""))
    out = tmp_path / "out"
    done = subprocess.run([sys.executable, "-m", "optimiser", "sweep", str(path), "--out",
                           str(out), "--serial"], capture_output=True, text=True)
    assert done.returncode == 2
    assert len(done.stderr.strip().splitlines()) == 1 and "Traceback" not in done.stderr
    assert "[departure] field_length" in done.stderr
    assert not out.exists()


def test_picking_rules_on_a_known_front():
    front = pd.DataFrame({"trip_fuel_kg": [100.0, 110.0, 130.0, 160.0],
                          "engine_power_kW": [300.0, 250.0, 215.0, 200.0],
                          "maintenance_index": [4.0, 3.0, 2.0, 1.0]})
    objectives = ("trip_fuel_kg", "engine_power_kW", "maintenance_index")
    near = {"rule": "lowest_trip_fuel_near_smallest_engine", "engine_size_within_percent": 10}
    # smallest engine 200 kW; within 10 %: 215 and 200 kW; lowest trip fuel among them: row 2
    assert pick_compromise(front, near, "engine_power_kW", objectives) == 2
    near0 = dict(near, engine_size_within_percent=0)
    assert pick_compromise(front, near0, "engine_power_kW", objectives) == 3
    # normalised scores: trip (0, 1/6, 1/2, 1), engine (1, 0.5, 0.15, 0); equal weights give
    # 1, 0.667, 0.65, 1 -> row 2; trip fuel alone -> row 0
    w = {"rule": "weighted_sum", "weights": {"trip_fuel": 1.0, "engine_size": 1.0}}
    assert pick_compromise(front, w, "engine_power_kW", objectives) == 2
    w1 = {"rule": "weighted_sum", "weights": {"trip_fuel": 1.0}}
    assert pick_compromise(front, w1, "engine_power_kW", objectives) == 0
    assert pick_compromise(front.iloc[:0], near, "engine_power_kW", objectives) is None


KNOWN_TRIP = [300.0, 310.0, 250.0, 262.0, 220.0, 230.0]
KNOWN_POWER = [400.0, 420.0, 330.0, 340.0, 300.0, 300.0]
"""Picked trip fuel [kg] and engine power [kW] per combination of :func:`_three_fields`
(invented values, in combination order: field length slowest, flaps fastest)."""


def _three_fields(tmp_path):
    """The small campaign with three field lengths (500, 700, 900 m) by two flap settings."""
    text = SMALL.replace("[\"600 m\", \"900 m\"]", "[\"500 m\", \"700 m\", \"900 m\"]")
    return load_campaign(_small(tmp_path, text))


def test_price_arithmetic_on_known_values(tmp_path):
    c = _three_fields(tmp_path)
    trip, power = KNOWN_TRIP, KNOWN_POWER
    summary = pd.DataFrame({"combination": [k.name for k in c.combinations],
                            "picked_trip_fuel_kg": trip, "picked_engine_power_kW": power,
                            "min_trip_fuel_kg": trip, "min_engine_power_kW": power})
    summary.loc[5, "picked_trip_fuel_kg"] = np.nan  # a run with no feasible design
    p = price_table(c, summary)
    assert len(p) == 4  # two steps per flap setting, no price along the flaps axis
    first = p.iloc[0]   # flaps [fowler], 900 m -> 700 m
    assert (first["looser"], first["tighter"], first["step"]) == ("900 m", "700 m", 200.0)
    assert first["price_picked_trip_fuel_kg_per_unit"] == pytest.approx((250 - 220) / 200)
    assert first["price_picked_engine_power_kW_per_unit"] == pytest.approx((330 - 300) / 200)
    assert p.iloc[1]["price_picked_trip_fuel_kg_per_unit"] == pytest.approx((300 - 250) / 200)
    assert np.isnan(p.iloc[2]["price_picked_trip_fuel_kg_per_unit"])
    assert p.iloc[2]["price_min_engine_power_kW_per_unit"] == pytest.approx((340 - 300) / 200)


def test_shorter_field_never_makes_a_smaller_engine_feasible(tmp_path):
    # a deterministic check of the physics direction the price relies on: on one grid of
    # designs, every design that meets a 600 m field also meets 900 m, so the smallest
    # feasible engine can only grow as the field shortens
    c = load_campaign(_small(tmp_path))
    ws, pw, ar = np.meshgrid(np.linspace(600, 1500, 12), np.linspace(45, 150, 12),
                             np.linspace(6, 11, 4))
    designs = pd.DataFrame({"wing_loading_N_m2": ws.ravel(), "power_loading_N_kW": pw.ravel(),
                            "aspect_ratio": ar.ravel(), "flap": "fowler"})
    frames = {k.values[0]: evaluate(parse_study(k.study_text, k.name), designs)
              for k in c.combinations if k.values[1] == ["fowler"]}
    tight, loose = frames["600 m"], frames["900 m"]
    assert tight["feasible"].sum() > 5
    assert np.all(loose["feasible"][tight["feasible"]])
    assert tight.loc[tight["feasible"], "engine_power_kW"].min() >= \
        loose.loc[loose["feasible"], "engine_power_kW"].min()
    assert np.all(tight["margin_takeoff_field"] < loose["margin_takeoff_field"])


def test_small_campaign_on_a_local_cluster_then_resume(tmp_path):
    pytest.importorskip("distributed")
    campaign = load_campaign(_small(tmp_path))
    out = tmp_path / "camp"
    lines = []
    result = run_campaign(campaign, out, workers=2, progress=lines.append)
    assert len(result.ran) == 4 and not result.failed and result.skipped == 0
    summary = pd.read_csv(out / "summary.csv")
    assert list(summary["combination"]) == [c.name for c in campaign.combinations]
    assert (summary["status"] == "finished").all() and summary["feasible_found"].all()
    assert list(summary["departure.field_length_m"]) == [600.0, 600.0, 900.0, 900.0]
    for _, row in summary.iterrows():
        run = out / row["run_folder"]
        info = json.loads((run / "run.json").read_text())
        assert info["budget"]["population"] == 16 and info["generations_run"] >= 3
        front = pd.read_csv(run / "front.csv")
        assert row["min_trip_fuel_kg"] == pytest.approx(front["trip_fuel_kg"].min())
        assert row["picked_trip_fuel_kg"] >= row["min_trip_fuel_kg"]
    price = pd.read_csv(out / "price.csv")
    assert len(price) == 2 and set(price["axis"]) == {"departure.field_length"}
    assert CAUTION in (out / "summary.txt").read_text()
    # the campaign layer draws no figure; reporting does (the CLI calls it after the runs)
    assert not (out / "plots" / "sweep_departure_field_length.png").exists()
    written = plot_campaign(campaign, result.summary, out)
    assert [p.name for p in written[:2]] == ["sweep_departure_field_length.png",
                                             "sweep_departure_field_length.svg"]
    assert (out / "plots" / "sweep_departure_field_length.png").is_file()

    # an interrupted campaign: one run lost its run.json; the rerun redoes only that one
    lost = out / summary["run_folder"].iloc[1]
    (lost / "run.json").unlink()
    kept = {r: (out / r / "run.json").stat().st_mtime_ns
            for r in summary["run_folder"] if out / r != lost}
    again = run_campaign(campaign, out, serial=True)
    assert again.skipped == 3 and [Path(r["run_dir"]).name for r in again.ran] == [lost.name]
    assert all((out / r / "run.json").stat().st_mtime_ns == t for r, t in kept.items())
    summary2 = pd.read_csv(out / "summary.csv")
    # the same seed gives the same front, so the same row
    assert summary2.iloc[1]["picked_trip_fuel_kg"] == pytest.approx(
        summary.iloc[1]["picked_trip_fuel_kg"], rel=1e-12)

    # a different campaign is refused on this folder and nothing there changes
    other = _small(tmp_path, SMALL.replace("seed = 3", "seed = 4"))
    with pytest.raises(CampaignError, match="made by a different campaign file"):
        run_campaign(load_campaign(other), out, serial=True)
    assert (out / "campaign.toml").read_text() == campaign.text


def test_carpet_plot_draws_every_combination_infeasible_ones_hatched(tmp_path):
    from optimiser.report.campaign_plots import carpet_plot
    from optimiser.report.figures import pyplot
    c = _three_fields(tmp_path)
    trip, power = KNOWN_TRIP, KNOWN_POWER
    summary = pd.DataFrame({"combination": [k.name for k in c.combinations],
                            "picked_trip_fuel_kg": trip, "picked_engine_power_kW": power,
                            "note": "", "status": "finished"})
    summary.loc[0, ["picked_trip_fuel_kg", "picked_engine_power_kW"]] = np.nan
    summary.loc[0, "note"] = "no feasible design ...; still misses takeoff_field (margin -3%)"
    fig = carpet_plot(c, summary)
    carpet, grid = fig.axes[0], fig.axes[1]
    drawn = {(round(x), round(y)) for line in carpet.get_lines()
             for x, y in zip(line.get_xdata(), line.get_ydata())}
    assert drawn == {(p, t) for p, t in zip(power[1:], trip[1:])}   # the five with a design
    hatched = [p for p in grid.patches if p.get_hatch()]
    assert len(hatched) == 1 and hatched[0].get_xy() == (-0.5, -0.5)
    cells = [t.get_text() for t in grid.texts]
    assert len(cells) == 6 and "no feasible\ndesign\n(takeoff field)" in cells
    assert "310 kg\n420 kW" in cells
    pyplot().close(fig)


def test_carpet_and_sweep_figures_in_us_units(tmp_path, monkeypatch):
    """--units us: trip fuel in lb and engine power in hp (1 lb = 0.45359237 kg, 1 hp =
    550 ft lbf/s = 0.74569987158227022 kW; NIST SP 811 (2008), Appendix B, from memory);
    the swept field length keeps the study's own unit."""
    from optimiser.display_units import using
    from optimiser.report import campaign_plots
    from optimiser.report.campaign_plots import carpet_plot
    from optimiser.report.figures import pyplot
    lb, hp_kw = 0.45359237, 550 * 0.3048 * 0.45359237 * 9.80665 / 1000
    c = _three_fields(tmp_path)
    trip, power = np.array(KNOWN_TRIP), np.array(KNOWN_POWER)
    summary = pd.DataFrame({"combination": [k.name for k in c.combinations],
                            "picked_trip_fuel_kg": trip, "picked_engine_power_kW": power,
                            "min_trip_fuel_kg": trip - 5, "min_engine_power_kW": power - 10,
                            "note": "", "status": "finished"})
    figs = []
    monkeypatch.setattr(campaign_plots, "save", lambda fig, stem, **kw: figs.append(fig) or [])
    with using("us"):
        fig = carpet_plot(c, summary)
        campaign_plots.plot_campaign(c, summary, tmp_path)
    figs.append(fig)
    try:
        carpet, grid = fig.axes[0], fig.axes[1]
        assert carpet.get_xlabel() == ("installed engine power, all engines [hp] of the picked "
                                       "design")
        assert carpet.get_ylabel() == "trip fuel [lb] of the picked design"
        drawn = {(x, y) for line in carpet.get_lines()
                 for x, y in zip(line.get_xdata(), line.get_ydata())}
        expected = set(zip(power / hp_kw, trip / lb))
        assert len(drawn) == 6 and all(any(np.isclose(x, ex, rtol=1e-12) and
                                           np.isclose(y, ey, rtol=1e-12) for ex, ey in expected)
                                       for x, y in drawn)
        cells = [t.get_text() for t in grid.texts]
        assert f"{310 / lb:.0f} lb\n{420 / hp_kw:.0f} hp" == "683 lb\n563 hp" and \
            "683 lb\n563 hp" in cells
        sweep = figs[0]   # the first axis (field length): trip fuel, then engine size
        assert sweep.axes[0].get_ylabel() == "trip fuel [lb]"
        assert sweep.axes[1].get_ylabel() == "installed engine power, all engines [hp]"
        assert "[m]" in sweep.axes[0].get_xlabel()
        ys = np.concatenate([l.get_ydata() for l in sweep.axes[0].get_lines()])
        assert np.isclose(ys, 310 / lb, rtol=1e-12).any() and not np.isclose(ys, 310).any()
    finally:
        for f in figs:
            pyplot().close(f)
