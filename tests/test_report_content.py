"""What the run report states: every value the sizing used (as given, in SI, and each
default marked with its origin), the certification basis and its numbers, the uncertainty
table, and figures as SVG (crisp, self-contained).

Source: the project's own rules for what the report must state; the 50 ft screen height of
14 CFR 23.53 for the part23 takeoff (as optimiser.physics.performance has it); exact unit
definitions (1 kn = 1852/3600 m/s).
"""

from __future__ import annotations

import base64
import re
from pathlib import Path

import pytest

import optimiser
from optimiser.report.html import write_report
from optimiser.runfolder import load_run
from optimiser.study import load_study

PROBLEMS = Path(__file__).resolve().parents[1] / "problems"


@pytest.fixture(scope="module")
def page(tmp_path_factory):
    study = load_study(PROBLEMS / "high_strip_utility.toml")
    out = tmp_path_factory.mktemp("report") / "run"
    optimiser.optimise(study, out=out, plots=False, population=12, generations=4)
    return write_report(load_run(out)).read_text("utf-8")


def _section(page, sid):
    m = re.search(rf"<section id='{sid}'>(.*?)</section>", page, re.S)
    assert m, sid
    return m.group(1)


def test_requirements_show_each_value_as_given_and_in_si(page):
    req = _section(page, "requirements")
    assert "<td>stall_speed</td><td>&quot;61 kn&quot;</td><td>31.3811 m/s</td>" in req
    # a default is marked with where it came from
    assert re.search(r"<tr class='default'><td>obstacle_height</td><td></td><td>15.24 m</td>"
                     r"<td>default: the certification basis</td>", req)
    assert "<td>propeller_efficiency_cruise</td><td></td><td>0.8</td><td>default: piston " \
           "default</td>" in req


def test_certification_and_uncertainty_are_stated(page):
    cert = _section(page, "certification")
    assert "Certification basis <b>part23</b>" in cert
    assert "all-engines climb gradient required" in cert and "0.083" in cert
    assert "screen height at departure</td><td>15.24 m" in cert
    unc = _section(page, "uncertainty")
    assert "10000 samples" in unc and "<td>cd0_clean</td><td>normal</td>" in unc


def test_figures_are_svg(page):
    uris = re.findall(r"src='data:image/([a-z+]+);base64,([A-Za-z0-9+/=]+)'", page)
    assert uris and all(kind == "svg+xml" for kind, _ in uris)
    svg = base64.b64decode(uris[0][1]).decode("utf-8")
    assert svg.lstrip().startswith("<?xml") and "<svg" in svg
    assert "Conceptual-design estimate only" in svg      # the footer's caution, as text
