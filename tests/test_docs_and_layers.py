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
            "optimiser.physics.geometry, optimiser.physics.drag, "
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
                    "propeller_rpm_cruise", "propeller_rpm_takeoff", "engine_specific_mass",
                    "engine_dry_specific_mass")) or (
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


LAYERS = (
    ("leaves", ("physics", "spec", "columns", "errors", "bundled", "display_units")),
    ("loading and sizing", ("study", "quantities", "uncertainty", "study_table", "sizing",
                            "solvers")),
    ("evaluation and search", ("evaluation", "designs", "search", "problem", "preflight",
                               "analysis", "cluster", "chance", "payload_range")),
    ("runs", ("runstate", "runfolder", "loop", "outputs", "runs")),
    ("decision support and campaigns", ("decide", "flaps", "robust", "campaign",
                                        "campaign_file", "compare", "sensitivity")),
    ("reporting", ("report",)),
    ("command line", ("cli", "cli_decide", "cli_campaign", "cli_analyse", "cli_sensitivity",
                      "cli_payload_range", "__main__")),
)
"""The layer order of DEVELOPERS.md, lowest first: a module imports only its own layer or
lower ones. ``optimiser/__init__.py`` (the lazy public API) stands above them all."""
LAYER_OF = {m: i for i, (_, members) in enumerate(LAYERS) for m in members}


def _internal_imports(path: Path, root: Path = ROOT) -> set[str]:
    """Top-level ``optimiser`` subpackages or modules that ``path`` imports, anywhere in it
    (at the top or inside a function: a lazy import is still a dependency)."""
    import ast
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = path.relative_to(root).parts[:-1]          # ('optimiser', 'report'), ...
    found = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom) and node.level:
            target = list(package[:len(package) - node.level + 1])
            target += node.module.split(".") if node.module else []
            if len(target) == 1:                          # from . import a, b
                found.update(a.name for a in node.names)
            else:
                found.add(target[1])
        elif isinstance(node, ast.ImportFrom) and (node.module or "").startswith("optimiser."):
            found.add(node.module.split(".")[1])
        elif isinstance(node, ast.Import):
            found.update(a.name.split(".")[1] for a in node.names
                         if a.name.startswith("optimiser."))
    return found - {"__version__"}


MODULES = sorted(p for p in (ROOT / "optimiser").rglob("*.py")
                 if p != ROOT / "optimiser" / "__init__.py")


def test_every_module_has_a_layer():
    tops = {p.relative_to(ROOT / "optimiser").parts[0].removesuffix(".py") for p in MODULES}
    assert tops - set(LAYER_OF) == set()


@pytest.mark.parametrize("path", MODULES, ids=lambda p: str(p.relative_to(ROOT)))
def test_no_import_points_up_the_layers(path):
    # DEVELOPERS.md: physics <- sizing <- evaluation/search <- runs <- decide/campaign <-
    # report <- cli; a backward import (even a lazy one inside a function) fails here
    me = path.relative_to(ROOT / "optimiser").parts[0].removesuffix(".py")
    upward = {dep: LAYERS[LAYER_OF[dep]][0] for dep in _internal_imports(path)
              if LAYER_OF.get(dep, -1) > LAYER_OF[me]}
    assert upward == {}, f"{LAYERS[LAYER_OF[me]][0]} module imports from above: {upward}"


def test_the_layer_check_catches_a_backward_import(tmp_path):
    # the check itself must see a lazy backward import (a probe module written here)
    probe = tmp_path / "optimiser" / "sizing" / "_layer_probe.py"
    probe.parent.mkdir(parents=True)
    probe.write_text("import numpy\nfrom . import stages_x\nfrom ..physics import atmosphere\n"
                     "def f():\n    from ..report.plots import write_plots\n"
                     "    import optimiser.cli\n    return write_plots\n")
    assert _internal_imports(probe, tmp_path) == {"sizing", "physics", "report", "cli"}
