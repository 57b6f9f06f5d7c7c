"""Design margins required on constraints (``[requirements] margins``) and the span limit
(``[requirements] max_span``) with the aerodrome reference code letter.

Source: ICAO Annex 14, Aerodromes, Vol. I, Table 1-1 (aerodrome reference code, code element
2: wingspan A < 15 m, B < 24 m, C < 36 m, D < 52 m, E < 65 m, F < 80 m, each "up to but not
including"), as /work/shared/METHODS.md section 10 gives it. Everything else checks the
project's own rules (DEVELOPERS.md, study reference: a design meets a constraint when its raw
margin is at least the required one; the margin columns stay raw).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from optimiser.evaluation import evaluate, size_frame
from optimiser.physics.performance import aerodrome_code_letter
from optimiser.search import design_arrays, objectives_and_constraints
from optimiser.sizing import active_constraints, required_margins
from optimiser.study import StudyError, parse_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"
UTILITY = PROBLEMS / "high_strip_utility.toml"
FT = 0.3048  # m, international foot (1959), exact


def _with_requirements(lines: str, base: Path = UTILITY):
    text = base.read_text(encoding="utf-8")
    assert text.count("[requirements]\n") == 1
    return parse_study(text.replace("[requirements]\n", "[requirements]\n" + lines + "\n"),
                       str(base))


def _batch(study, n=3000, seed=7):
    """Designs spread over the study's bounds and allowed flaps (fixed seed)."""
    rng = np.random.default_rng(seed)
    free = [v for v in study.variables if not v.fixed]
    X = np.column_stack([rng.uniform(v.lower, v.upper, n) for v in free])
    names = study.spec.high_lift_names
    flap = rng.choice([names.index(f) for f in study.flaps], n)
    return (*design_arrays(study, X), flap)


# --- the aerodrome reference code letter ---------------------------------------------------

@pytest.mark.parametrize("span_m, letter", [
    (0.0, "A"), (14.999, "A"), (15.0, "B"), (23.999, "B"), (24.0, "C"), (35.99, "C"),
    (36.0, "D"), (51.99, "D"), (52.0, "E"), (64.99, "E"), (65.0, "F"), (79.99, "F"),
    (80.0, ""), (120.0, ""), (np.nan, "")])
def test_code_letter_at_the_table_boundaries(span_m, letter):
    # ICAO Annex 14 Vol. I Table 1-1: each letter "up to but not including" the next limit;
    # beyond F (80 m and more) no letter: this tool's convention, an empty text
    assert aerodrome_code_letter(span_m) == letter
    assert list(aerodrome_code_letter([span_m, 15.0])) == [letter, "B"]


# --- reading the study keys ----------------------------------------------------------------

def test_margins_and_span_are_read_in_si():
    s = _with_requirements('margins = { takeoff_field = 0.05, climb_rate = 0.10 }\n'
                           'max_span = "49.2 ft"')
    assert dict(s.spec.requirements.margins) == {"takeoff_field": 0.05, "climb_rate": 0.10}
    assert s.spec.requirements.max_span_m == pytest.approx(49.2 * FT, rel=1e-12)  # 14.99616 m
    names = active_constraints(s.spec)
    assert names[-1] == "span"
    req = required_margins(s.spec)
    assert req[names.index("takeoff_field")] == 0.05
    assert req[names.index("climb_rate")] == 0.10
    assert req.sum() == pytest.approx(0.15, abs=1e-15)


@pytest.mark.parametrize("lines, message", [
    ("margins = { take_off_field = 0.05 }",
     r"^.*\[requirements\] margins\.take_off_field: unknown constraint 'take_off_field' "
     r"\(did you mean 'takeoff_field'\?\); expected one of the study's constraints: "
     r"mass_closure, .*takeoff_field, .*service_ceiling, fuel_volume$"),
    ("margins = { span = 0.05 }",  # span is active only with max_span
     r"margins\.span: unknown constraint 'span'.*expected one of"),
    ("margins = { climb_rate = 0.6 }",
     r"\[requirements\] margins\.climb_rate: got 0\.6; expected at most 0\.5$"),
    ("margins = { climb_rate = -0.01 }",
     r"\[requirements\] margins\.climb_rate: got -0\.01; expected at least 0 and at most 0\.5$"),
    ('margins = { climb_rate = "10 %" }', r"margins\.climb_rate: got '10 %' \(a string\); "
     r"expected a number"),
    ("margins = 0.05", r"\[requirements\] margins: got 0\.05; expected a table such as"),
    ('max_span = "15"', r"\[requirements\] max_span"),
    ('max_span = "0.5 m"', r"\[requirements\] max_span: got 0\.5 m; expected at least 1 m"),
])
def test_bad_margins_and_span_are_refused_in_one_line(lines, message):
    with pytest.raises(StudyError, match=message) as err:
        _with_requirements(lines)
    assert "\n" not in str(err.value)


# --- what the required margins change ------------------------------------------------------

def test_required_margins_decide_feasibility_but_leave_the_margins_raw():
    plain = parse_study(UTILITY.read_text(encoding="utf-8"), str(UTILITY))
    asked = _with_requirements("margins = { takeoff_field = 0.05, climb_rate = 0.10 }")
    batch = _batch(plain)
    f0, f1 = size_frame(plain, *batch), size_frame(asked, *batch)
    names = active_constraints(asked.spec)
    assert names == active_constraints(plain.spec)
    margins = [f"margin_{c}" for c in names]
    # the margin columns are the raw margins, bit for bit
    assert np.array_equal(f0[margins].to_numpy(), f1[margins].to_numpy())
    M = f1[margins].to_numpy(float)
    req = required_margins(asked.spec)
    assert np.array_equal(f1["feasible"].to_numpy(bool), np.all(M >= req, axis=1))
    # the margins bite: some designs meet every raw limit but not the asked margins
    newly_out = f0["feasible"].to_numpy(bool) & ~f1["feasible"].to_numpy(bool)
    assert newly_out.sum() > 0 and f1["feasible"].sum() > 0
    closed = M[:, 0] >= 0
    expected = np.asarray(names, dtype=object)[np.argmin(M - req, axis=1)]
    assert np.array_equal(f1["limiting_constraint"].to_numpy(object)[closed], expected[closed])
    # the search's constraints: G = required - margin (<= 0 met)
    _, G = objectives_and_constraints(asked, f1)
    assert np.allclose(G, req - M, rtol=0, atol=1e-15)
    _, G0 = objectives_and_constraints(plain, f0)
    assert np.array_equal(G0, -f0[margins].to_numpy(float))


def test_span_limit_margin_and_code_letter_column():
    asked = _with_requirements('max_span = "13.5 m"')
    plain = parse_study(UTILITY.read_text(encoding="utf-8"), str(UTILITY))
    designs = pd.read_csv(PROBLEMS / "high_strip_utility_designs.csv")
    f1, f0 = evaluate(asked, designs), evaluate(plain, designs)
    span = f1["span_m"].to_numpy(float)
    assert np.allclose(f1["margin_span"], 1.0 - span / 13.5, rtol=1e-15, atol=1e-15)
    assert (f1["margin_span"] < 0).any() and (f1["margin_span"] > 0).any()
    assert not f1.loc[f1["margin_span"] < 0, "feasible"].any()
    assert list(f1["aerodrome_code_letter"]) == list(aerodrome_code_letter(span))
    cols = list(f1.columns)
    assert cols[cols.index("span_m") + 1] == "aerodrome_code_letter"
    # without max_span: no span constraint, no code-letter column, nothing else changed
    assert "aerodrome_code_letter" not in f0 and "margin_span" not in f0
    assert "span" not in active_constraints(plain.spec)
    same = [c for c in f0.columns if c != "feasible" and c != "limiting_constraint"
            and c != "most_violated"]
    pd.testing.assert_frame_equal(f0[same], f1[same])


def test_design_sheet_judges_margins_against_the_required_ones():
    from optimiser.report.sheet import binding_constraints, design_sheet, sheet_markdown
    asked = _with_requirements('margins = { takeoff_field = 0.05 }\nmax_span = "15 m"')
    batch = _batch(asked, n=600)
    frame = size_frame(asked, *batch)
    M = frame["margin_takeoff_field"].to_numpy(float)
    between = np.flatnonzero((M > 0.0) & (M < 0.05))
    assert between.size
    design = frame.iloc[int(between[0])]
    sheet = design_sheet(asked, design)
    row = sheet[sheet["quantity"] == "margin_takeoff_field"].iloc[0]
    assert row["status"].startswith("violated")  # positive but short of the asked 5 %
    assert "required 5.0%" in row["meaning"]
    letter = sheet[sheet["quantity"] == "aerodrome_code_letter"].iloc[0]
    assert letter["value"] == str(aerodrome_code_letter(float(design["span_m"])))
    assert "takeoff_field" in binding_constraints(asked, design)
    md = sheet_markdown(asked, design, "a design")
    assert "| constraint | margin | required | status |" in md
    assert f"{M[between[0]]:+.1%} | 5.0% | violated" in md


def test_constraint_diagram_lines_sit_at_the_required_margin():
    from optimiser.report.html import diagram_data
    asked = _with_requirements("margins = { takeoff_field = 0.05 }")
    frame = size_frame(asked, *_batch(asked, n=200))
    design = frame.iloc[int(np.argmax(frame["margin_takeoff_field"].to_numpy(float)))]
    data = diagram_data(asked, design, n=60)
    line = next(ln for ln in data["lines"] if ln["name"] == "takeoff_field")
    pts = np.array([p for seg in line["pts"] for p in seg])[::5]
    flap = asked.spec.high_lift_names.index(design["flap"])
    on_line = size_frame(asked, pts[:, 0], pts[:, 1],
                         np.full(len(pts), float(design["aspect_ratio"])),
                         np.full(len(pts), flap))
    # linear interpolation on a 60 x 60 grid puts most of the line within 0.5 % of margin
    # of 5 %; a contour also runs along the jump where the mass stops closing (margins there
    # are of the capped mass), hence "most"
    m = on_line["margin_takeoff_field"].to_numpy(float)
    assert np.mean(np.abs(m - 0.05) < 5e-3) > 0.7
    assert np.median(m) == pytest.approx(0.05, abs=1e-3)
