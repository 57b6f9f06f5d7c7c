"""The palette and the figure helper of optimiser.report.

Colours today are matplotlib's "tab10" cycle (its published hex values: matplotlib docs,
"Choosing Colormaps", qualitative maps; the Tableau 10 palette), by position.

Source: matplotlib documentation (tab10 values), from memory for the hex codes."""

import matplotlib.colors as mcolors

from optimiser.report import figures, page, palette

TAB10_FIRST = ("#1f77b4", "#ff7f0e", "#2ca02c", "#d62728")  # tab10 entries 0-3


def test_flap_and_constraint_colours_follow_the_cycle_by_position():
    flaps = ["none", "plain", "fowler", "fowler+slats"]
    assert list(palette.flap_colours_hex(flaps).values()) == list(TAB10_FIRST)
    cons = palette.constraint_colours(["stall_speed", "takeoff_field"])
    assert [mcolors.to_hex(c) for c in cons.values()] == list(TAB10_FIRST[:2])
    # the cycle wraps after ten entries
    assert palette.cycle_colour(10) == palette.cycle_colour(0)
    assert mcolors.to_hex(palette.FEASIBLE_REGION) == palette.FEASIBLE_REGION_HEX


def test_probability_colours_by_threshold():
    assert palette.probability_colour(0.97) == "#2e8b57"
    assert palette.probability_colour(0.95) == "#2e8b57"
    assert palette.probability_colour(0.6) == "#e0a030"
    assert palette.probability_colour(0.1) == "#c0392b"
    assert palette.probability_colour(float("nan")) == "#c0392b"


def test_report_script_takes_its_colours_from_the_palette():
    for colour in palette.REPORT_LINE_COLOURS:
        assert f"'{colour}'" in page.PAGE_SCRIPT
    assert f"fill: '{palette.FEASIBLE_REGION_HEX}'" in page.PAGE_SCRIPT
    assert "__REGION" not in page.PAGE_SCRIPT and "__LINE_COLOURS__" not in page.PAGE_SCRIPT


def test_save_writes_png_and_svg_and_closes(tmp_path):
    plt = figures.pyplot()
    fig, ax = plt.subplots()
    ax.plot([0, 1], [0, 1])
    written = figures.save(fig, tmp_path / "line")
    assert [p.name for p in written] == ["line.png", "line.svg"]
    assert written[0].read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert b"<svg" in written[1].read_bytes()
    assert not plt.fignum_exists(fig.number)
