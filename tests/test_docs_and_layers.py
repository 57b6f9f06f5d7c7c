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
from optimiser.evaluation import CAUTION, COLUMN_DOCS, evaluate
from optimiser.physics import aerodynamics
from optimiser.sizing import CONSTRAINT_LABELS
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
                    "propeller_diameter_coefficient", "engine_specific_mass")) or (
                    family != "turbofan" and f.name in (
                        "tsfc_cruise", "engine_thrust_to_weight", "engine_installation_factor"))
                assert value is not None or irrelevant, f"{name}: {f.name} is None"
    assert set(S.FAMILY_DEFAULTS) == set(S.PROPULSION_FAMILIES)
