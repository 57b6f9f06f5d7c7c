"""Command-line inputs that a user types: durations for --time, and mass units given where a
force per area or per power is needed.

Source: exact unit definitions (1 lbf = 0.45359237 kg x 9.80665 m/s^2, 1959 international pound
and the 3rd CGPM standard gravity); durations are plain arithmetic (1 min = 60 s, 1 h = 3600 s).
"""

from __future__ import annotations

import argparse
import subprocess
import sys
from pathlib import Path

import pytest

from optimiser.cli import _duration, _rejoin_split_duration
from optimiser.errors import UsageError
from optimiser.study import StudyError, parse_study

DEFAULT = Path(__file__).resolve().parents[1] / "problems" / "high_strip_utility.toml"


@pytest.mark.parametrize("text,seconds", [
    ("90", 90.0), ("90s", 90.0), ("90 s", 90.0), ("90 sec", 90.0), ("2 seconds", 2.0),
    ("5min", 300.0), ("5 min", 300.0), ("5 minutes", 300.0), ("45m", 2700.0),
    ("8h", 28800.0), ("8 hours", 28800.0), ("1h30m", 5400.0), ("1 h 30 min", 5400.0),
    ("1.5h", 5400.0), (" 2 MIN ", 120.0),
])
def test_durations_a_user_types(text, seconds):
    assert _duration(text) == pytest.approx(seconds, rel=1e-15)


@pytest.mark.parametrize("text", ["5 mn", "min", "5 min 3", "0", "0s", "-5 min", "5 days", ""])
def test_durations_refused_with_the_forms_that_work(text):
    with pytest.raises(UsageError, match=r"--time: got .*expected"):
        _duration(text)


def test_unquoted_time_with_a_space_is_joined_back():
    # `optimiser run --time 5 min` gives study='min' and time='5'
    args = argparse.Namespace(time="5", study="min")
    _rejoin_split_duration(args)
    assert (args.time, args.study) == ("5 min", None)
    kept = argparse.Namespace(time="5", study=str(DEFAULT))
    _rejoin_split_duration(kept)
    assert (kept.time, kept.study) == ("5", str(DEFAULT))


def test_run_time_with_a_space_through_the_command_line(tmp_path):
    done = subprocess.run([sys.executable, "-m", "optimiser", "run", "--time", "5 min",
                           "--pop", "12", "--gens", "1", "--out", str(tmp_path / "run")],
                          capture_output=True, text=True, cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert (tmp_path / "run" / "front.csv").exists()


@pytest.mark.parametrize("old,new,hint", [
    ('wing_loading = ["500 N/m^2"', 'wing_loading = ["10 lb/ft^2"', "lbf/ft^2 or kgf/m^2"),
    ('power_loading = ["45 N/kW"', 'power_loading = ["10 lb/hp"', "lbf/hp or kgf/kW"),
])
def test_mass_unit_for_a_loading_gets_a_force_hint(old, new, hint):
    text = DEFAULT.read_text()
    assert old in text
    with pytest.raises(StudyError) as err:
        parse_study(text.replace(old, new), DEFAULT.name)
    message = str(err.value)
    assert "\n" not in message and "a force is needed" in message and hint in message


def test_pound_force_per_square_foot_is_read_exactly():
    text = DEFAULT.read_text().replace('wing_loading = ["500 N/m^2"', 'wing_loading = ["10 lbf/ft^2"')
    study = parse_study(text, DEFAULT.name)
    lbf_ft2 = 0.45359237 * 9.80665 / 0.3048 ** 2     # N/m^2, exact definitions
    wing = [v for v in study.variables if v.column == "wing_loading_N_m2"][0]
    assert wing.lower == pytest.approx(10 * lbf_ft2, rel=1e-12)


def _evaluate(*args, cwd):
    return subprocess.run([sys.executable, "-m", "optimiser", "evaluate", str(DEFAULT), *args],
                          capture_output=True, text=True, cwd=cwd)


@pytest.mark.parametrize("args,message", [
    (["--design", ""], "--design: got '' (empty); expected name=value pairs"),
    (["--design", "   "], "--design: got '   ' (empty)"),
    (["--design", "wing_loading_N_m2=900 wing_loading_N_m2=1000 power_loading_N_kW=60 "
                  "aspect_ratio=8 flap=plain"],
     "--design: 'wing_loading_N_m2' is given twice ('900' and '1000'); expected each name once"),
    (["--design", "wing_loading_N_m2=900 power_loading_N_kW=60 aspect_ratio=8 flap=plain",
      "--designs", "x.csv"], "--design and --designs: got both"),
    # outside the model's valid range (optimiser.sizing.inputs.MODEL_RANGES: A 3 to 20), or
    # not finite: refused, never sized at the clipped value
    (["--design", "wing_loading_N_m2=900 power_loading_N_kW=60 aspect_ratio=40 flap=plain"],
     "--design: column 'aspect_ratio': got '40'; expected a number from 3 to 20 (the model's "
     "valid range; "),
    (["--design", "wing_loading_N_m2=nan power_loading_N_kW=60 aspect_ratio=8 flap=plain"],
     "--design: column 'wing_loading_N_m2': got 'nan'; expected a finite number from 100 to "
     "12000 (the model's valid range; "),
])
def test_evaluate_design_option_refusals(tmp_path, args, message):
    done = _evaluate(*args, "--out", tmp_path / "out.csv", cwd=tmp_path)
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert done.stderr.count("\n") == 1 and message in done.stderr
    assert list(tmp_path.iterdir()) == []  # nothing written


def test_evaluate_refuses_a_repeated_column(tmp_path):
    path = tmp_path / "d.csv"
    path.write_text("wing_loading_N_m2,power_loading_N_kW,aspect_ratio,flap,aspect_ratio\n"
                    "900,60,8,plain,9\n")
    done = _evaluate("--designs", path, cwd=tmp_path)
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert "column 'aspect_ratio' appears 2 times" in done.stderr


def test_evaluate_refuses_an_over_long_field(tmp_path):
    path = tmp_path / "d.csv"
    path.write_text("wing_loading_N_m2,power_loading_N_kW,aspect_ratio,flap\n"
                    f"900,60,8,\"{'x' * 200_000}\"\n")
    done = _evaluate("--designs", path, cwd=tmp_path)
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert "not a readable CSV table" in done.stderr and done.stderr.count("\n") == 1


@pytest.mark.parametrize("folder", ["plain", "with space", "semi;colon", "quote'd", "$(touch x)"])
def test_printed_resume_command_is_quoted_for_the_shell(tmp_path, folder):
    # a folder name with shell characters must come back as one word and run nothing
    # (POSIX shell quoting, as shlex.quote gives it)
    from optimiser.errors import RunInterrupted
    run_dir = tmp_path / folder
    message = str(RunInterrupted(run_dir))
    command = message.split("resume it with: ", 1)[1]
    done = subprocess.run(["sh", "-c", f"printf '%s\\n' {command}"], capture_output=True,
                          text=True, cwd=tmp_path)
    assert done.stdout.splitlines() == ["optimiser", "resume", str(run_dir)]
    assert not (tmp_path / "x").exists()
