"""A campaign: many recordings analysed alike, with a results catalogue.

:func:`run_batch` reads a manifest (see :mod:`dropkin.campaign._manifest`), skips the
recordings whose input and settings are unchanged since a complete row of the
catalogue, and analyses the rest: in this process (one job), in a local
process pool (``jobs > 1``) or on a Dask ``distributed`` cluster (a scheduler
address), all through the same :func:`run_task`. Each recording's outputs are
made in a hidden work folder ``OUT/.work-<label>-*`` and renamed to
``OUT/<label>`` when done, so an interrupted batch leaves either a recording's
whole folder or none of it; its row is then written to ``OUT/catalogue.sqlite``
in a transaction of its own. A recording that fails gets a row with its error
and the batch goes on.
"""

from __future__ import annotations

import contextlib
import dataclasses
import hashlib
import json
import os
import shutil
import signal
import tempfile
import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass
from datetime import UTC, datetime
from pathlib import Path

from .._version import __version__
from ..errors import DropkinError
from ._catalogue import open_catalogue, read_rows, write_row
from ._manifest import Task, read_manifest

__all__ = ["BatchSummary", "run_batch", "run_task", "settings_sha256", "input_fingerprint"]

_WORK_PREFIX = ".work-"
_OLD_PREFIX = ".old-"


@dataclass
class BatchSummary:
    """What a batch did.

    Attributes
    ----------
    total : int
        Recordings in the manifest.
    done, skipped : list of str
        Labels analysed now, and labels left as they were (unchanged).
    failed : list of (str, str)
        Labels that failed, with their messages.
    interrupted : bool
        Whether the batch was stopped before the end.
    """

    total: int
    done: list[str] = dataclasses.field(default_factory=list)
    skipped: list[str] = dataclasses.field(default_factory=list)
    failed: list[tuple[str, str]] = dataclasses.field(default_factory=list)
    interrupted: bool = False


def input_fingerprint(source) -> list:
    """Name, size and modification time of every file of a recording.

    A cheap stand-in for reading the whole recording: when it is unchanged, the
    input hash stored in the catalogue is reused.
    """
    path = Path(source)
    files = sorted(p for p in path.iterdir() if p.is_file()) if path.is_dir() else [path]
    out = []
    for f in files:
        st = f.stat()
        out.append([f.name, st.st_size, st.st_mtime_ns])
    return out


def settings_sha256(experiment, settings) -> str:
    """SHA-256 of everything but the frames that decides a recording's result.

    That is the experiment as merged (every value, in SI) and the analysis
    settings that change outputs (not the number of jobs or the chunk size).
    A background image enters by its content.
    """
    exp = dataclasses.asdict(experiment)
    exp.pop("path", None)
    analysis = settings.result_settings()
    if analysis["background"] is not None:
        analysis["background"] = _file_sha256(analysis["background"])
    text = json.dumps({"experiment": exp, "analysis": analysis}, sort_keys=True)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _file_sha256(path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def _now() -> str:
    return datetime.now(UTC).isoformat(timespec="milliseconds")


def _publish(work: Path, target: Path) -> None:
    """Put a finished work folder in place of `target` (two renames)."""
    old = None
    if target.exists():
        old = target.with_name(f"{_OLD_PREFIX}{target.name}-{os.getpid()}-{time.time_ns()}")
        os.replace(target, old)
    os.replace(work, target)
    if old is not None:
        shutil.rmtree(old, ignore_errors=True)


def _ci(values, index):
    if not isinstance(values, list | tuple) or len(values) != 2:
        return None
    return values[index]


def _verdict_columns(verdict) -> dict:
    from ..scaling import verdict_to_dict

    data = verdict_to_dict(verdict)
    cols = {"sentence": data.get("sentence"), "decided": int(bool(data.get("decidable")))}
    nums = data.get("numbers") or {}
    for key in ("ohnesorge", "bond", "viscosity_ratio"):
        cols[key] = nums.get(key)
    dom = data.get("dominant") or {}
    if not dom:
        return cols
    cand = next(
        (
            c
            for c in data.get("candidates", [])
            if c.get("regime") == dom.get("regime") and c.get("segment") == dom.get("segment")
        ),
        {},
    )
    group = None
    if dom.get("prefactor_fit") and cand.get("coefficient_fit"):
        group = dom["prefactor_fit"] / cand["coefficient_fit"]
    pci = cand.get("prefactor_fit_ci")
    theory_c = None
    if group and dom.get("prefactor_theory") is not None:
        theory_c = dom["prefactor_theory"] / group
    cols.update(
        regime=dom.get("regime"),
        exponent_theory=dom.get("exponent_theory"),
        exponent_fit=dom.get("exponent_fit"),
        exponent_ci_low=_ci(dom.get("exponent_ci"), 0),
        exponent_ci_high=_ci(dom.get("exponent_ci"), 1),
        prefactor_fit=cand.get("coefficient_fit"),
        prefactor_ci_low=None if not (group and pci) else pci[0] / group,
        prefactor_ci_high=None if not (group and pci) else pci[1] / group,
        prefactor_theory=theory_c,
        window_start_s=_ci(dom.get("window_s"), 0),
        window_end_s=_ci(dom.get("window_s"), 1),
        crossovers=data.get("crossovers") or [],
    )
    return cols


def _sample_columns(exp) -> dict:
    liquid, medium = exp.liquid, exp.medium
    return {
        "geometry": exp.setup.geometry,
        "view": exp.setup.view,
        "liquid": liquid.name,
        "glycerol_mass_fraction": liquid.glycerol_mass_fraction,
        "temperature_k": liquid.temperature,
        "surface_tension_n_per_m": liquid.surface_tension,
        "viscosity_pa_s": liquid.viscosity,
        "density_kg_per_m3": liquid.density,
        "medium": medium.name,
        "medium_viscosity_pa_s": medium.viscosity,
        "medium_density_kg_per_m3": medium.density,
        "drop_radius_m": exp.drops.radius,
        "frame_rate_hz": exp.recording.frame_rate,
        "pixel_size_m": exp.recording.pixel_size,
    }


def _measured_sha256(folder: Path) -> str | None:
    """The input hash a measurement wrote before its analysis failed, if any."""
    try:
        info = json.loads((folder / "measure.json").read_text(encoding="utf-8"))
        return info["provenance"]["sha256"]
    except (OSError, ValueError, KeyError, TypeError):
        return None


def run_task(task: Task, out_dir) -> dict:
    """Analyse one recording of a campaign into ``OUT/<label>``; its catalogue row.

    Never raises for the recording's own faults: a :class:`DropkinError` (and,
    so that one bad recording cannot stop a campaign, any other exception)
    becomes a row with status ``failed`` and the message. Whatever was written
    (the frames measured before a failure, say) is published all the same.
    """
    from ..pipeline._steps import analyze_into, open_source

    out_dir = Path(out_dir)
    start, clock = _now(), time.perf_counter()
    row: dict = {
        "label": task.label,
        "source": task.source,
        "dropkin_version": __version__,
        "output": task.label,
        "started_utc": start,
    }
    work = Path(tempfile.mkdtemp(prefix=f"{_WORK_PREFIX}{task.label}-", dir=out_dir))
    try:
        row["input_stat"] = input_fingerprint(task.source)
        exp, _ = open_source(
            task.source,
            experiment=task.experiment_file,
            overrides=task.overrides,
            origin="campaign manifest",
        )
        row["settings_sha256"] = settings_sha256(exp, task.settings)
        row["settings"] = task.settings.result_settings()
        row.update(_sample_columns(exp))
        result = analyze_into(
            task.source,
            work,
            task.settings,
            experiment=task.experiment_file,
            overrides=task.overrides,
            origin="campaign manifest",
            experiment_copy=True,
            published_dir=out_dir / task.label,
        )
        row.update(_sample_columns(result.experiment))
        series = result.series
        row.update(
            input_sha256=series.provenance["sha256"],  # measure_into hashed the frames
            frames=len(series),
            frames_ok=series.status.count("ok"),
            contact_time_s=series.contact_time,
            contact_time_err_s=series.contact_time_err,
        )
        row.update(_verdict_columns(result.verdict))
        if result.verdict:
            row["status"] = "complete"
        else:
            row["status"], row["error"] = "failed", f"no verdict: {result.verdict.reason}"
    except DropkinError as exc:
        row["status"], row["error"] = "failed", str(exc)
        row["input_sha256"] = _measured_sha256(work)
    except Exception as exc:  # noqa: BLE001 - one recording must not stop a campaign
        row["status"] = "failed"
        row["error"] = f"internal error, please report it: {type(exc).__name__}: {exc}"
        row["error"] = row["error"].replace("\n", " ")
    except BaseException:  # interrupted: a partial folder is never published
        shutil.rmtree(work, ignore_errors=True)
        raise
    if any(work.iterdir()):
        _publish(work, out_dir / task.label)
    else:
        shutil.rmtree(work, ignore_errors=True)
    row["finished_utc"] = _now()
    row["seconds"] = round(time.perf_counter() - clock, 3)
    return row


def _ignore_sigint() -> None:
    signal.signal(signal.SIGINT, signal.SIG_IGN)


def _pool_rows(tasks, out_dir, jobs) -> Iterable[dict]:
    import multiprocessing

    pool = multiprocessing.get_context().Pool(jobs, initializer=_ignore_sigint)
    try:
        yield from pool.imap_unordered(_run_pair, [(t, str(out_dir)) for t in tasks])
        pool.close()
    finally:
        pool.terminate()
        pool.join()


def _run_pair(pair):
    return run_task(*pair)


def _dask_rows(tasks, out_dir, scheduler) -> Iterable[dict]:
    try:
        from distributed import Client, as_completed
    except ImportError:
        raise DropkinError(
            "needs Dask's distributed package",
            key="--scheduler",
            expected="pip install 'dropkin[dask]'",
        ) from None
    try:
        client = Client(scheduler, timeout="20s")
    except (OSError, TimeoutError, ValueError) as exc:
        raise DropkinError(
            f"cannot reach the scheduler ({exc})", key="--scheduler", value=scheduler
        ) from None
    futures = []
    try:
        futures = [
            client.submit(run_task, t, str(out_dir), pure=False, key=f"dropkin-{t.label}-{i}")
            for i, t in enumerate(tasks)
        ]
        for future in as_completed(futures):
            yield future.result()
    finally:
        with contextlib.suppress(Exception):
            client.cancel(futures)
        client.close()


def _clean_leftovers(out_dir: Path) -> None:
    """Remove the work folders of an earlier batch that was stopped."""
    for entry in out_dir.iterdir():
        if entry.is_dir() and entry.name.startswith((_WORK_PREFIX, _OLD_PREFIX)):
            shutil.rmtree(entry, ignore_errors=True)


def _is_unchanged(task: Task, previous: dict | None, out_dir: Path) -> bool:
    """A complete row whose input and settings hashes still hold, and its folder."""
    if not previous or previous.get("status") != "complete":
        return False
    if not (out_dir / task.label / "fit.json").is_file():
        return False
    try:
        from ..pipeline._steps import open_source

        exp, rec = open_source(
            task.source, experiment=task.experiment_file, overrides=task.overrides
        )
        if settings_sha256(exp, task.settings) != previous.get("settings_sha256"):
            return False
        stat = json.loads(previous.get("input_stat") or "null")
        if stat == input_fingerprint(task.source):
            return True
        from ..measure import recording_sha256

        return recording_sha256(rec) == previous.get("input_sha256")
    except (DropkinError, OSError, ValueError):
        return False


def run_batch(
    manifest,
    out_dir,
    *,
    jobs: int = 1,
    scheduler: str | None = None,
    redo: bool = False,
    allow_outside: bool = False,
    report: Callable[[int, int, str, dict | None], None] | None = None,
) -> BatchSummary:
    """Analyse every recording of a manifest; write their rows to the catalogue.

    Parameters
    ----------
    manifest : str or os.PathLike
        The campaign manifest (TOML).
    out_dir : str or os.PathLike
        Gets ``catalogue.sqlite`` and a folder per recording.
    jobs : int
        Recordings analysed at once on this machine (1: in this process).
    scheduler : str, optional
        Address of a Dask ``distributed`` scheduler (``tcp://host:8786``); the
        work then runs on its workers, which must see `out_dir` and the
        recordings at the same paths.
    redo : bool
        Analyse every recording again, even those unchanged since a complete row.
    allow_outside : bool
        Let the manifest name recordings outside its own folder.
    report : callable, optional
        ``report(done, total, label, row)`` after each recording (``row`` None
        for one skipped as unchanged).

    Returns
    -------
    BatchSummary
        ``interrupted`` is set, and the rows finished so far are kept, when
        the batch is stopped with Ctrl-C (KeyboardInterrupt).

    Raises
    ------
    DropkinError
        When the manifest is unusable (nothing is run then).
    """
    campaign = read_manifest(manifest, allow_outside=allow_outside)
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    _clean_leftovers(out_dir)
    conn = open_catalogue(out_dir)
    summary = BatchSummary(total=len(campaign.tasks))
    count = 0
    try:
        previous = {row["label"]: row for row in read_rows(conn)}
        pending = []
        for task in campaign.tasks:
            if not redo and _is_unchanged(task, previous.get(task.label), out_dir):
                summary.skipped.append(task.label)
                count += 1
                if report:
                    report(count, summary.total, task.label, None)
            else:
                pending.append(task)
        if scheduler is not None:
            rows = _dask_rows(pending, out_dir, scheduler)
        elif jobs > 1 and len(pending) > 1:
            rows = _pool_rows(pending, out_dir, min(jobs, len(pending)))
        else:
            rows = (run_task(task, out_dir) for task in pending)
        try:
            for row in rows:
                write_row(conn, row)
                count += 1
                if row["status"] == "complete":
                    summary.done.append(row["label"])
                else:
                    summary.failed.append((row["label"], row.get("error") or ""))
                if report:
                    report(count, summary.total, row["label"], row)
        finally:
            with contextlib.suppress(Exception):
                rows.close()
    except KeyboardInterrupt:
        summary.interrupted = True
        _clean_leftovers(out_dir)
    finally:
        conn.close()
    return summary
