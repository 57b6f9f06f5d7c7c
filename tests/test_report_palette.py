"""The palette, the figure helper and the figures' honesty checks of optimiser.report.

Sources: Okabe & Ito (2008), "Color Universal Design", and Tol (2021), SRON/EPS/TN/09-002
"muted" scheme, for the hex values (from memory, as the palette module says); the stall
formula W/S = 0.5 rho0 V_s^2 CLmax (the definition of the stall speed, any aerodynamics
text, e.g. Anderson, "Aircraft Performance and Design", 1999, eq. 5.67, from memory) for the
position of the stall line; the rest are the project's own rules (one colour per name,
legends outside the data, the caution on every figure).
"""

from pathlib import Path

import matplotlib.colors as mcolors
import numpy as np
import pytest

from optimiser.evaluation import CAUTION_SHORT, size_frame
from optimiser.physics import atmosphere
from optimiser.report import diagram, figures, page, palette, plots
from optimiser.study import load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"


def test_colours_are_fixed_by_name_not_by_position():
    a = palette.flap_colours(["none", "plain", "fowler"])
    b = palette.flap_colours(["fowler", "single_slotted+slats"])
    assert a["fowler"] == b["fowler"] == "#CC6677"          # Tol muted "rose"
    assert palette.constraint_colours(["takeoff_field", "stall_speed"])["stall_speed"] == \
        palette.constraint_colours(["stall_speed"])["stall_speed"] == "#D55E00"  # vermillion
    # a study's own flap type keeps its colour from study to study (a checksum of its name)
    assert palette.flap_style("slotted_hinged") == palette.flap_style("slotted_hinged")
    assert palette.flap_style("slotted_hinged")["color"] in palette.SPARE_COLOURS
    assert palette.flap_style("plain+slats")["color"] == palette.flap_style("plain")["color"]
    assert palette.flap_style("plain+slats")["ls"] == "--"
    assert mcolors.to_hex(palette.FEASIBLE_REGION) == palette.FEASIBLE_REGION_HEX.lower()


def test_no_two_constraints_share_colour_and_dash():
    pairs = list(palette.CONSTRAINT_STYLES.values())
    assert len(pairs) == len(set(pairs))
    from optimiser.columns import CONSTRAINTS
    assert {c.name for c in CONSTRAINTS} <= set(palette.CONSTRAINT_STYLES)


def test_flap_labels_are_words():
    assert palette.flap_label("single_slotted") == "single-slotted flap"
    assert palette.flap_label("fowler+slats") == "Fowler flap with slats"
    assert palette.flap_label("none") == "no flap"
    assert palette.flap_label("slotted_hinged") == "slotted hinged flap"


@pytest.fixture(scope="module")
def utility():
    study = load_study(PROBLEMS / "high_strip_utility.toml")
    design = size_frame(study, np.array([700.0]), np.array([80.0]), np.array([8.0]),
                        np.array([study.spec.high_lift_names.index("single_slotted")])).iloc[0]
    return study, design


def test_traced_lines_sit_on_zero_margin_with_the_failing_side_on_their_left(utility):
    study, design = utility
    from optimiser.sizing import active_constraints
    ws, ld, frame = plots.constraint_grid(study, design, 40)
    lines = diagram.trace(study, design, ws, ld, frame, active_constraints(study.spec))
    assert {"stall_speed", "takeoff_field", "cruise_speed"} <= {ln.name for ln in lines}
    flap = study.spec.high_lift_names.index(design["flap"])
    for ln in lines:
        for pts in ln.polylines:
            # every traced point is on the line: the margin changes sign within a
            # thousandth of a grid step of it along one axis (a zero, or a jump such as a
            # takeoff that stops being possible)
            step = np.array([ws[1] - ws[0], ld[1] - ld[0]]) * 1e-3
            signs = []
            for shift in (np.array([step[0], 0]), np.array([0, step[1]])):
                probe = np.vstack([pts - shift, pts + shift])
                m = size_frame(study, probe[:, 0], probe[:, 1], np.full(len(probe), 8.0),
                               np.full(len(probe), flap))[f"margin_{ln.name}"].to_numpy(float)
                signs.append((m[:len(pts)] >= 0) != (m[len(pts):] >= 0))
            assert np.all(signs[0] | signs[1]), ln.name
            # a step to the left of the middle segment fails, one to the right meets it
            k = len(pts) // 2 - 1 if len(pts) > 2 else 0
            d = pts[k + 1] - pts[k]
            scale = np.array([ws[-1] - ws[0], ld[-1] - ld[0]])
            dn = d / scale
            left = np.array([-dn[1], dn[0]]) / np.hypot(*dn) * 0.01 * scale
            mid = 0.5 * (pts[k] + pts[k + 1])
            probe = np.array([mid + left, mid - left])
            m = size_frame(study, probe[:, 0], probe[:, 1], np.full(2, 8.0),
                           np.full(2, flap))[f"margin_{ln.name}"].to_numpy(float)
            assert m[0] < 0 <= m[1], (ln.name, m)


def test_stall_line_is_where_the_stall_formula_puts_it(utility):
    study, design = utility
    fig = plots.design_constraint_diagram(study, design)
    colour, dash = palette.constraint_style("stall_speed")
    drawn = [l for l in fig.axes[0].get_lines()
             if mcolors.to_hex(l.get_color()).lower() == colour.lower()
             and l.get_linestyle() == palette.DASHES[dash] and len(l.get_xdata()) > 1]
    assert drawn, "no stall-speed line drawn in its palette colour and dash"
    x = np.concatenate([l.get_xdata() for l in drawn])
    v_s = study.spec.requirements.stall_speed_m_s
    ws_stall = 0.5 * atmosphere.RHO0 * v_s ** 2 * float(design["cl_max_landing"])
    assert np.allclose(x, ws_stall, rtol=2e-3)
    figures.pyplot().close(fig)


def _overlaps(a, b) -> bool:
    return a.x0 < b.x1 and b.x0 < a.x1 and a.y0 < b.y1 and b.y0 < a.y1


def test_legends_stay_off_the_data_and_every_figure_carries_the_caution(utility):
    study, design = utility
    front = size_frame(study, np.array([650.0, 700.0, 760.0]), np.array([70.0, 80.0, 90.0]),
                       np.full(3, 8.0), np.full(3, study.spec.high_lift_names.index("fowler")))
    history = __import__("pandas").DataFrame({"evaluations": [10, 20, 30],
                                              "hypervolume": [0.5, 0.9, 1.0]})
    figs = [plots.design_constraint_diagram(study, design, front=front, run_utc="T"),
            plots.front_view(study, front), plots.convergence(study, history),
            plots.objective_scatter(study, front, front[list(study.objective_columns())]),
            plots.decision_variables(study, front)]
    for fig in figs:
        fig.canvas.draw()
        renderer = fig.canvas.get_renderer()
        texts = " ".join(t.get_text() for t in fig.texts)
        assert CAUTION_SHORT in texts and f"study {study.name}" in texts
        for ax in fig.axes:
            leg = ax.get_legend()
            if leg is None:
                continue
            assert not _overlaps(leg.get_window_extent(renderer), ax.get_window_extent(renderer))
        figures.pyplot().close(fig)


def test_convergence_is_a_share_of_the_final_hypervolume(utility):
    study, _ = utility
    import pandas as pd
    fig = plots.convergence(study, pd.DataFrame({"evaluations": [100, 200, 300],
                                                 "hypervolume": [0.4, 1.2, 1.6]}))
    (line,) = [l for l in fig.axes[0].get_lines() if len(l.get_xdata()) == 3]
    assert np.allclose(line.get_ydata(), [0.25, 0.75, 1.0])
    assert fig.axes[0].get_xlabel() == "designs evaluated"
    figures.pyplot().close(fig)


def test_probability_colours_by_threshold():
    assert palette.probability_colour(0.97) == "#009E73"
    assert palette.probability_colour(0.95) == "#009E73"
    assert palette.probability_colour(0.6) == "#E69F00"
    assert palette.probability_colour(0.1) == "#D55E00"
    assert palette.probability_colour(float("nan")) == "#D55E00"


def test_report_script_takes_its_colours_from_the_palette(utility):
    from optimiser.report.html import diagram_data
    study, design = utility
    assert f"fill: '{palette.FEASIBLE_REGION_HEX}'" in page.PAGE_SCRIPT
    assert "__REGION" not in page.PAGE_SCRIPT and "ln.colour" in page.PAGE_SCRIPT
    lines = {ln["name"]: ln for ln in diagram_data(study, design)["lines"]}
    assert lines["stall_speed"]["colour"] == palette.constraint_style("stall_speed")[0]
    assert lines["cruise_speed"]["dash"] == palette.SVG_DASHES["solid"]


def test_save_writes_png_and_svg_and_closes(tmp_path):
    plt = figures.pyplot()
    fig, ax = plt.subplots()
    ax.plot([0, 1], [0, 1])
    written = figures.save(fig, tmp_path / "line")
    assert [p.name for p in written] == ["line.png", "line.svg"]
    assert written[0].read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert b"<svg" in written[1].read_bytes()
    assert not plt.fignum_exists(fig.number)
