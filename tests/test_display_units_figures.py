"""Figures in the reader's units (``optimiser --units us``): each figure built in US
customary units plots converted data, limits and labels, checked against the exact
definitions; SI stays as it was (benchmarks/identical_outputs.py proves the SI files).

Exact definitions: NIST Special Publication 811 (2008), Appendix B, and the international
yard and pound agreement of 1959 (from memory): 1 ft = 0.3048 m, 1 lb = 0.45359237 kg,
1 lbf = 0.45359237 x 9.80665 N, 1 nmi = 1852 m, 1 hp = 550 ft lbf/s.
"""

from __future__ import annotations

import json
import re

import numpy as np
import pytest

from optimiser import display_units as du
from optimiser.study import bundled_study_path
from test_display_units import _cli  # the same command-line runner

FT = 0.3048                              # m
LB = 0.45359237                          # kg
LBF = 0.45359237 * 9.80665               # N
NMI = 1852.0                             # m
HP_KW = 550 * FT * LBF / 1000            # kW in one hp = 0.74569987158227022
LBF_FT2 = LBF / FT ** 2                  # N/m^2 in one lbf/ft^2 = 47.88025898033584
LBF_HP = LBF / HP_KW                     # N/kW in one lbf/hp


@pytest.fixture(scope="module")
def tiny_run(tmp_path_factory):
    import optimiser
    from optimiser.study import load_study
    study = load_study(bundled_study_path())
    out = tmp_path_factory.mktemp("units_figures") / "run"
    result = optimiser.optimise(study, out=out, population=24, generations=4, plots=False)
    assert len(result.front) > 0
    return study, result


@pytest.fixture
def closing():
    """Figures to close after the test."""
    from optimiser.report.figures import pyplot
    figs = []
    yield figs
    for f in figs:
        pyplot().close(f)


def _captured(monkeypatch, module):
    """The figures ``module`` would save, kept instead of written."""
    figs = []
    monkeypatch.setattr(module, "save", lambda fig, stem, **kw: figs.append(fig) or [])
    return figs


def test_decision_variables_bounds_and_units_in_us(tiny_run, closing):
    from optimiser.report.plots import decision_variables
    study, result = tiny_run
    us = decision_variables(study, result.front, units="us")
    si = decision_variables(study, result.front, units="si")
    closing += [us, si]
    labels_us = [t.get_text() for t in us.axes[0].get_xticklabels()]
    labels_si = [t.get_text() for t in si.axes[0].get_xticklabels()]
    wing = study.variable("wing_loading_N_m2")
    first = re.fullmatch(r"wing loading \[lbf/ft²\]\n([0-9.e+-]+) to ([0-9.e+-]+)(?: \(fixed\))?",
                         labels_us[0])
    assert first, labels_us[0]
    # the bounds in lbf/ft^2: N/m^2 / 47.88025898033584 (printed with 4 digits)
    assert first.group(1) == f"{wing.lower / LBF_FT2:.4g}"
    assert float(first.group(2)) == pytest.approx(wing.upper / LBF_FT2, rel=1e-3)
    assert labels_si[0].startswith(f"wing loading [N/m²]\n{wing.lower:g} to {wing.upper:g}")
    load = study.variable(study.loading_column)
    assert labels_us[1].startswith(f"power loading [lbf/hp]\n{load.lower / LBF_HP:.4g} to ")
    assert labels_us[2] == labels_si[2]   # aspect ratio: dimensionless, unchanged
    # the positions within the bounds are the same numbers in both systems
    np.testing.assert_allclose(us.axes[0].lines[0].get_ydata(), si.axes[0].lines[0].get_ydata(),
                               rtol=1e-12)


def test_flap_comparison_in_us(tiny_run, closing):
    from optimiser.flaps import compare_flaps
    from optimiser.report.plots import flap_fronts
    from optimiser.runfolder import load_run
    study, result = tiny_run
    table, fronts = compare_flaps(load_run(result.run_dir))
    fig = flap_fronts(study, fronts, table, units="us")
    closing.append(fig)
    ax, ax2 = fig.axes[0], fig.axes[1]
    assert ax.get_xlabel() == "installed engine power, all engines [hp]"
    assert ax.get_ylabel() == "trip fuel [lb]"
    drawn = [f for f in study.flaps if len(fronts[f])]
    assert drawn
    dots = ax.collections[0].get_offsets()
    fr = fronts[drawn[0]]
    # kW / 0.74569987158227022 = hp; kg / 0.45359237 = lb
    np.testing.assert_allclose(dots[:, 0], fr["engine_power_kW"].to_numpy() / HP_KW, rtol=1e-12)
    np.testing.assert_allclose(dots[:, 1], fr["trip_fuel_kg"].to_numpy() / LB, rtol=1e-12)
    texts = [t.get_text() for t in ax2.texts]
    assert not any(" kg " in t for t in texts)
    for _, r in table.iterrows():
        extra = r["extra_trip_fuel_at_equal_engine_kg"]
        if r["feasible_found"] and not r["reference_option"] and np.isfinite(extra):
            assert f"trip fuel {extra / LB:+.1f} lb at equal engine" in texts


def test_payload_range_chart_in_nautical_miles_and_pounds(tiny_run, closing):
    from optimiser.report.payload_range_plot import payload_range_figure
    from optimiser.report.picks import pick_payload_range
    study, result = tiny_run
    corners = pick_payload_range(study, result.front.iloc[0])
    spec = study.spec
    fig = payload_range_figure(corners, study.name, spec.mission.range_m / 1e3,
                               spec.weights.payload_kg, units="us")
    closing.append(fig)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "range [nmi]" and ax.get_ylabel() == "payload [lb]"
    line = ax.lines[0]
    rows = corners.sort_values("corner")
    # 1 nmi = 1852 m exactly, 1 lb = 0.45359237 kg exactly
    np.testing.assert_allclose(line.get_xdata(), rows["range_km"].to_numpy() * 1000 / NMI,
                               rtol=1e-12)
    np.testing.assert_allclose(line.get_ydata(), rows["payload_kg"].to_numpy() / LB, rtol=1e-12)
    star = [l for l in ax.lines if l.get_marker() == "*"][0]
    assert star.get_xdata()[0] == pytest.approx(spec.mission.range_m / NMI, rel=1e-12)
    top = 1.12 * max(spec.weights.payload_kg, corners["payload_kg"].max()) / LB
    assert ax.get_ylim()[1] == pytest.approx(top, rel=1e-12)


def test_robustness_figures_in_pounds(tiny_run, monkeypatch, tmp_path):
    from optimiser.report import robust_plots
    from optimiser.report.figures import pyplot
    from optimiser.robust import robustness
    study, result = tiny_run
    design = result.front.iloc[[0]]
    res = robustness(study, design, "frozen", samples=200, seed=3)
    figs = _captured(monkeypatch, robust_plots)
    with du.using("us"):
        robust_plots.plot_robustness(study, res, tmp_path)
    try:
        trip, on_board, probability = figs
        ax = trip.axes[0]
        assert ax.get_xlabel() == "trip fuel [lb]"
        nominal = float(res.trip_fuel.iloc[0]["nominal_kg"])
        lines = [l for l in ax.lines if len(l.get_xdata()) == 2]
        assert lines[0].get_xdata()[0] == pytest.approx(nominal / LB, rel=1e-12)
        legend = [t.get_text() for t in ax.get_legend().get_texts()]
        assert f"study's values {nominal / LB:.1f} lb" in legend
        # the histogram's bins span the samples in pounds
        left = min(p.get_x() for p in ax.patches)
        assert left == pytest.approx(res.samples["trip_fuel_kg"].min() / LB, rel=1e-9)
        assert "lbf/ft²" in ax.get_title() and "N/m²" not in ax.get_title()
        assert on_board.axes[0].get_xlabel() == "fuel on board [lb]"
        assert probability.axes[0].get_xlim() == (0.0, 1.05)   # a probability: unchanged
    finally:
        for f in figs:
            pyplot().close(f)


def test_tornado_changes_and_steps_in_us(tiny_run, monkeypatch, tmp_path):
    from optimiser.report import tornado
    from optimiser.report.figures import pyplot
    from optimiser.sensitivity import ranked, sensitivities
    study, result = tiny_run
    design = result.front.iloc[0]
    table = sensitivities(study, design)
    outputs = list(study.objective_columns())[:2]
    figs = _captured(monkeypatch, tornado)
    with du.using("us"):
        tornado.plot_tornado(study, table, outputs, tmp_path / "t", "title")
        steps = {r.input: tornado._step(r) for r in table.itertuples()}
    try:
        ax = figs[0].axes[0]
        part = ranked(table, outputs[0]).head(tornado.TORNADO_ROWS)
        nominal = float(part["output_value"].iloc[0])
        assert ax.get_xlabel() == (f"change of trip fuel [lb]\n(at the study's values: "
                                   f"{nominal / LB:.4g})")
        widths = [p.get_width() for p in ax.patches[:len(part)]]   # the -step bars first
        np.testing.assert_allclose(widths, part["change_minus"].to_numpy() / LB, rtol=1e-12)
        power = figs[0].axes[1]
        assert power.get_xlabel().startswith("change of installed engine power, all engines [hp]")
    finally:
        for f in figs:
            pyplot().close(f)
    row = table.set_index("input")
    # a range in nmi (1852 m), a climb rate in ft/min (0.3048/60 m/s), a length in ft
    assert steps["design range"] == f"±{row.loc['design range', 'step'].iloc[0] / NMI:.3g} nmi"
    climb = row.loc["climb rate", "step"].iloc[0]
    assert steps["climb rate"] == f"±{climb / (FT / 60):.3g} ft/min"
    assert steps["departure elevation"] == f"±{50 / FT:.3g} ft"
    assert steps["departure temperature offset"] == "±1 K"   # a difference: unchanged
    # 1 lb/(hp h) = 0.45359237 kg / (745.69987158227022 W x 3600 s)
    sfc = row.loc["cruise SFC", "step"].iloc[0]
    assert steps["cruise SFC"] == f"±{sfc / (LB / (HP_KW * 1000 * 3600)):.3g} lb/hp/h"
    with du.using("si"):   # SI: the table's step and unit as they are
        first = next(r for r in table.itertuples() if r.input == "design range")
        assert tornado._step(first) == f"±{first.step:.3g} m"


def test_jet_fuel_consumption_in_pounds_per_pound_force_hour():
    # 1 lb/(lbf h) = 0.45359237 kg / (4.4482216152605 N x 3600 s) = 2.8325e-5 kg/(N s)
    shown, unit = du.to_display(2.8325e-5, "kg/(N s)", "us")
    assert unit == "lb/lbf/h" and shown == pytest.approx(2.8325e-5 * LBF * 3600 / LB, rel=1e-15)
    assert shown == pytest.approx(1.0, rel=1e-4)


def test_compare_overlay_in_us(tiny_run, tmp_path, closing):
    import optimiser
    from optimiser.compare import compare_runs
    from optimiser.report.compare_plots import compare_fronts
    study, result = tiny_run
    other = optimiser.optimise(study, out=tmp_path / "other", population=16, generations=3,
                               seed=7, plots=False)
    cmp = compare_runs([result.run_dir, other.run_dir])
    with du.using("us"):
        fig = compare_fronts(cmp)
    closing.append(fig)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "installed engine power, all engines [hp]"
    assert ax.get_ylabel() == "trip fuel [lb]"
    dots = ax.collections[0].get_offsets()
    front = cmp.runs[0].front
    np.testing.assert_allclose(dots[:, 0], front["engine_power_kW"].to_numpy() / HP_KW,
                               rtol=1e-12)
    knee = ax.collections[1].get_offsets()[0]
    row = cmp.summary.iloc[0]
    assert knee[1] == pytest.approx(row["knee_trip_fuel_kg"] / LB, rel=1e-12)


DESIGN = "wing_loading_N_m2=1100 power_loading_N_kW=75 aspect_ratio=8 flap=plain"


def test_units_after_the_command_with_the_same_precedence(tmp_path):
    after = _cli("evaluate", bundled_study_path(), "--design", DESIGN, "--units", "us",
                 env_units="si", cwd=tmp_path)
    assert after.returncode == 0, after.stderr
    # 1100 N/m^2 / 47.88025898033584 = 22.97 lbf/ft^2
    assert "wing loading [lbf/ft²]" in after.stdout and " 22.97 " in after.stdout
    over_env = _cli("evaluate", bundled_study_path(), "--design", DESIGN, "--units", "si",
                    env_units="us", cwd=tmp_path)
    assert over_env.returncode == 0 and "lbf" not in over_env.stdout
    bad = _cli("check", bundled_study_path(), "--units", "metric", cwd=tmp_path)
    assert bad.returncode == 2
    assert bad.stderr == "error: --units: got 'metric'; expected si or us\n"


def test_pick_with_units_after_the_run_folder(tiny_run, capsys, monkeypatch):
    from optimiser.cli import main
    from optimiser.runfolder import load_run
    study, result = tiny_run
    monkeypatch.delenv("OPTIMISER_UNITS", raising=False)
    assert main(["pick", str(result.run_dir), "--force", "--units", "us"]) == 0
    text = capsys.readouterr().out
    shown = float(re.search(r"takeoff mass ([0-9]+) lb", text).group(1))
    row = json.loads((result.run_dir / "pick-knee" / "choice.json").read_text())["front_row"]
    mass_kg = float(load_run(result.run_dir).front.iloc[row]["takeoff_mass_kg"])
    assert shown == pytest.approx(mass_kg / LB, abs=0.5)   # 1 lb = 0.45359237 kg, printed .0f
