"""Campaigns: a base study swept over requirement ranges, one independent run per combination.

A campaign file (TOML) names a base study, the sweep axes, the search budget of every run
and the rule that picks one compromise design from each run's front::

    name = "strip-requirements"
    description = "How field length and cruise speed drive trip fuel and engine size"
    base_study = "high_strip_utility.toml"      # relative to the campaign file

    [budget]                                    # every run; replaces the study's [search]
    population = 60
    generations = 40
    seed = 1

    [pick]                                      # the compromise reported per combination
    rule = "lowest_trip_fuel_near_smallest_engine"
    engine_size_within_percent = 10

    [[axis]]
    key = "departure.field_length"              # a study key path: table.key
    values = ["500 m", "700 m", "900 m"]        # as the study writes them, units included
    tighter = "smaller"                         # "smaller" or "larger": the harder direction
    also = ["destination.field_length"]         # optional: keys that take the same value

    [[axis]]
    key = "variables.flaps"                     # a non-numeric axis (no price)
    values = [["none", "plain"], ["none", "plain", "fowler"]]

Every combination of axis values gives a complete study text (the base study's TOML with the
swept keys replaced and ``[search]`` set to the budget), validated before any run starts.
Runs go to ``<campaign folder>/runs/<combination>``; each is one task (on a Dask cluster, or
serially), calling :func:`optimiser.runs.optimise` with no shared state. The campaign folder
then gets ``summary.csv`` (one row per combination: the picked compromise and the front's
extremes), ``price.csv`` (marginal trip fuel and engine size per unit of tightening, by finite
differences between neighbouring values along each numeric axis), ``summary.txt``,
``campaign.json`` and ``plots/`` (drawn by :mod:`optimiser.report.campaign_plots`).

Resume: run the same campaign with ``--out`` set to the existing campaign folder. Runs with a
``run.json`` are kept; an unfinished run with a checkpoint is resumed from it
(:func:`optimiser.runs.resume`); one without a usable checkpoint is restarted.
"""

from __future__ import annotations

import re
import time
from dataclasses import dataclass
from itertools import product
from pathlib import Path

import numpy as np

from .campaign_file import Axis, Campaign, pick_compromise, pick_text
from .errors import CampaignError, CampaignInterrupted, OptimiserError
from .runfolder import names
from .runfolder.files import write_atomic


# ----------------------------------------------------------------------------- running

STOP_REQUEST = ".stop-requested"
"""File in the campaign folder that asks every run of the campaign to stop: written on
Ctrl-C or SIGTERM, seen by each run after its generation in hand (also on Dask workers, which
must see the campaign folder anyway), removed when the campaign starts or stops."""


def _stop_check(stop_file):
    """A run-loop ``progress`` callable that interrupts the run (checkpoint, then
    :class:`~optimiser.errors.RunInterrupted`) once ``stop_file`` exists."""
    if stop_file is None:
        return False
    path = Path(stop_file)

    def check(row, state):
        if path.exists():
            raise KeyboardInterrupt
    return check


def run_combination(study_text: str, study_path: str, run_dir: str,
                    stop_file: str | None = None) -> dict:
    """One campaign task: run (or finish) the study in ``run_dir``. Never raises, except
    KeyboardInterrupt (a second Ctrl-C in this process).

    Returns ``{"run_dir", "status": "finished" | "failed" | "interrupted" | "cancelled",
    "message", "seconds", "how": "new" | "resumed" | "restarted"}``; a failure also writes
    ``error.txt``. ``stop_file`` (see :data:`STOP_REQUEST`): once it exists the run saves a
    checkpoint after its generation in hand and returns "interrupted"; a task that finds it
    before starting returns "cancelled" and touches nothing.
    """
    from .errors import RunInterrupted
    from .runfolder.checkpoint import has_checkpoint
    from .runs import RunError, load_checkpoint, optimise, resume
    from .study import parse_study
    t0 = time.monotonic()
    folder = Path(run_dir)
    how = "new"
    if stop_file is not None and Path(stop_file).exists():
        return {"run_dir": str(folder), "status": "cancelled", "message": "not started",
                "seconds": 0.0, "how": how}
    check = _stop_check(stop_file)
    try:
        study = parse_study(study_text, study_path)
        result = None
        if has_checkpoint(folder):
            try:
                state = load_checkpoint(folder)
                if state.study_text == study_text and state.termination is None:
                    how = "resumed"
                    result = resume(folder, progress=check, plots=False)
            except RunError:
                result = None
            if result is None:
                how = "restarted"
        if result is None:
            result = optimise(study, out=folder, force=True, progress=check, plots=False)
        (folder / "error.txt").unlink(missing_ok=True)
        return {"run_dir": str(folder), "status": "finished", "message": result.message,
                "seconds": time.monotonic() - t0, "how": how}
    except RunInterrupted:   # its checkpoint is saved: the campaign's next sweep resumes it
        (folder / "error.txt").unlink(missing_ok=True)
        return {"run_dir": str(folder), "status": "interrupted",
                "message": "interrupted; checkpoint saved", "seconds": time.monotonic() - t0,
                "how": how}
    except BaseException as exc:  # one failed run never stops the campaign
        if isinstance(exc, KeyboardInterrupt):
            raise
        text = f"{type(exc).__name__}: {exc}".splitlines()[0]
        try:
            folder.mkdir(parents=True, exist_ok=True)
            (folder / "error.txt").write_text(text + "\n", encoding="utf-8")
        except OSError:
            pass
        return {"run_dir": str(folder), "status": "failed", "message": text,
                "seconds": time.monotonic() - t0, "how": how}


def is_finished(run_dir: Path, study_text: str) -> bool:
    """A run folder holds a finished run of exactly this study text."""
    from .runfolder.reader import read_study_text
    from .runfolder.runinfo import is_finished as is_run_finished
    run_dir = Path(run_dir)
    try:
        return is_run_finished(run_dir) and read_study_text(run_dir) == study_text
    except OSError:
        return False


def default_campaign_dir(campaign: Campaign, root="results") -> Path:
    from .runfolder.place import timestamped_dir
    return timestamped_dir(campaign.name, root)


def prepare_campaign_dir(campaign: Campaign, out=None) -> tuple[Path, list]:
    """The campaign folder and the combinations still to run.

    A new (or empty) folder is created with copies of the campaign and base study files. An
    existing campaign folder is resumed only when it was made by the same campaign text and
    every finished run in it holds this campaign's study text; otherwise nothing is touched
    and :class:`CampaignError` says why.
    """
    folder = Path(out) if out is not None else default_campaign_dir(campaign)
    if folder.exists() and not folder.is_dir():
        raise CampaignError(f"--out {folder}: is a file; expected a folder for the campaign")
    existing = folder.is_dir() and any(folder.iterdir())
    if existing:
        copy = folder / "campaign.toml"
        if not copy.is_file():
            raise CampaignError(f"--out {folder}: folder exists and is not a campaign folder "
                                "(no campaign.toml); expected a new folder or one written by "
                                "'optimiser sweep'")
        if copy.read_text("utf-8") != campaign.text:
            raise CampaignError(f"--out {folder}: made by a different campaign file "
                                f"({copy} differs from {campaign.path}); expected the same "
                                "campaign to resume it, or a new --out")
        for c in campaign.combinations:
            run_dir = folder / "runs" / c.name
            study_file = run_dir / names.STUDY
            if study_file.is_file() and study_file.read_text("utf-8") != c.study_text:
                raise CampaignError(f"--out {folder}: {study_file} is not the study of "
                                    f"combination {c.name} (the base study changed?); "
                                    "expected the same campaign, or a new --out")
    else:
        try:
            (folder / "runs").mkdir(parents=True, exist_ok=True)
        except OSError as exc:
            raise CampaignError(f"--out {folder}: cannot create the folder "
                                f"({exc.strerror})") from None
        write_atomic(folder / "campaign.toml", campaign.text.encode("utf-8"))
        write_atomic(folder / "base_study.toml", campaign.base_study_text.encode("utf-8"))
    (folder / "runs").mkdir(exist_ok=True)
    pending = [c for c in campaign.combinations
               if not is_finished(folder / "runs" / c.name, c.study_text)]
    return folder, pending


def _dask_client(scheduler=None, workers=None, threads=False):
    """The campaign's Dask client and local cluster (:func:`optimiser.cluster.dask_client`)."""
    from .cluster import dask_client
    return dask_client(scheduler, workers, threads, error=CampaignError,
                       fallback="run with --serial")


class _StopRequest:
    """Ctrl-C and SIGTERM during a campaign (main thread only): the first writes the stop
    request file (every run checkpoints and returns); a second raises KeyboardInterrupt."""

    def __init__(self, folder: Path):
        self.file = Path(folder) / STOP_REQUEST
        self.requested = False
        self.previous = {}

    def __enter__(self):
        import signal
        import threading
        self.file.unlink(missing_ok=True)
        if threading.current_thread() is threading.main_thread():
            for sig in (signal.SIGINT, signal.SIGTERM):
                self.previous[sig] = signal.signal(sig, self._handler)
        return self

    def _handler(self, signum, frame):
        if self.requested:
            raise KeyboardInterrupt
        self.request()

    def request(self):
        self.requested = True
        try:
            self.file.touch()
        except OSError:
            pass

    def __exit__(self, *exc):
        import signal
        for sig, h in self.previous.items():
            signal.signal(sig, h)
        self.file.unlink(missing_ok=True)
        return False


def _cancel_queued(client, futures):
    """Cancel the campaign's tasks that no worker has started (running ones checkpoint)."""
    def states(dask_scheduler=None):
        return {str(k): ts.state for k, ts in dask_scheduler.tasks.items()}
    try:
        now = client.run_on_scheduler(states)
    except Exception:   # the scheduler is gone: nothing left to cancel
        return
    queued = [f for f in futures if not f.done() and now.get(str(f.key)) != "processing"]
    if queued:
        client.cancel(queued)


@dataclass(frozen=True)
class CampaignResult:
    folder: Path
    summary: object
    price: object
    ran: list
    skipped: int
    seconds: float

    @property
    def failed(self) -> list:
        return [r for r in self.ran if r["status"] == "failed"]


def run_campaign(campaign: Campaign, out=None, *, scheduler=None, workers=None, serial=False,
                 threads=False, progress=None) -> CampaignResult:
    """Run every pending combination and write the campaign results.

    ``serial``: in this process, one after another (no Dask). Otherwise one Dask task per
    combination: on the scheduler at ``scheduler`` (tcp://HOST:PORT; its workers must see the
    campaign folder at the same path), or on a LocalCluster of ``workers`` processes (default
    one per core; ``threads`` makes them threads of this process). ``progress(line)`` gets a
    line per finished run.
    """
    if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int)
                                or workers < 1):
        raise CampaignError(f"--workers: got {workers!r}; expected a whole number of at least 1")
    say = progress or (lambda line: None)
    t0 = time.monotonic()
    folder, pending = prepare_campaign_dir(campaign, out)
    skipped = len(campaign.combinations) - len(pending)
    if skipped:
        say(f"{skipped} of {len(campaign.combinations)} runs already finished in {folder}; "
            f"running the other {len(pending)}")
    args = [(c.study_text, str(folder / "runs" / c.name / names.STUDY),
             str(folder / "runs" / c.name)) for c in pending]
    ran = []

    def report(c, r):
        ran.append(r)
        say(f"run {len(ran)}/{len(pending)} {r['status']}: {c.name} ({r['seconds']:.1f} s"
            + (", resumed" if r["how"] == "resumed" else "")
            + (f"; {r['message']}" if r["status"] != "finished" else "") + ")")

    with _StopRequest(folder) as stop:
        try:
            if pending and serial:
                _run_serial(pending, args, stop, report)
            elif pending:
                _run_dask(pending, args, stop, report, folder, scheduler, workers, threads)
        except KeyboardInterrupt:   # a second Ctrl-C: the last checkpoints stand
            stop.request()
        interrupted = stop.requested or any(r["status"] == "interrupted" for r in ran)
    if interrupted:
        gather(campaign, folder, ran=ran, seconds=time.monotonic() - t0)
        done = {Path(r["run_dir"]).name for r in ran}
        raise CampaignInterrupted(folder, [r["run_dir"] for r in ran
                                           if r["status"] == "interrupted"],
                                  sum(c.name not in done for c in pending))
    summary = gather(campaign, folder, ran=ran, seconds=time.monotonic() - t0)
    return CampaignResult(folder=folder, summary=summary[0], price=summary[1], ran=ran,
                          skipped=skipped, seconds=time.monotonic() - t0)


def _run_serial(pending, args, stop, report):
    """One run after another in this process until all are done or a stop is asked."""
    for c, a in zip(pending, args):
        if stop.requested:
            return
        r = run_combination(*a, str(stop.file))
        if r["status"] == "cancelled":
            return
        report(c, r)
        if r["status"] == "interrupted":   # the run's own handler took the signal
            stop.request()
            return


def _run_dask(pending, args, stop, report, folder, scheduler, workers, threads):
    """One Dask task per run; on a stop request the queued tasks are cancelled and the
    running ones checkpoint and return before the cluster is closed."""
    from concurrent.futures import CancelledError
    client, cluster = _dask_client(scheduler, workers, threads)
    try:
        from dask.distributed import as_completed
        futures = {client.submit(run_combination, *a, str(stop.file), pure=False,
                                 key=f"campaign-run-{c.name}-{time.time_ns()}"): c
                   for c, a in zip(pending, args)}
        cancelled = False
        for fut in as_completed(futures):
            if stop.requested and not cancelled:
                _cancel_queued(client, futures)
                cancelled = True
            c = futures[fut]
            try:
                r = fut.result()
            except CancelledError:
                continue
            except Exception as exc:  # a lost worker, for example
                r = {"run_dir": str(folder / "runs" / c.name), "status": "failed",
                     "message": f"{type(exc).__name__}: {exc}".splitlines()[0],
                     "seconds": float("nan"), "how": "new"}
            if r["status"] == "cancelled":
                continue
            report(c, r)
            if r["status"] == "interrupted" and not stop.requested:
                stop.request()
    finally:
        client.close()
        if cluster is not None:
            cluster.close()


# ----------------------------------------------------------------------------- results

def _axis_columns(axis: Axis) -> tuple[str, str | None]:
    unit = axis.unit.replace("/", "_").replace(" ", "").replace("·", "_")
    unit = re.sub(r"[^A-Za-z0-9_]", "", unit)
    return axis.key, (f"{axis.key}_{unit}" if axis.numbers is not None and unit else
                      (axis.key + "_value" if axis.numbers is not None else None))


def summary_rows(campaign: Campaign, folder: Path):
    """One row per combination from the run folders (DataFrame)."""
    import pandas as pd
    from .runfolder.reader import load_run
    size = campaign.engine_size_column
    load = campaign.loading_column
    rows = []
    for c in campaign.combinations:
        run_dir = Path(folder) / "runs" / c.name
        row = {"combination": c.name}
        for a, v, i in zip(campaign.axes, c.values, c.index):
            text_col, num_col = _axis_columns(a)
            row[text_col] = v if not isinstance(v, list) else " ".join(map(str, v))
            if num_col:
                row[num_col] = a.numbers[i]
        row["run_folder"] = str(Path("runs") / c.name)
        run, problem = None, ""
        if is_finished(run_dir, c.study_text):
            try:  # checks the run's files against what its run.json records
                run = load_run(run_dir)
            except (OptimiserError, OSError, ValueError) as exc:
                run, problem = None, str(exc).splitlines()[0] if str(exc) else repr(exc)
        if run is None:
            from .runfolder.checkpoint import has_checkpoint
            err = run_dir / "error.txt"
            # a run stopped by Ctrl-C/SIGTERM keeps its checkpoint: the next sweep resumes it
            row["status"] = "failed" if err.is_file() or problem else \
                "interrupted" if has_checkpoint(run_dir) else "not run"
            row["note"] = problem or (err.read_text("utf-8").strip() if err.is_file() else "")
            rows.append(row)
            continue
        info, front = run.info, run.front
        row["status"] = "finished"
        row["n_evaluations"] = info.get("n_evaluations")
        row["front_size"] = info.get("front_size", 0)
        row["feasible_found"] = bool(info.get("feasible_found"))
        row["note"] = "" if row["feasible_found"] else info.get("message", "")
        if row["feasible_found"]:
            k = pick_compromise(front, campaign.pick, size, campaign.objectives)
            p = front.iloc[k]
            row.update({
                "picked_flap": p["flap"], "picked_wing_loading_N_m2": p["wing_loading_N_m2"],
                f"picked_{load}": p[load], "picked_aspect_ratio": p["aspect_ratio"],
                "picked_trip_fuel_kg": p["trip_fuel_kg"], f"picked_{size}": p[size],
                "picked_maintenance_index": p["maintenance_index"],
                "picked_takeoff_mass_kg": p["takeoff_mass_kg"],
                "picked_limiting_constraint": p["limiting_constraint"],
            })
            i_fuel = int(front["trip_fuel_kg"].to_numpy(float).argmin())
            i_size = int(front[size].to_numpy(float).argmin())
            row.update({
                "min_trip_fuel_kg": front["trip_fuel_kg"].iloc[i_fuel],
                f"{size}_at_min_trip_fuel": front[size].iloc[i_fuel],
                f"min_{size}": front[size].iloc[i_size],
                f"trip_fuel_kg_at_min_{size}": front["trip_fuel_kg"].iloc[i_size],
                "min_maintenance_index": front["maintenance_index"].min(),
            })
        rows.append(row)
    return pd.DataFrame(rows)


PRICED = ("picked_trip_fuel_kg", "picked_{size}", "min_trip_fuel_kg", "min_{size}")


def price_table(campaign: Campaign, summary):
    """Marginal cost of tightening each numeric requirement (DataFrame, one row per step).

    For each axis with a ``tighter`` direction and each pair of neighbouring values (the other
    axes held at one combination of their values), the change of each priced quantity from
    the looser to the tighter value divided by the step: a forward finite difference,
    ``(f_tight - f_loose) / |x_tight - x_loose|`` in quantity units per axis unit. Positive =
    the quantity grows as the requirement tightens. NaN where either run found no feasible
    design.
    """
    import pandas as pd
    size = campaign.engine_size_column
    quantities = [q.format(size=size) for q in PRICED]
    rows = []
    by_index = {c.index: k for k, c in enumerate(campaign.combinations)}
    for ai, axis in enumerate(campaign.axes):
        if axis.tighter is None:
            continue
        others = [range(len(a.values)) if j != ai else [None]
                  for j, a in enumerate(campaign.axes)]
        order = np.argsort(axis.numbers)
        if axis.tighter == "smaller":
            order = order[::-1]          # from the loosest to the tightest value
        for rest in product(*others):
            held = "; ".join(f"{a.key} = {short_value(a.values[i])}" for j, (a, i) in
                             enumerate(zip(campaign.axes, rest)) if j != ai)
            for loose_i, tight_i in zip(order[:-1], order[1:]):
                idx_l = tuple(int(loose_i) if j == ai else i for j, i in enumerate(rest))
                idx_t = tuple(int(tight_i) if j == ai else i for j, i in enumerate(rest))
                rl, rt = summary.iloc[by_index[idx_l]], summary.iloc[by_index[idx_t]]
                step = abs(axis.numbers[tight_i] - axis.numbers[loose_i])
                row = {"axis": axis.key, "unit": axis.unit, "held": held,
                       "looser": axis.values[loose_i], "tighter": axis.values[tight_i],
                       "step": step, "from_combination": rl["combination"],
                       "to_combination": rt["combination"]}
                for q in quantities:
                    a = float(rl.get(q, float("nan")))
                    b = float(rt.get(q, float("nan")))
                    row[f"delta_{q}"] = b - a
                    row[f"price_{q}_per_unit"] = (b - a) / step
                rows.append(row)
    return pd.DataFrame(rows)


def short_value(v) -> str:
    """An axis value as text: a list joined by '+'."""
    return "+".join(map(str, v)) if isinstance(v, list) else str(v)


def _per_axis_unit(price: float, unit: str, axis_unit: str, system) -> tuple[float, str]:
    """A price in ``unit`` per ``axis_unit`` (the campaign's own unit) in ``system``'s
    units: (value, axis unit shown). An axis unit that has no US customary display (one the
    campaign already gives in US units, say ft) is kept."""
    from .display_units import US_CONVERSIONS, to_display
    per_quantity, _ = to_display(1.0, unit, system)
    per_axis, shown_axis_unit = (to_display(1.0, axis_unit, system)
                                 if axis_unit in US_CONVERSIONS else (1.0, axis_unit))
    if per_quantity == 1.0 and per_axis == 1.0:
        return price, shown_axis_unit      # SI: the number as it is
    return price * per_quantity / per_axis, shown_axis_unit


def summary_text(campaign: Campaign, summary, price, folder, units: str | None = None) -> str:
    """The printed campaign report, ending with the caution text; numbers in ``units``
    (``"si"`` or ``"us"``; default :func:`~optimiser.display_units.current_system`; the
    combinations keep the campaign's own values)."""
    from .columns import BY_NAME
    from .display_units import column_display, resolve
    from .evaluation import CAUTION
    system = resolve(units)
    size = campaign.engine_size_column
    _, unit = column_display(size, 0.0, system)
    _, fuel_unit = column_display("trip_fuel_kg", 0.0, system)
    done = int((summary["status"] == "finished").sum())
    lines = [f"campaign {campaign.name}: {done} of {len(summary)} runs finished; folder {folder}",
             f"  picking rule: {pick_text(campaign.pick)}",
             f"  {'combination':<44}{'trip ' + fuel_unit:>9}{'engine ' + unit:>11}  flap"]
    for _, r in summary.iterrows():
        if r["status"] == "finished" and r.get("feasible_found", False):
            fuel = column_display("trip_fuel_kg", r["picked_trip_fuel_kg"], system)[0]
            engine = column_display(size, r["picked_" + size], system)[0]
            lines.append(f"  {r['combination'][:43]:<44}{fuel:>9.1f}"
                         f"{engine:>11.1f}  {r['picked_flap']}")
        else:
            lines.append(f"  {r['combination'][:43]:<44}{'-':>9}{'-':>11}  "
                         + (r["status"] if r["status"] != "finished" else "no feasible design"))
    if len(price):
        lines.append("  price of tightening (picked design, mean over the steps of each axis):")
        for ax_key, g in price.groupby("axis", sort=False):
            u = g["unit"].iloc[0] or "unit"
            pf, shown_u = _per_axis_unit(g["price_picked_trip_fuel_kg_per_unit"].mean(), "kg",
                                         u, system)
            pe, _ = _per_axis_unit(g[f"price_picked_{size}_per_unit"].mean(),
                                   BY_NAME[size].unit, u, system)
            lines.append(f"    {ax_key}: {pf:+.4g} {fuel_unit} trip fuel and {pe:+.4g} {unit} "
                         f"engine per {shown_u} tighter")
    lines.append(CAUTION)
    return "\n".join(lines)


def gather(campaign: Campaign, folder, ran=(), seconds=None):
    """Write summary.csv, price.csv, summary.txt and campaign.json from the run folders;
    returns (summary, price). Plots: :func:`optimiser.report.campaign_plots.plot_campaign`."""
    from .evaluation import CAUTION
    from .runfolder.files import utc_now
    from .runfolder.runinfo import json_bytes, versions
    folder = Path(folder)
    summary = summary_rows(campaign, folder)
    price = price_table(campaign, summary)
    write_atomic(folder / "summary.csv", summary.to_csv(index=False).encode())
    write_atomic(folder / "price.csv", price.to_csv(index=False).encode())
    text = summary_text(campaign, summary, price, folder, units="si")   # the file stays SI
    write_atomic(folder / "summary.txt", (text + "\n").encode())
    info = {
        "campaign": campaign.name, "description": campaign.description,
        "campaign_file": campaign.path, "base_study": campaign.base_study_path,
        "written_utc": utc_now(), "versions": versions(),
        "budget_per_run": campaign.budget, "picking_rule": campaign.pick,
        "picking_rule_text": pick_text(campaign.pick),
        "axes": [{"key": a.key, "also": list(a.also), "values": list(a.values),
                  "unit": a.unit, "tighter": a.tighter} for a in campaign.axes],
        "combinations": len(campaign.combinations),
        "finished": int((summary["status"] == "finished").sum()),
        "this_session": {"runs": len(ran), "seconds": seconds,
                         "failed": [r["run_dir"] for r in ran if r["status"] == "failed"]},
        "caution": CAUTION,
    }
    stopped = [r["run_dir"] for r in ran if r["status"] == "interrupted"]
    if stopped:   # (the key only when a run was stopped: an uninterrupted file is unchanged)
        info["this_session"]["interrupted"] = stopped
    write_atomic(folder / "campaign.json", json_bytes(info, default=str))
    return summary, price
