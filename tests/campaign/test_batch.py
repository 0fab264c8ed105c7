"""dropkin batch and dropkin collapse on a synthetic viscosity series (conftest.py)."""

from __future__ import annotations

import hashlib
import json
import shlex
import shutil
import signal
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from dropkin import __version__
from dropkin.campaign._catalogue import TIMING_COLUMNS, read_rows
from dropkin.campaign._runner import run_batch
from dropkin.cli import main

# The campaign's constants, as conftest.py makes it (invented scenario).
VISCOSITIES = (0.05, 0.08, 0.12, 0.18, 0.25)
GOOD = [f"mu{round(v * 1e3):03d}" for v in VISCOSITIES]
TRUE_PREFACTOR = 1.0


def _rows(out) -> dict:
    return {row["label"]: row for row in read_rows(out)}


def _comparable(rows: dict) -> dict:
    return {
        label: {k: v for k, v in row.items() if k not in TIMING_COLUMNS}
        for label, row in rows.items()
    }


def _hidden(out: Path) -> list[str]:
    return sorted(p.name for p in out.iterdir() if p.name.startswith("."))


@pytest.fixture(scope="module")
def pool_run(viscosity_campaign, tmp_path_factory):
    """The campaign run once with a pool of two processes, through the command line."""
    manifest = viscosity_campaign.manifest
    assert viscosity_campaign.good == GOOD and viscosity_campaign.true_prefactor == TRUE_PREFACTOR
    out = tmp_path_factory.mktemp("pool") / "out"
    result = CliRunner().invoke(main, ["batch", str(manifest), "-o", str(out), "--jobs", "2"])
    return out, result


def test_a_campaign_with_a_corrupt_recording_gives_five_rows_one_failure_and_exit_3(
    pool_run, viscosity_campaign
):
    folder, truth = viscosity_campaign.folder, viscosity_campaign.truth
    out, result = pool_run
    assert result.exit_code == 3, result.output
    # The failure is listed at the end, naming the recording and the file.
    last = result.stderr.strip().splitlines()[-1]
    assert last.startswith("dropkin: failed: cut: ") and "cut.tif" in last
    rows = _rows(out)
    assert sorted(rows) == sorted([*GOOD, "cut"])
    failed = rows["cut"]
    assert failed["status"] == "failed" and "cut.tif" in failed["error"]
    for label in GOOD:
        row = rows[label]
        assert row["status"] == "complete", row["error"]
        assert row["decided"] == 1 and row["regime"] == "inertially-limited-viscous"
        # The manifest's values reached the sample (shared and per-recording).
        assert row["viscosity_pa_s"] == pytest.approx(truth[label]["viscosity"], rel=1e-12)
        assert row["surface_tension_n_per_m"] == pytest.approx(65e-3, rel=1e-12)
        assert row["pixel_size_m"] == pytest.approx(2.5e-6, rel=1e-12)
        # The exponent of the law the recording was made with, inside 0.02.
        assert abs(row["exponent_fit"] - 1.0) < 0.02
        assert row["exponent_ci_low"] <= row["exponent_fit"] <= row["exponent_ci_high"]
        assert row["prefactor_ci_low"] <= TRUE_PREFACTOR * 1.01
        # Input hash: SHA-256 of the file's bytes (reference: hashlib).
        digest = hashlib.sha256((folder / f"{label}.tif").read_bytes()).hexdigest()
        assert row["input_sha256"] == digest
        assert len(row["settings_sha256"]) == 64 and row["dropkin_version"] == __version__
        assert (
            abs(row["contact_time_s"] - truth[label]["contact_time"]) < 1.0 / row["frame_rate_hz"]
        )
        for name in ("fit.json", "radius.csv", "measure.json", "report.html", "experiment.toml"):
            assert (out / label / name).is_file(), (label, name)
    # Five different samples: five different settings hashes.
    assert len({rows[label]["settings_sha256"] for label in GOOD}) == 5
    assert _hidden(out) == []


def test_the_master_curve_recovers_the_prefactor_the_recordings_were_made_with(pool_run):
    out, _ = pool_run
    result = CliRunner().invoke(main, ["collapse", str(out), "--plot-formats", "png,svg"])
    assert result.exit_code == 0, result.output
    assert (out / "collapse" / "collapse-inertially-limited-viscous.png").stat().st_size > 1000
    assert (out / "collapse" / "collapse-inertially-limited-viscous.svg").is_file()
    data = json.loads((out / "collapse" / "collapse.json").read_text())
    (curve,) = data["curves"]
    assert curve["regime"] == "inertially-limited-viscous" and curve["recordings"] == 5
    lo, hi = curve["prefactor_ci"]
    # Issue 13: with t0 refitted in every resample (no longer redrawn over the
    # whole bracket and widened) the interval is statistical only, about
    # 0.05 % wide, and the measurement's systematic offset of the synthetic
    # recordings (0.2 % here) is not in it until the systematic intervals of
    # issue 13 land. So: the estimate within 1 % of the truth, inside its
    # own interval, and an interval that says something.
    assert curve["prefactor"] == pytest.approx(TRUE_PREFACTOR, rel=0.01)
    assert lo <= curve["prefactor"] <= hi
    assert hi / lo < 1.1
    assert curve["flagged"] == []
    assert [m["label"] for m in curve["left_out"]] == ["cut"]
    # On its own scales every series falls on r/R = C t/tau: the time scales
    # are eta R / gamma (docs/physics.md A2), in proportion to the viscosities.
    taus = {m["label"]: m["tau_s"] for m in curve["members"]}
    for label, viscosity in zip(GOOD, VISCOSITIES, strict=True):
        assert taus[label] == pytest.approx(viscosity * 1e-3 / 65e-3, rel=1e-12)


def test_a_recording_whose_prefactor_is_off_is_flagged(pool_run, tmp_path):
    out, _ = pool_run
    copy = tmp_path / "out"
    shutil.copytree(out, copy)
    # As if one sample's surface tension had been a quarter of the others'
    # (a surfactant, say) while the manifest kept the same value: its fitted
    # C on gamma/eta is then four times too small... here, simply halved.
    with sqlite3.connect(copy / "catalogue.sqlite") as conn:
        conn.execute(
            "UPDATE recordings SET prefactor_fit = prefactor_fit / 2, "
            "prefactor_ci_low = prefactor_ci_low / 2, prefactor_ci_high = prefactor_ci_high / 2 "
            "WHERE label = ?",
            ("mu120",),
        )
    result = CliRunner().invoke(main, ["collapse", str(copy)])
    assert result.exit_code == 0, result.output
    assert "does not collapse: mu120" in result.output
    data = json.loads((copy / "collapse" / "collapse.json").read_text())
    (curve,) = data["curves"]
    assert curve["flagged"] == ["mu120"]
    member = next(m for m in curve["members"] if m["label"] == "mu120")
    assert member["prefactor"] == pytest.approx(0.5, rel=0.03)


def test_on_the_wrong_regimes_scales_the_series_do_not_collapse(pool_run, tmp_path):
    out, _ = pool_run
    dest = tmp_path / "inertial"
    result = CliRunner().invoke(
        main, ["collapse", str(out), "--regime", "inertial", "-o", str(dest)]
    )
    assert result.exit_code == 0, result.output
    (curve,) = json.loads((dest / "collapse.json").read_text())["curves"]
    # tau = sqrt(rho R^3 / gamma) for every member (docs/physics.md A3): the same
    # for all five, since only the viscosity changes.
    tau_i = (1221.0 * 1e-3**3 / 65e-3) ** 0.5
    assert all(m["tau_s"] == pytest.approx(tau_i, rel=1e-12) for m in curve["members"])
    # r = C (gamma/eta) t on these scales is y = C (tau_i/tau_v) x. Every
    # series spans the same y, so over it y / x^(1/2) = (C y tau_i/tau_v)^(1/2):
    # the prefactors on x^(1/2) go as eta^(-1/2) instead of being one, and
    # the curve says the series do not collapse.
    c = {m["label"]: m["prefactor"] for m in curve["members"]}
    assert c["mu050"] / c["mu250"] == pytest.approx((0.25 / 0.05) ** 0.5, rel=0.05)
    assert len(curve["flagged"]) >= 2


def test_each_recording_names_the_batch_command_and_its_copied_experiment(pool_run):
    """Issue 16, point 4: the worker processes record the command line of the batch;
    the paths count from the recording's published folder (not the work folder)."""
    out, _ = pool_run
    for label in GOOD:
        folder = out / label
        prov = json.loads((folder / "measure.json").read_text(encoding="utf-8"))["provenance"]
        words = shlex.split(prov["run"]["command_line"])
        assert words[:2] == ["dropkin", "batch"] and words[-2:] == ["--jobs", "2"]
        assert prov["run"]["options_given"]["--jobs"] == "2"
        assert prov["experiment_file"] == "experiment.toml"
        assert (folder / prov["input"]).resolve() == Path(prov["input_absolute"]).resolve()
        fit = json.loads((folder / "fit.json").read_text(encoding="utf-8"))["provenance"]
        assert fit["radius_csv"] == "radius.csv" and fit["run"]["command_line"]
        package = json.loads((folder / "datapackage.json").read_text(encoding="utf-8"))
        names = {r["name"] for r in package["resources"]}
        assert {"radius", "measure", "fit", "experiment", "report"} <= names


def test_dask_local_cluster_gives_the_same_rows_as_the_pool(
    pool_run, viscosity_campaign, tmp_path
):
    distributed = pytest.importorskip("distributed")
    manifest = viscosity_campaign.manifest
    out_pool, _ = pool_run
    out = tmp_path / "dask"
    with distributed.LocalCluster(
        n_workers=2, threads_per_worker=1, processes=True, dashboard_address=":0"
    ) as cluster:
        summary = run_batch(manifest, out, scheduler=cluster.scheduler_address)
    assert sorted(summary.done) == GOOD and [f for f, _ in summary.failed] == ["cut"]
    assert _comparable(_rows(out)) == _comparable(_rows(out_pool))


def test_rerun_skips_what_is_unchanged_and_redo_or_a_new_value_forces(
    viscosity_campaign, tmp_path
):
    folder = viscosity_campaign.folder
    entries = [
        "[[recordings]]",
        'path = "mu250.tif"',
        'recording = { frame_rate = "41600 Hz" }',
        'liquid = { viscosity = "250 mPa*s" }',
    ]
    manifest = viscosity_campaign.write_manifest(tmp_path, [], bootstrap=20)
    shutil.copy(folder / "mu250.tif", tmp_path / "mu250.tif")
    manifest.write_text(manifest.read_text() + "\n".join(entries) + "\n")
    out = tmp_path / "out"
    first = run_batch(manifest, out)
    assert first.done == ["mu250"] and not first.failed
    stamp = _rows(out)["mu250"]["finished_utc"]
    again = run_batch(manifest, out)
    assert again.skipped == ["mu250"] and again.done == []
    assert _rows(out)["mu250"]["finished_utc"] == stamp
    forced = run_batch(manifest, out, redo=True)
    assert forced.done == ["mu250"]
    stamp2 = _rows(out)["mu250"]["finished_utc"]
    assert stamp2 != stamp
    # A changed value changes the settings hash: analysed again.
    manifest.write_text(manifest.read_text().replace("250 mPa*s", "240 mPa*s"))
    changed = run_batch(manifest, out)
    assert changed.done == ["mu250"]
    assert _rows(out)["mu250"]["viscosity_pa_s"] == pytest.approx(0.24)
    assert _hidden(out) == []


def _complete(folder: Path) -> bool:
    """Every file an analysis writes is there and parses."""
    json.loads((folder / "fit.json").read_text())
    json.loads((folder / "measure.json").read_text())
    html = (folder / "report.html").read_text()
    return html.rstrip().endswith("</html>") and (folder / "radius.csv").is_file()


def test_an_interrupted_campaign_is_finished_by_a_rerun_without_redoing(
    viscosity_campaign, tmp_path
):
    manifest = viscosity_campaign.manifest
    out = tmp_path / "out"
    command = [sys.executable, "-m", "dropkin", "-q", "batch", str(manifest), "-o", str(out)]
    proc = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 240
    done = 0
    while time.monotonic() < deadline and proc.poll() is None:
        time.sleep(0.2)
        if (out / "catalogue.sqlite").is_file():
            try:
                done = len(read_rows(out))
            except Exception:  # noqa: BLE001 - the file may be mid-creation
                done = 0
            if done >= 2:
                break
    assert proc.poll() is None, "the batch ended before it could be interrupted"
    proc.send_signal(signal.SIGINT)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 130, err
    assert "interrupted" in err and "Traceback" not in err
    # Nothing half-made: no work folders left, every recording folder complete.
    assert _hidden(out) == []
    before = _rows(out)
    assert 2 <= len(before) < 6
    for entry in out.iterdir():
        if entry.is_dir() and entry.name in GOOD:
            assert _complete(entry), entry
    # The rerun finishes the rest and leaves the finished rows alone.
    runner = CliRunner()
    result = runner.invoke(main, ["batch", str(manifest), "-o", str(out)])
    assert result.exit_code == 3, result.output
    after = _rows(out)
    assert sorted(after) == sorted([*GOOD, "cut"])
    complete_before = [k for k, r in before.items() if r["status"] == "complete"]
    assert complete_before
    for label in complete_before:
        assert after[label]["finished_utc"] == before[label]["finished_utc"]
    assert result.stderr.count("unchanged since its complete row, skipped") == len(complete_before)
    assert all(after[label]["status"] == "complete" for label in GOOD)
    assert _hidden(out) == []


def test_batch_with_a_bad_manifest_runs_nothing(tmp_path):
    manifest = tmp_path / "m.toml"
    manifest.write_text('[[recordings]]\npath = "../elsewhere"\n')
    result = CliRunner().invoke(main, ["batch", str(manifest), "-o", str(tmp_path / "out")])
    assert result.exit_code == 1
    line = result.stderr.strip()
    assert "\n" not in line and "m.toml" in line and "recordings[1].path" in line
    assert not (tmp_path / "out").exists()


def test_collapse_refuses_a_catalogue_without_the_columns_it_reads(tmp_path):
    # Issue 17, finding 10: a recordings table with other columns gave a KeyError
    # traceback; now one line naming the file and the missing columns, exit 1.
    out = tmp_path / "out"
    out.mkdir()
    with sqlite3.connect(out / "catalogue.sqlite") as conn:
        conn.execute("CREATE TABLE recordings (label TEXT, result TEXT)")
        conn.execute("INSERT INTO recordings VALUES ('a', 'b')")
    result = CliRunner().invoke(main, ["collapse", str(out)])
    assert result.exit_code == 1
    lines = result.stderr.strip().splitlines()
    assert len(lines) == 1 and "catalogue.sqlite" in lines[0] and "no status column" in lines[0]
    assert "Traceback" not in result.output


def test_collapse_reads_only_inside_its_output_folder(pool_run, tmp_path):
    # Issue 17, finding 12: the catalogue's output column named any path; a row that
    # points outside OUT is left out with its reason, the others still collapse.
    out, _ = pool_run
    copy = tmp_path / "out"
    shutil.copytree(out, copy)
    outside = tmp_path / "elsewhere"
    shutil.copytree(copy / "mu120", outside)
    with sqlite3.connect(copy / "catalogue.sqlite") as conn:
        conn.execute("UPDATE recordings SET output = ? WHERE label = ?", ("../elsewhere", "mu120"))
    result = CliRunner().invoke(main, ["collapse", str(copy)])
    assert result.exit_code == 0, result.output
    (curve,) = json.loads((copy / "collapse" / "collapse.json").read_text())["curves"]
    assert "mu120" not in [m["label"] for m in curve["members"]]
    reasons = dict(curve["left_out"]) if isinstance(curve["left_out"][0], list) else {
        item["label"]: item["reason"] for item in curve["left_out"]}  # fmt: skip
    assert "outside" in reasons["mu120"]


def test_published_folders_honour_the_umask(pool_run):
    # Issue 17, finding 11: each recording's folder was made private (0700) by the
    # temporary-folder call and kept that mode when published; colleagues in the group
    # could not read it. The umask decides, as for any folder the user makes.
    import os

    out, _ = pool_run
    mask = os.umask(0o022)
    os.umask(mask)
    for label in GOOD:
        assert (out / label).stat().st_mode & 0o777 == 0o777 & ~mask


def test_collapse_replaces_its_folder_whole_and_keeps_what_it_did_not_write(pool_run, tmp_path):
    # Issue 17, finding 3: a figure of a regime the earlier collapse had, and
    # this one has not, must not stay beside the new files.
    out, _ = pool_run
    dest = tmp_path / "collapse"
    args = ["collapse", str(out), "-o", str(dest)]
    assert CliRunner().invoke(main, args).exit_code == 0
    (dest / "collapse-inertial.png").write_bytes(b"an earlier run's figure")
    again = CliRunner().invoke(main, args)
    assert again.exit_code == 0, again.output
    assert not (dest / "collapse-inertial.png").exists()
    assert (dest / "collapse.json").is_file()
    (dest / "notes.txt").write_text("mine")
    for extra in ([], ["--overwrite"]):
        refused = CliRunner().invoke(main, [*args, *extra])
        assert refused.exit_code == 1 and "notes.txt" in refused.output, refused.output
    assert (dest / "notes.txt").read_text() == "mine"
