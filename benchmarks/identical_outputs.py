"""Prove that a change leaves every output file bit-identical.

Runs the command line on the three demo studies (run, pick, flaps, report, evaluate, robust) and
on a small campaign, with fixed seeds and small budgets, and records the SHA-256 of every file it
writes. ``--save`` stores the table as the baseline; ``--check`` (the default) compares against it
and prints one row per file that differs, is missing or is new.

Files that carry the clock or the machine (run.json, campaign.json, report.html, robust JSON) are
compared after the fields that hold times, durations, versions and paths are blanked.

    python benchmarks/identical_outputs.py --save     # on the commit before the change
    python benchmarks/identical_outputs.py            # after it: prints a table, exits 1 on a difference
"""

from __future__ import annotations

import argparse
import hashlib
import json
import os
import re
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parent
BASELINE = HERE / "identical_outputs.json"
STUDIES = ["high_strip_utility", "twin_turboprop_commuter", "light_twin_jet"]
# keys whose values follow the clock, the machine or the folder, not the model
VOLATILE = re.compile(r'"(started|finished|created|written|elapsed_s|wall_s|seconds|time_s|'
                      r'versions|python|platform|host|pid|run_dir|out|path|folder|eta_s|'
                      r'[a-z_]*_utc|[a-z_]*_seconds|[a-z_]*_s)"\s*:\s*'
                      r'("[^"]*"|[-0-9.eE+]+|\{[^{}]*\}|null)')
TIMESTAMP = re.compile(r"\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:?\d{2}| UTC)?")
CHECKPOINTS = ("checkpoint.pkl", "checkpoint.npz")   # the run state, not an output
DURATION = re.compile(r"\b\d+(\.\d+)? ?(s|ms|min)\b")


def _cli(*args, cwd):
    env = dict(os.environ, MPLBACKEND="Agg", PYTHONHASHSEED="0",
               SOURCE_DATE_EPOCH="1798761600")  # the figures' footers carry the run's time
    done = subprocess.run([sys.executable, "-m", "optimiser", *map(str, args)], cwd=cwd,
                          env=env, capture_output=True, text=True)
    if done.returncode != 0:
        raise SystemExit(f"optimiser {' '.join(map(str, args))} failed:\n{done.stderr[-2000:]}")
    return done.stdout


NEW_RUN_INFO_KEYS = ("run_id", "files")
"""Fields run.json gained deliberately (issue 13): the random run id and the records of the
folder's files. They are taken out before run.json is compared, so every other field must
still match the baseline."""


def _normalised(path: Path, root: Path) -> bytes:
    data = path.read_bytes()
    if path.name == "run.json":   # written as json.dumps(indent=2) + newline
        info = json.loads(data)
        for key in NEW_RUN_INFO_KEYS:
            info.pop(key, None)
        data = (json.dumps(info, indent=2) + "\n").encode()
    if path.name == "history.csv":   # its last column is the wall-clock time
        lines = data.decode().splitlines()
        return "\n".join(line.rsplit(",", 1)[0] for line in lines).encode()
    if path.suffix in {".png", ".pdf"}:
        return data   # matplotlib metadata is fixed by the figure helper (no dates)
    if path.suffix in {".json", ".html", ".md", ".txt", ".svg", ".toml"}:
        text = data.decode("utf-8", errors="replace")
        text = text.replace(str(root), "<ROOT>").replace(str(REPO), "<REPO>")
        text = VOLATILE.sub(lambda m: f'"{m.group(1)}": "<volatile>"', text)
        if path.suffix in {".svg", ".html"}:
            text = re.sub(r"<dc:date>[^<]*</dc:date>", "", text)
            text = re.sub(r"[0-9a-f]{10}\b", "<id>", text)   # matplotlib's random SVG ids
        text = TIMESTAMP.sub("<time>", text)
        if path.suffix in {".md", ".txt", ".html"}:
            text = DURATION.sub("<duration>", text)
        return text.encode()
    return data


def produce(root: Path) -> dict[str, str]:
    """Run every command into ``root``; return {relative path: sha256}."""
    for name in STUDIES:
        study = REPO / "problems" / f"{name}.toml"
        run = root / name
        _cli("run", study, "--out", run, "--pop", 40, "--gens", 8, "--seed", 3,
             "--checkpoint-every", 4, cwd=root)
        _cli("pick", run, cwd=root)
        _cli("flaps", run, cwd=root)
        _cli("report", run, cwd=root)
        _cli("evaluate", study, "--out", root / f"{name}-evaluate.csv", cwd=root)
        if "[uncertainty]" in study.read_text():
            # the re-sizing Monte Carlo the baseline was saved with (frozen is the default now)
            _cli("robust", study, "--front", run / "front.csv", "--row", 1, "--samples", 200,
                 "--mode", "resize", "--out", root / f"{name}-robust", cwd=root)
    campaign = root / "campaign.toml"
    text = (REPO / "problems" / "strip_requirements.campaign.toml").read_text()
    # the base study beside the campaign, named relatively: the sweep's study texts (and
    # their hashes in run.json) do not depend on where the checkout is
    (root / "high_strip_utility.toml").write_bytes(
        (REPO / "problems" / "high_strip_utility.toml").read_bytes())
    text = text.replace("population = 60", "population = 24").replace("generations = 30", "generations = 5")
    text = text.replace('values = ["500 m", "600 m", "700 m", "800 m", "900 m"]', 'values = ["600 m", "800 m"]')
    text = text.replace('values = ["60 m/s", "65 m/s", "70 m/s"]', 'values = ["60 m/s", "70 m/s"]')
    campaign.write_text(text)
    _cli("sweep", campaign, "--out", root / "sweep", "--serial", cwd=root)
    hashes = {}
    for path in sorted(root.rglob("*")):
        if path.is_file() and path not in (campaign, root / "high_strip_utility.toml") \
                and path.name not in CHECKPOINTS:
            rel = path.relative_to(root).as_posix()
            rel = re.sub(r"\d{8}T\d{6}Z?", "<time>", rel)
            hashes[rel] = hashlib.sha256(_normalised(path, root)).hexdigest()
    return hashes


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--save", action="store_true", help="store the hashes as the baseline")
    parser.add_argument("--keep", type=Path, help="write the outputs here instead of a temporary folder")
    args = parser.parse_args(argv)
    if args.keep:
        if args.keep.exists():
            raise SystemExit(f"--keep {args.keep}: exists; expected a new folder")
        args.keep.mkdir(parents=True)
        hashes = produce(args.keep.resolve())
    else:
        with tempfile.TemporaryDirectory() as tmp:
            hashes = produce(Path(tmp).resolve())
    if args.save:
        BASELINE.write_text(json.dumps(hashes, indent=1, sort_keys=True) + "\n")
        print(f"saved {len(hashes)} file hashes to {BASELINE.relative_to(REPO)}")
        return 0
    base = json.loads(BASELINE.read_text())
    rows = []
    for rel in sorted(set(base) | set(hashes)):
        if rel not in hashes:
            rows.append(("missing", rel))
        elif rel not in base:
            rows.append(("new", rel))
        elif base[rel] != hashes[rel]:
            rows.append(("differs", rel))
    print(f"{'status':<9} file")
    for status, rel in rows:
        print(f"{status:<9} {rel}")
    same = len(set(base) & set(hashes)) - sum(1 for s, _ in rows if s == "differs")
    print(f"{same} of {len(base)} baseline files identical; {len(rows)} rows above")
    return 1 if rows else 0


if __name__ == "__main__":
    sys.exit(main())
