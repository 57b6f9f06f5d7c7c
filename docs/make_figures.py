"""Regenerate the README's figures (docs/images/*.png) from the bundled demo studies.

Runs the default study at its own budget and seed, and a two-axis sweep of the bundled
campaign on a small budget, with the tool's own command line, and copies their figures here:
the constraint diagram at a representative front design, the front view, the knee design's
tornado chart, payload-range chart and frozen-design robustness, and the campaign's carpet
plot. SOURCE_DATE_EPOCH fixes the time in the figures' footers, so the images change only
when the model or the figures do.

    python docs/make_figures.py
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parent
IMAGES = HERE / "images"


def _cli(*args, cwd):
    env = dict(os.environ, MPLBACKEND="Agg", SOURCE_DATE_EPOCH="1798761600")
    done = subprocess.run([sys.executable, "-m", "optimiser", *map(str, args)], cwd=cwd,
                          env=env, capture_output=True, text=True)
    if done.returncode != 0:
        raise SystemExit(f"optimiser {' '.join(map(str, args))} failed:\n{done.stderr[-2000:]}")


def main():
    IMAGES.mkdir(exist_ok=True)
    with tempfile.TemporaryDirectory() as tmp:
        root = Path(tmp)
        run = root / "run"
        _cli("run", REPO / "problems" / "high_strip_utility.toml", "--out", run, cwd=root)
        shutil.copyfile(run / "plots" / "constraint_diagram.png", IMAGES / "constraint_diagram.png")
        shutil.copyfile(run / "plots" / "front_view.png", IMAGES / "front_view.png")
        _cli("sensitivity", run, cwd=root)
        shutil.copyfile(run / "sensitivity-knee" / "tornado.png", IMAGES / "tornado.png")
        _cli("pick", run, cwd=root)
        pick = run / "pick-knee"
        shutil.copyfile(pick / "payload_range.png", IMAGES / "payload_range.png")
        _cli("robust", REPO / "problems" / "high_strip_utility.toml", "--front",
             pick / "design_input.csv", "--out", root / "robust", cwd=root)
        shutil.copyfile(root / "robust" / "constraint_probability.png",
                        IMAGES / "robust_frozen.png")
        shutil.copyfile(REPO / "problems" / "high_strip_utility.toml", root / "high_strip_utility.toml")
        text = (REPO / "problems" / "strip_requirements.campaign.toml").read_text("utf-8")
        text = text.replace("population = 60", "population = 40").replace("generations = 30",
                                                                          "generations = 15")
        (root / "campaign.toml").write_text(text, "utf-8")
        _cli("sweep", root / "campaign.toml", "--out", root / "sweep", "--serial", cwd=root)
        shutil.copyfile(root / "sweep" / "plots" / "carpet.png", IMAGES / "carpet.png")
    for p in sorted(IMAGES.glob("*.png")):
        print(f"wrote {p.relative_to(REPO)} ({p.stat().st_size // 1024} kB)")


if __name__ == "__main__":
    main()
