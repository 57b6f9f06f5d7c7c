"""Meta-tests: layer rule, documentation coverage, and the caution text.

Source of the rules checked: the project's own DEVELOPERS.md (layers, documented keys and
columns) and README caution; the method names dispatch as published (Nita & Scholz 2012,
Obert 2009, McCormick 1995, Wieselsberger; from memory where DEVELOPERS.md says so)."""

import subprocess
import sys
from dataclasses import fields
from pathlib import Path

import pandas as pd
import pytest

import optimiser
from optimiser import spec as S
from optimiser import columns
from optimiser.columns import COLUMN_DOCS, CONSTRAINT_LABELS
from optimiser.evaluation import CAUTION, evaluate
from optimiser.physics import aerodynamics
from optimiser.study import _SECTIONS, load_study, toml_key

ROOT = Path(__file__).resolve().parent.parent
STUDIES = ("high_strip_utility", "twin_turboprop_commuter", "light_twin_jet")


def test_physics_imports_nothing_above_it():
    # layer rule of DEVELOPERS.md: physics never imports pymoo, pandas, pint, TOML or the study
    code = ("import sys, optimiser.physics.performance, optimiser.physics.weights, "
            "optimiser.physics.mission, optimiser.physics.highlift, "
            "optimiser.physics.propulsion, optimiser.physics.aerodynamics, "
            "optimiser.physics.atmosphere; "
            "bad = [m for m in ('pymoo', 'pandas', 'pint', 'tomllib', 'matplotlib', "
            "'optimiser.study', 'optimiser.sizing', 'optimiser.evaluation') if m in sys.modules]; "
            "print(','.join(bad))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


@pytest.mark.parametrize("name", STUDIES)
def test_every_output_column_is_documented(name):
    study = load_study(ROOT / "problems" / f"{name}.toml")
    frame = evaluate(study, pd.read_csv(ROOT / "problems" / f"{name}_designs.csv"))
    undocumented = [c for c in frame.columns
                    if c not in COLUMN_DOCS and not (c.startswith("margin_")
                                                     and c[7:] in CONSTRAINT_LABELS)]
    assert undocumented == []


def test_every_study_key_is_in_the_contributor_guide():
    guide = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    missing = []
    for section, cls in _SECTIONS.items():
        for f in fields(cls):
            key = toml_key(f.name, f.metadata.get("unit"))
            if f"`{key}`" not in guide:
                missing.append(f"[{section}] {key}")
    assert missing == []


def test_registered_methods_are_documented_and_dispatch():
    # every registry key dispatches (no silent fallback) and the guide names the registries
    for key in aerodynamics.OSWALD_METHODS:
        e = aerodynamics.oswald_factor(key, 8.0, 0.45, 0.0, 0.12, 0.2, 0.804)
        assert 0.5 < float(e) < 1.0
    for key in aerodynamics.GROUND_EFFECT_METHODS:
        phi = aerodynamics.ground_effect_factor(key, 0.1)
        assert 0.0 < float(phi) < 1.0
    with pytest.raises(ValueError, match="choose one of"):
        aerodynamics.oswald_factor("nope", 8.0, 0.45, 0.0, 0.12, 0.2, 0.804)


def test_caution_text_is_in_readme_and_api():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    assert "not for certification, airworthiness or" in readme
    assert optimiser.CAUTION == CAUTION
    assert "licensed engineering practice" in CAUTION


def test_family_defaults_fill_every_optional_field():
    # a study that omits every optional value still gives a complete spec (no None reaches
    # the sizing layer)
    for name in STUDIES:
        spec = load_study(ROOT / "problems" / f"{name}.toml").spec
        for part in (spec.propulsion, spec.aerodynamics, spec.weights, spec.mission):
            for f in fields(part):
                value = getattr(part, f.name)
                family = spec.propulsion.family
                irrelevant = (family == "turbofan" and f.name in (
                    "sfc_cruise", "propeller_efficiency_cruise", "propeller_efficiency_climb",
                    "propeller_rpm_cruise", "propeller_rpm_takeoff", "engine_specific_mass")) or (
                    family != "turbofan" and f.name in (
                        "tsfc_cruise", "engine_thrust_to_weight", "engine_installation_factor"))
                assert value is not None or irrelevant, f"{name}: {f.name} is None"
    assert set(S.FAMILY_DEFAULTS) == set(S.PROPULSION_FAMILIES)


def test_column_reference_in_the_guide_is_generated_from_the_schema():
    # DEVELOPERS.md's "Output columns of `evaluate`" is `python -m optimiser.columns --markdown`
    guide = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    start = guide.index("## Output columns of `evaluate`")
    end = guide.find("\n## ", start + 1)
    section = guide[start:] if end < 0 else guide[start:end + 1]
    assert section == columns.markdown(), "run: python -m optimiser.columns --markdown"
    out = subprocess.run([sys.executable, "-m", "optimiser.columns", "--markdown"],
                         capture_output=True, text=True, check=True)
    assert out.stdout == columns.markdown()


def test_results_schema_is_pure_data():
    # the schema sits below sizing: importing it pulls no numpy, pandas, matplotlib or pymoo
    code = ("import sys, optimiser.columns; "
            "bad = [m for m in ('numpy', 'pandas', 'matplotlib', 'pymoo', 'pint', "
            "'optimiser.sizing', 'optimiser.study') if m in sys.modules]; print(','.join(bad))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_schema_units_follow_the_column_names():
    # the name's unit suffix and the Column's unit agree (DEVELOPERS.md conventions)
    suffix_unit = {"_kg": "kg", "_m": "m", "_m2": "m^2", "_kW": "kW", "_kN": "kN", "_N": "N",
                   "_m_s": "m/s", "_m_s2": "m/s^2", "_kg_m3": "kg/m^3", "_N_m2": "N/m^2",
                   "_N_kW": "N/kW"}
    for c in columns.COLUMNS:
        suffix = next((s for s in sorted(suffix_unit, key=len, reverse=True)
                       if c.name.endswith(s)), None)
        if suffix is not None:
            assert c.unit == suffix_unit[suffix], c.name
    assert columns.heading("wing_area_m2") == "wing area [m²]"
    assert columns.plot_label("engine_power_kW") == "installed engine power, all engines [kW]"
    assert columns.engine_size_column(False) == "engine_thrust_kN"
    assert set(columns.OBJECTIVES) == {"trip_fuel", "engine_size", "maintenance", "takeoff_mass"}


@pytest.mark.parametrize("module", ["decide", "campaign", "robust", "runs", "evaluation",
                                    "sizing", "columns"])
def test_layers_below_reporting_draw_no_figure(module):
    # DEVELOPERS.md layers: reporting owns every figure; nothing below it imports report or
    # matplotlib (not even inside a function). runs.finish still calls report.write_plots
    # for the run's own plots (allowed here until the run loop is split).
    import ast
    tree = ast.parse((ROOT / "optimiser" / f"{module}.py").read_text(encoding="utf-8"))
    imported = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            imported.add(("." * node.level) + (node.module or ""))
        elif isinstance(node, ast.Import):
            imported.update(a.name for a in node.names)
    allowed = {".report.plots"} if module == "runs" else set()
    bad = {m for m in imported if (m.startswith(".report") or m.startswith("matplotlib"))
           and m not in allowed}
    assert bad == set()
