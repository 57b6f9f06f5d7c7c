"""Chance-constrained search (``[search] reliability``, ``optimiser run --reliability``).

Source: the binomial proportion and its Wilson score interval
(E. B. Wilson, "Probable inference, the law of succession, and statistical inference",
J. Amer. Statist. Assoc. 22, 1927, 209-212); the order-statistic form of "at least a share R
of the samples meet it" is exact counting (ours, see optimiser.chance); "with every width
zero the run is the deterministic one" is this project's own requirement.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest

import optimiser
from optimiser.chance import ChanceEvaluator, ChanceSetting, constrained
from optimiser.cli import main
from optimiser.runfolder.checkpoint import load_checkpoint
from optimiser.study import bundled_study_path, load_study, parse_study

BUDGET = dict(seed=4, population=48, generations=8)
R = 0.9


@pytest.fixture(scope="module")
def chance_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("chance") / "run"
    study = load_study(bundled_study_path())
    result = optimiser.optimise(study, out=out, reliability=R, **BUDGET)
    return study, result, out


@pytest.mark.parametrize("samples, reliability", [(200, 0.95), (10, 0.5), (37, 0.9),
                                                  (1000, 0.99), (3, 0.34)])
def test_order_statistic_is_at_least_zero_exactly_when_the_share_meets_r(samples,
                                                                          reliability):
    setting = ChanceSetting(reliability, samples, 0)
    rng = np.random.default_rng(samples)
    for _ in range(200):
        s = rng.normal(rng.normal(0, 0.5), 1.0, samples)
        s[rng.random(samples) < 0.05] = 0.0  # ties at the threshold count as met
        share = np.count_nonzero(s >= 0) / samples
        order = np.sort(s)[setting.order_index] if setting.order_index < samples else np.inf
        assert (order >= 0) == (share >= reliability - 1e-12)


def test_every_front_design_meets_the_reliability(chance_run):
    study, result, _ = chance_run
    front = result.front
    assert len(front) > 3
    for c in constrained(study.spec):
        p = front[f"probability_{c}"].to_numpy()
        assert np.all(p >= R), c
        low, high = front[f"probability_{c}_low"], front[f"probability_{c}_high"]
        assert np.all((low <= p) & (p <= high)), c
    assert front["meets_reliability"].all()
    assert result.chance == {"reliability": R, "samples": 200,
                             "interval_half_width": pytest.approx(0.0419, abs=5e-4)}
    # Wilson 95 % at p = 0.9, n = 200: centre 0.8936, half-width 0.0419 (by hand)


def test_fresh_samples_confirm_the_probabilities(chance_run):
    """The front's probabilities re-estimated on 2000 fresh, independent samples fall inside
    the run's Wilson 95 % intervals for most (design, constraint) pairs. Each pair misses
    with about 5 % chance (plus the fresh estimate's own spread, ~1/3 of the run's), and the
    front's designs are selected near the threshold, which biases their estimates upwards
    (a winner's curse); at least 80 % within is asked."""
    study, result, _ = chance_run
    front = result.front
    fresh = ChanceEvaluator(study, ChanceSetting(R, 2000, 987654))
    flap = np.array([study.spec.high_lift_names.index(f) for f in front["flap"]])
    from optimiser.search import objectives_and_constraints
    _, G = objectives_and_constraints(study, front)
    again = fresh({c: front[c].to_numpy() for c in front.columns}, flap, G)
    inside = total = 0
    for c in constrained(study.spec):
        p = again.met_counts[c] / 2000
        low, high = front[f"probability_{c}_low"], front[f"probability_{c}_high"]
        varying = front[f"probability_{c}"].to_numpy() < 1.0
        inside += int(np.sum(((p >= low) & (p <= high))[varying]))
        total += int(varying.sum())
    assert total >= 5
    assert inside >= 0.8 * total


def _zero_width_study():
    text = bundled_study_path().read_text()
    table = ('[uncertainty]\ncd0_clean = { distribution = "normal", std = 0 }\n'
             'sfc = { distribution = "normal", mean = 1.0, std = 0 }\n'
             'empty_mass_factor = { distribution = "normal", std = 0.0 }\n\n')
    text = re.sub(r"\[uncertainty\].*?\n\n", table, text, count=1, flags=re.S)
    return parse_study(text, str(bundled_study_path()))


def test_zero_widths_give_the_deterministic_run(tmp_path):
    study = _zero_width_study()
    plain = optimiser.optimise(study, out=tmp_path / "plain", **BUDGET)
    chance = optimiser.optimise(study, out=tmp_path / "chance", reliability=0.95, **BUDGET)
    a = pd.read_csv(tmp_path / "plain" / "evaluations.csv")
    b = pd.read_csv(tmp_path / "chance" / "evaluations.csv")
    pd.testing.assert_frame_equal(a, b[a.columns], check_exact=True)
    assert (b["meets_reliability"] == b["feasible"]).all()
    pd.testing.assert_frame_equal(plain.front, chance.front[plain.front.columns],
                                  check_exact=True)


def test_the_checkpoint_keeps_the_setting(chance_run):
    _, _, out = chance_run
    state = load_checkpoint(out)
    assert state.chance == ChanceSetting(R, 200, BUDGET["seed"])


@pytest.mark.parametrize("value", ["0", "1.5", "1", "-0.2"])
def test_bad_reliability_is_a_one_line_error(tmp_path, capsys, value):
    out = tmp_path / "run"
    code = main(["run", "--out", str(out), "--gens", "2", "--pop", "8", "--reliability", value])
    err = capsys.readouterr().err
    assert code == 2
    assert "--reliability" in err and "expected a probability greater than 0 and less than 1" \
        in err and len(err.strip().splitlines()) == 1
    assert not out.exists()


def test_reliability_without_uncertainty_is_refused(tmp_path, capsys):
    text = bundled_study_path().read_text()
    text = re.sub(r"\[uncertainty\].*?\n\n", "", text, count=1, flags=re.S)
    path = tmp_path / "s.toml"
    path.write_text(text)
    code = main(["run", str(path), "--out", str(tmp_path / "run"), "--gens", "2",
                 "--reliability", "0.9"])
    err = capsys.readouterr().err
    assert code == 2 and "no uncertain assumption" in err
    assert len(err.strip().splitlines()) == 1


def test_study_reliability_must_be_a_probability(tmp_path, capsys):
    text = bundled_study_path().read_text().replace("[search]", "[search]\nreliability = \"high\"", 1)
    path = tmp_path / "s.toml"
    path.write_text(text)
    code = main(["check", str(path)])
    err = capsys.readouterr().err
    assert code == 2 and "[search] reliability" in err and "'high'" in err


def test_an_interrupted_chance_run_resumes_to_the_same_files(tmp_path):
    """Stopped after its third generation (a KeyboardInterrupt from the progress callback, as
    Ctrl-C) and resumed, a chance-constrained run ends with the same archive and front as
    the run left alone: the samples come from the run's seed, not from the process."""
    from optimiser.errors import RunInterrupted
    study = load_study(bundled_study_path())
    whole = tmp_path / "whole"
    optimiser.optimise(study, out=whole, reliability=R, **BUDGET)

    def stop(row, state):
        if row["generation"] == 3:
            raise KeyboardInterrupt

    cut = tmp_path / "cut"
    with pytest.raises(RunInterrupted):
        optimiser.optimise(study, out=cut, reliability=R, progress=stop, **BUDGET)
    optimiser.resume(cut)
    for name in ("evaluations.csv", "front.csv"):
        assert (whole / name).read_bytes() == (cut / name).read_bytes(), name


def test_the_decision_commands_read_a_chance_front(chance_run):
    # front.csv of a chance-constrained run carries meets_reliability (true/false): pick,
    # flaps and report read it back as a flag (they refused it as "expected a number")
    from optimiser.runfolder import load_run
    study, _, out = chance_run
    run = load_run(out)
    assert run.front["meets_reliability"].dtype == bool and run.front["meets_reliability"].all()
    assert main(["pick", str(out), "--force"]) == 0
    assert main(["report", str(out), "--force"]) == 0


def test_the_report_lists_the_sampled_conditions_with_their_units():
    # the [uncertainty] table's conditions shown with their SI unit (20 kn = 10.2889 m/s,
    # 1852/3600 m/s per knot), the factors without one
    from optimiser.report.html import _uncertainty_html
    text = bundled_study_path().read_text(encoding="utf-8").replace(
        "[uncertainty]", '[uncertainty]\nheadwind = { distribution = "uniform", low = "-10 kn", '
        'high = "20 kn" }', 1)
    page = _uncertainty_html(parse_study(text, "s.toml"))
    assert "high = 10.2889 m/s" in page and "assumption or condition" in page
    assert "std = 0.08," in page or "std = 0.08<" in page
