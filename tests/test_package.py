"""Packaging: the bundled studies are found through importlib.resources, problems/ is their one
copy, ``optimiser studies`` lists and copies them, and the version comes from one place.

Source: the rules checked are the project's pyproject.toml (optimiser.problems mapped onto
problems/, the version read from ``optimiser.__version__``) and README ("Start your own
study"); the CLI's exit status 2 for user errors is the project's own rule (cli.py)."""

import subprocess
import sys
from importlib import metadata
from pathlib import Path

import pytest

import optimiser
from optimiser.bundled import bundled_folder, bundled_names, bundled_path, companion_files
from optimiser.campaign_file import load_campaign
from optimiser.study import DEFAULT_STUDY, StudyError, load_study, tomllib

ROOT = Path(__file__).resolve().parent.parent
PROBLEMS = ROOT / "problems"
SHIPPED = ("*.toml", "*.csv")  # the package-data patterns of pyproject.toml


def cli(*args, cwd):
    return subprocess.run([sys.executable, "-m", "optimiser", *args], cwd=cwd,
                          capture_output=True, text=True, timeout=120)


def shipped_files(folder: Path) -> list[str]:
    return sorted(p.name for pattern in SHIPPED for p in folder.glob(pattern))


def test_pyproject_maps_the_package_onto_problems_and_ships_every_file():
    config = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    assert config["package-dir"] == {"optimiser.problems": "problems"}
    assert "optimiser.problems" in config["packages"]
    assert config["package-data"] == {"optimiser.problems": list(SHIPPED)}
    # nothing in problems/ that would not ship (only the package marker is code)
    everything = sorted(p.name for p in PROBLEMS.iterdir() if p.name != "__pycache__")
    assert everything == sorted(shipped_files(PROBLEMS) + ["__init__.py"])
    # no second copy inside the package
    assert not (ROOT / "optimiser" / "problems").exists()
    assert not (ROOT / "optimiser" / "data").exists()


def test_pyproject_lists_every_subpackage():
    # an explicit packages list must name each folder of optimiser/ that holds code, or a
    # regular (non-editable) install leaves it out
    config = tomllib.loads((ROOT / "pyproject.toml").read_text())["tool"]["setuptools"]
    found = {".".join(p.parent.relative_to(ROOT).parts)
             for p in (ROOT / "optimiser").rglob("__init__.py")}
    assert found | {"optimiser.problems"} == set(config["packages"])


def test_bundled_files_are_the_repository_files_byte_for_byte():
    # editable install: the same folder; regular install: identical copies (no drift)
    folder = bundled_folder()
    assert shipped_files(folder) == shipped_files(PROBLEMS)
    for name in shipped_files(PROBLEMS):
        assert (folder / name).read_bytes() == (PROBLEMS / name).read_bytes(), name


def test_every_bundled_study_and_the_campaign_load_from_the_bundled_folder():
    assert bundled_names() == ["high_strip_utility", "light_twin_jet",
                               "twin_turboprop_commuter", "strip_requirements.campaign"]
    for name in bundled_names()[:3]:
        assert load_study(bundled_path(name)).name == name.replace("_", "-")
    campaign = load_campaign(bundled_path("strip_requirements.campaign.toml"))
    assert Path(campaign.base_study_path) == bundled_path(DEFAULT_STUDY)
    assert len(campaign.combinations) == 5 * 3  # field lengths x cruise speeds of the file


def test_unknown_bundled_name_is_one_line_naming_the_choices():
    with pytest.raises(StudyError, match=r"no bundled study named 'nope'; expected one of "
                                         r"high_strip_utility, light_twin_jet, "):
        bundled_path("nope")


def test_companions_of_a_study_and_of_the_campaign():
    assert [p.name for p in companion_files("light_twin_jet")] == [
        "light_twin_jet.toml", "light_twin_jet_designs.csv"]
    assert [p.name for p in companion_files("strip_requirements.campaign")] == [
        "strip_requirements.campaign.toml", "high_strip_utility.toml",
        "high_strip_utility_designs.csv"]


def test_studies_lists_names_kinds_and_descriptions(tmp_path):
    out = cli("studies", cwd=tmp_path)
    assert out.returncode == 0, out.stderr
    lines = out.stdout.splitlines()
    assert len(lines) == 5  # four bundled files and the hint
    description = tomllib.loads((PROBLEMS / "light_twin_jet.toml").read_text())["description"]
    assert lines[1].split() == ["light_twin_jet", "study", *description.split()]
    assert lines[3].split()[:2] == ["strip_requirements.campaign", "campaign"]


def test_studies_copy_writes_the_study_with_its_comments_and_designs(tmp_path):
    out = cli("studies", "--copy", "twin_turboprop_commuter", "mine", cwd=tmp_path)
    assert out.returncode == 0, out.stderr
    for name in ("twin_turboprop_commuter.toml", "twin_turboprop_commuter_designs.csv"):
        assert (tmp_path / "mine" / name).read_bytes() == (PROBLEMS / name).read_bytes()
    assert (tmp_path / "mine" / "twin_turboprop_commuter.toml").read_text().startswith(
        "# Invented scenario")
    # the copy is a working study: evaluate finds its designs beside it
    out = cli("evaluate", "mine/twin_turboprop_commuter.toml", "--out", "e.csv", cwd=tmp_path)
    assert out.returncode == 0, out.stderr
    rows = (tmp_path / "e.csv").read_text().splitlines()
    designs = (PROBLEMS / "twin_turboprop_commuter_designs.csv").read_text().splitlines()
    assert len(rows) == len(designs)


def test_studies_copy_refuses_to_overwrite_and_keeps_the_file(tmp_path):
    mine = tmp_path / "high_strip_utility_designs.csv"
    mine.write_text("my own designs\n")
    out = cli("studies", "--copy", "high_strip_utility", cwd=tmp_path)
    assert out.returncode == 2
    assert out.stderr.count("\n") == 1 and out.stderr.startswith("error: ")
    assert "high_strip_utility_designs.csv: exists" in out.stderr
    assert mine.read_text() == "my own designs\n"
    assert not (tmp_path / "high_strip_utility.toml").exists()  # nothing half-copied


def test_studies_copy_of_the_campaign_brings_its_base_study(tmp_path):
    out = cli("studies", "--copy", "strip_requirements.campaign", cwd=tmp_path)
    assert out.returncode == 0, out.stderr
    campaign = load_campaign(tmp_path / "strip_requirements.campaign.toml")
    assert Path(campaign.base_study_path).resolve() == (
        tmp_path / "high_strip_utility.toml").resolve()


def test_studies_folder_without_copy_and_unknown_name_exit_2(tmp_path):
    for args in (("studies", "somewhere"), ("studies", "--copy", "nope")):
        out = cli(*args, cwd=tmp_path)
        assert out.returncode == 2 and out.stderr.startswith("error: "), out.stderr
        assert out.stderr.count("\n") == 1
    assert list(tmp_path.iterdir()) == []


def test_version_is_one_value_metadata_cli_and_run_json():
    from optimiser.runfolder.runinfo import versions
    assert metadata.version("optimiser") == optimiser.__version__
    out = cli("--version", cwd=ROOT)
    assert out.stdout.strip() == f"optimiser {optimiser.__version__}"
    assert versions()["optimiser"] == optimiser.__version__
    project = tomllib.loads((ROOT / "pyproject.toml").read_text())
    assert "version" not in project["project"] and project["project"]["dynamic"] == ["version"]
    assert project["tool"]["setuptools"]["dynamic"]["version"] == {
        "attr": "optimiser.__version__"}


def test_readme_keeps_the_two_command_quick_start_and_says_how_to_start_a_study():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    quick = readme.split("## Quick start", 1)[1].split("```sh\n", 1)[1].split("```", 1)[0]
    assert quick.splitlines() == ['pip install -e ".[test]" && optimiser run', "pytest"]
    assert "**Start your own study**" in readme
    assert "`optimiser studies --copy" in readme
