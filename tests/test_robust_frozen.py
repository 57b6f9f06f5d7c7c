"""Robustness of a frozen design (``optimiser robust --mode frozen``, the default).

Expected values come from the model itself, computed independently: the nominal sizing
(optimiser.sizing.size_designs at the study's values) for the zero-width case, the sized empty
mass for the empty-mass factor, and physics for what may and may not vary:

- stall speed V_s = sqrt(2 W / (rho S CLmax)) depends on the mass, the wing area and CLmax
  only (Anderson, "Introduction to Flight", stall speed relation; from memory), so on a frozen
  airplane at a fixed takeoff mass it is the same whatever the drag;
- takeoff = empty + crew + payload + fuel (Roskam, "Airplane Design", Part I, ch. 2, the mass
  breakdown), so at a fixed takeoff mass and payload the fuel on board falls by exactly the
  extra empty mass.
"""

import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optimiser.evaluation import CAUTION
from optimiser.robust import frozen_monte_carlo, monte_carlo, robustness
from optimiser.sizing import active_constraints, size_designs
from optimiser.study import load_study, parse_study

ROOT = Path(__file__).resolve().parent.parent
STRIP = ROOT / "problems" / "high_strip_utility.toml"
JET = ROOT / "problems" / "light_twin_jet.toml"
STRIP_DESIGN = {"wing_loading_N_m2": [800.0], "power_loading_N_kW": [73.0],
                "aspect_ratio": [8.1], "flap": ["none"]}  # a row of high_strip_utility_designs.csv
JET_DESIGN = {"wing_loading_N_m2": [2690.0], "thrust_to_weight": [0.45], "aspect_ratio": [10.6],
              "flap": ["plain"]}  # row 1 of problems/light_twin_jet_designs.csv
ZERO = {"distribution": "normal", "mean": 1.0, "std": 0.0}


def _study_with(table: str, path=STRIP):
    text = re.sub(r"(?ms)^\[uncertainty\][^\n]*\n.*?(?=^\[)", "", path.read_text("utf-8"))
    return parse_study(text + "\n[uncertainty]\n" + table, str(path))


@pytest.mark.parametrize("path", [STRIP, JET])
def test_zero_widths_reproduce_the_nominal_sizing(path):
    # source: the nominal sizing of the same design (size_designs, the study's values)
    study = load_study(path)
    keys = [k for k in ("cd0_clean", "oswald_factor", "propeller_efficiency", "sfc",
                        "empty_mass_factor")
            if k != "propeller_efficiency" or study.spec.uses_power_loading]
    unc = {"assumptions": {k: dict(ZERO) for k in keys}}
    design = STRIP_DESIGN if path == STRIP else JET_DESIGN
    r = frozen_monte_carlo(study, design, samples=50, seed=7, uncertainty=unc)
    assert r.mode == "frozen"
    spec = study.spec
    sized = size_designs(spec, design["wing_loading_N_m2"], design[study.loading_column],
                         design["aspect_ratio"], [spec.high_lift_names.index(design["flap"][0])])
    c = r.constraints.set_index("constraint")
    for name in active_constraints(spec)[1:]:  # every sizing constraint after mass_closure
        nominal = float(sized[f"margin_{name}"][0])
        # the frozen tanks hold the fuel on board, which equals the mission's fuel only to the
        # mass closure's tolerance (1e-9 of the mass): an absolute 1e-8 on that margin
        atol = 1e-8 if name == "fuel_volume" else 1e-12
        assert c.loc[name, "nominal_margin"] == pytest.approx(nominal, rel=1e-9, abs=atol), name
        got = r.samples[f"margin_{name}"].to_numpy(float)
        np.testing.assert_allclose(got, nominal, rtol=1e-9, atol=atol, err_msg=name)
    # the fuel on board is the mission's fuel (the closure's balance), the mass the maximum
    for name in ("mission_fuel", "max_takeoff_mass"):
        assert c.loc[name, "nominal_margin"] == 0.0
        assert np.all(r.samples[f"margin_{name}"].to_numpy(float) == 0.0), name
    np.testing.assert_allclose(r.samples["trip_fuel_kg"], sized["trip_fuel_kg"][0], rtol=1e-9)
    np.testing.assert_allclose(r.samples["fuel_on_board_kg"], sized["fuel_mass_kg"][0],
                               rtol=1e-6)
    assert r.trip_fuel["std_kg"].iloc[0] == pytest.approx(0.0, abs=1e-9)


def test_frozen_stall_margin_ignores_drag_while_takeoff_field_varies():
    # V_s = sqrt(2 W / (rho S CLmax)) (Anderson, from memory): mass, wing area and CLmax are
    # those of the frozen airplane in every sample, so the stall margin cannot move; the
    # takeoff run and climb-out feel the drag, so the takeoff field margin does
    study = _study_with('cd0_clean = { distribution = "normal", std = 0.15 }\n'
                        'empty_mass_factor = { distribution = "normal", std = 0.03 }\n')
    r = frozen_monte_carlo(study, STRIP_DESIGN, samples=2000, seed=4)
    stall = r.samples["margin_stall_speed"].to_numpy(float)
    nominal = r.constraints.set_index("constraint").loc["stall_speed", "nominal_margin"]
    np.testing.assert_allclose(stall, nominal, rtol=1e-12)
    takeoff = r.samples["margin_takeoff_field"].to_numpy(float)
    assert takeoff.std() > 1e-3  # observed 0.0155 with a 15 % drag spread (seed 4)
    # and the drag factor drives it: more drag, a longer field (negative correlation)
    assert np.corrcoef(r.samples["factor_cd0_clean"], takeoff)[0, 1] < -0.5
    # the airplane itself does not change
    assert np.ptp(r.samples["takeoff_mass_kg"].to_numpy(float)) == 0.0
    assert np.ptp(r.samples[study.engine_size_column].to_numpy(float)) == 0.0


def test_heavier_empty_mass_comes_out_of_the_fuel_on_board():
    # takeoff = empty + crew + payload + fuel (Roskam Part I, ch. 2): at the fixed maximum
    # takeoff mass and the study's payload the fuel on board falls by (factor - 1) x empty mass
    study = _study_with('empty_mass_factor = { distribution = "uniform", low = 1.01, '
                        'high = 1.06 }\n')
    r = frozen_monte_carlo(study, STRIP_DESIGN, samples=400, seed=9)
    spec = study.spec
    empty = float(r.design["empty_mass_kg"].iloc[0])
    base = float(r.fuel_on_board["nominal_kg"].iloc[0])
    ratio = (spec.weights.empty_mass_factor * r.samples["factor_empty_mass_factor"]
             / spec.weights.empty_mass_factor).to_numpy(float)
    expected = base - (ratio - 1.0) * empty
    np.testing.assert_allclose(r.samples["fuel_on_board_kg"], expected, rtol=1e-9)
    assert np.all(r.samples["fuel_on_board_kg"] < base)
    # the mission needs the same fuel at the same mass, so the fuel margin falls below zero
    assert np.all(r.samples["margin_mission_fuel"] < 0.0)
    assert r.constraints.set_index("constraint").loc["mission_fuel", "probability_met"] == 0.0


def test_modes_share_the_draws_and_an_unknown_mode_is_refused():
    study = load_study(STRIP)
    frozen = robustness(study, STRIP_DESIGN, "frozen", samples=100, seed=3)
    resize = robustness(study, STRIP_DESIGN, "resize", samples=100, seed=3)
    assert resize.mode == "resize" and resize.fuel_on_board is None
    for k in study.uncertainty["assumptions"]:
        np.testing.assert_array_equal(frozen.samples[f"factor_{k}"], resize.samples[f"factor_{k}"])
    # re-sizing: the mass follows the assumptions; frozen: it is the airplane's
    assert np.ptp(resize.samples["takeoff_mass_kg"]) > 1.0
    assert np.ptp(frozen.samples["takeoff_mass_kg"]) == 0.0
    assert list(resize.constraints["constraint"]) == list(
        monte_carlo(study, STRIP_DESIGN, samples=100, seed=3).constraints["constraint"])
    with pytest.raises(ValueError, match="expected frozen or resize"):
        robustness(study, STRIP_DESIGN, "sideways", samples=10)


def _run(study, out, *extra, cwd):
    return subprocess.run([sys.executable, "-m", "optimiser", "robust", str(study), "--design",
                           "wing_loading_N_m2=800 power_loading_N_kW=73 aspect_ratio=8.1 "
                           "flap=none", "--samples", "300", "--out", str(out), *extra],
                          capture_output=True, text=True, cwd=cwd)


def test_robust_command_modes(tmp_path):
    frozen = _run(STRIP, tmp_path / "frozen", cwd=tmp_path)  # the default mode
    assert frozen.returncode == 0, frozen.stderr
    assert "mode: frozen" in frozen.stdout and CAUTION in frozen.stdout
    out = tmp_path / "frozen"
    assert "mode: frozen" in (out / "summary.txt").read_text("utf-8")
    assert '"mode": "frozen"' in (out / "robust.json").read_text("utf-8")
    for name in ("fuel_on_board.csv", "fuel_on_board_spread.png", "trip_fuel_spread.svg",
                 "constraint_probability.png"):
        assert (out / name).is_file(), name
    c = pd.read_csv(out / "constraints.csv").set_index("constraint")
    assert "mission_fuel" in c.index and "mass_closure" not in c.index
    assert len(pd.read_csv(out / "samples.csv")) == 300
    assert "frozen airplane" in (out / "trip_fuel_spread.svg").read_text("utf-8")

    resize = _run(STRIP, tmp_path / "resize", "--mode", "resize", cwd=tmp_path)
    assert resize.returncode == 0, resize.stderr
    assert "mode: resize" in resize.stdout
    out = tmp_path / "resize"
    assert not (out / "fuel_on_board.csv").exists()
    c = pd.read_csv(out / "constraints.csv").set_index("constraint")
    assert "mass_closure" in c.index and "mission_fuel" not in c.index

    bad = _run(STRIP, tmp_path / "bad", "--mode", "sideways", cwd=tmp_path)
    assert bad.returncode == 2
    assert bad.stderr.strip().splitlines() == [bad.stderr.strip().splitlines()[0]]
    line = bad.stderr.strip()
    assert "--mode" in line and "'sideways'" in line and "frozen or resize" in line
    assert "Traceback" not in bad.stderr and not (tmp_path / "bad").exists()


def test_us_units_show_the_fuel_spread_in_pounds(tmp_path, capsys):
    """1 lb = 0.45359237 kg exactly (1959 international yard and pound agreement, from
    memory): the US summary's trip-fuel mean is the SI mean over that factor."""
    import re as _re

    from optimiser.cli import main as cli_main
    from optimiser.study import bundled_study_path as _path
    args = ["robust", str(_path()), "--design", "wing_loading_N_m2=800 power_loading_N_kW=73 "
            "aspect_ratio=8.1 flap=none", "--samples", "300"]
    assert cli_main([*args, "--out", str(tmp_path / "si")]) == 0
    si = capsys.readouterr().out
    assert cli_main(["--units", "us", *args, "--out", str(tmp_path / "us")]) == 0
    us = capsys.readouterr().out
    mean_kg = float(_re.search(r"trip fuel \[kg\]: nominal [0-9.]+, mean ([0-9.]+)", si).group(1))
    mean_lb = float(_re.search(r"trip fuel \[lb\]: nominal [0-9.]+, mean ([0-9.]+)", us).group(1))
    assert mean_lb == pytest.approx(mean_kg / 0.45359237, abs=0.15)  # both printed to 0.1
    # the design line too: 800 N/m^2 / 47.88025898033584 = 16.7 lbf/ft^2, 73 N/kW / (4.4482216152605
    # N / 0.74569987158227022 kW) = 12.24 lbf/hp (NIST SP 811 (2008), Appendix B, from memory)
    assert "robustness of W/S 16.7 lbf/ft², W/P 12.24 lbf/hp, AR 8.1" in us
    assert "robustness of W/S 800 N/m², W/P 73 N/kW, AR 8.1" in si


def test_frozen_probability_chart_names_constraints_in_words_with_a_colour_key(tmp_path,
                                                                               monkeypatch):
    # the frozen chart: constraints in words, "every constraint at once" for all, a key of
    # the three colour bands (95 % and 50 %: palette.PROBABILITY_MET), each value clear of
    # its whisker: right of the Wilson upper end, or inside the bar left of the lower end
    from optimiser.report import robust_plots
    study = load_study(STRIP)
    r = frozen_monte_carlo(study, STRIP_DESIGN, samples=300, seed=2)
    figs = []
    monkeypatch.setattr(robust_plots, "save", lambda fig, stem, **kw: figs.append((stem, fig)))
    robust_plots.plot_robustness(study, r, tmp_path)
    fig = next(f for stem, f in figs if stem.name == "constraint_probability")
    ax = fig.axes[0]
    labels = [t.get_text() for t in ax.get_yticklabels()]
    assert labels[-1] == "every constraint at once" and "takeoff field" in labels
    assert not any("_" in t for t in labels)
    assert [t.get_text() for t in ax.get_legend().get_texts()] == [
        "at least 95 %", "at least 50 %", "below 50 %"]
    c = r.constraints
    texts = {round(t.get_position()[1]): t for t in ax.texts}
    for yi, (_, row) in zip(range(len(c) - 1, -1, -1), c.iterrows()):
        x, t = texts[yi].get_position()[0], texts[yi]
        if t.get_ha() == "right":
            assert x <= row["probability_low_95"] - 0.015 + 1e-12
        else:
            assert x >= row["probability_high_95"] + 0.015 - 1e-12
