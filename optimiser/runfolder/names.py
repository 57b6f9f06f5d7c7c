"""The names of the files and folders of a run folder: the only place they are spelled.

A run folder (written by ``optimiser run``) holds:

``study.toml``
    the study text the run used (:data:`STUDY`);
``run.json``
    versions, seed, budget, termination, counts, the hypervolume reference and the caution;
    written last, so its presence marks a finished run (:data:`RUN_INFO`);
``front.csv``
    the feasible non-dominated designs over all flap options, every evaluate column
    (:data:`FRONT`); ``least_violating.csv`` replaces it when nothing feasible was found
    (:data:`LEAST_VIOLATING`);
``evaluations.csv``
    every evaluated design, a fixed set of columns (:data:`ARCHIVE`, see
    :mod:`optimiser.runfolder.archive`);
``history.csv``
    one row per generation (:data:`HISTORY`);
``checkpoint.npz``
    the whole run state as numbers and a JSON manifest, no code (:data:`CHECKPOINT`, see
    :mod:`optimiser.runfolder.checkpoint`); ``checkpoint.pkl`` (:data:`LEGACY_CHECKPOINT`)
    is the pickled state of older versions, refused unread;
``plots/``, ``pick-<method>/``, ``flaps/``, ``report.html``
    figures, picks, the flap comparison and the report, written by later commands;
``.lock``
    only while ``run`` or ``resume`` writes the folder: who holds it (:data:`LOCK`, see
    :mod:`optimiser.runfolder.lock`); not a run file, and not counted when the folder is
    checked for being empty.
"""

from __future__ import annotations

STUDY = "study.toml"
RUN_INFO = "run.json"
FRONT = "front.csv"
LEAST_VIOLATING = "least_violating.csv"
ARCHIVE = "evaluations.csv"
HISTORY = "history.csv"
CHECKPOINT = "checkpoint.npz"
LEGACY_CHECKPOINT = "checkpoint.pkl"
PLOTS_DIR = "plots"
FLAPS_DIR = "flaps"
PICK_DIR_PREFIX = "pick-"
PICK_CHOICE = "choice.json"
PICK_DESIGN_INPUT = "design_input.csv"
"""The chosen design in the input format of ``optimiser evaluate --designs`` (and of
``optimiser robust --front``): the four input columns, one row, every number exact."""
SENSITIVITY_DIR_PREFIX = "sensitivity-"
SENSITIVITY_TABLE = "sensitivities.csv"
TORNADO_STEM = "tornado"
PRICE_TABLE = "requirement_prices.csv"
"""A design's sensitivities: ``sensitivity-<knee|row-N>/`` holding the table and the
tornado chart (``optimiser sensitivity``)."""
REPORT = "report.html"
PAYLOAD_RANGE_TABLE = "payload_range.csv"
"""The corners A-D of the payload-range chart of frozen designs (``optimiser payload-range``,
and a pick's folder)."""
PAYLOAD_RANGE_FIGURE = "payload_range"
"""Stem of the payload-range chart (``.png`` and ``.svg``, :data:`PLOT_SUFFIXES`)."""
LOCK = ".lock"

RUN_FILES = (STUDY, RUN_INFO, FRONT, ARCHIVE, HISTORY, LEAST_VIOLATING, CHECKPOINT,
             LEGACY_CHECKPOINT)
"""The files ``optimiser run`` writes, and the checkpoint of older versions (``--force``
replaces only these, and the plots)."""
PLOT_SUFFIXES = (".png", ".svg")
