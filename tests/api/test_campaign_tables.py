"""A campaign's tables from Python, made by the job script ``dropkin batch --job-script
slurm`` writes, run here with bash as a cluster node would run it.

The SLURM lines are comments to bash, so the script runs the same batch on
this machine; its catalogue must hold the numbers ``dropkin.analyze`` gives
for the same recording and options, and read_catalogue/read_results must
give the catalogue's rows (read here with Python's own sqlite3) and the
recording's radius.csv.
"""

from __future__ import annotations

import os
import shutil
import sqlite3
import subprocess
from pathlib import Path

import pandas as pd
from click.testing import CliRunner

import dropkin
from dropkin.cli import main

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = ROOT / "sample_frames" / "fast_pair.tif"

MANIFEST = """
[campaign]
name = "one sample"

[shared]
analysis = { bootstrap = 200, seed = 0, overlays = 0 }

[[recordings]]
path = "runs/fast_pair.tif"
recording = { frame_rate = "60 kHz", pixel_size = "20 µm/px" }
liquid = "water"
temperature = "20 degC"
"""


def test_the_job_script_runs_the_batch_and_python_reads_its_tables(
    tmp_path, monkeypatch, api_result
):
    (tmp_path / "runs").mkdir()
    for name in ("fast_pair.tif", "fast_pair.toml"):
        shutil.copy(SAMPLE.with_name(name), tmp_path / "runs" / name)
    (tmp_path / "campaign.toml").write_text(MANIFEST, encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    args = ["batch", "campaign.toml", "-o", "out", "--jobs", "3", "--job-script", "slurm"]
    made = CliRunner().invoke(main, args)
    assert made.exit_code == 0, made.output
    lines = made.output.splitlines()
    assert lines[0] == "#!/bin/bash"
    assert "#SBATCH --cpus-per-task=3" in lines and "#SBATCH --nodes=1" in lines
    assert lines[-1].endswith("-m dropkin batch campaign.toml -o out --jobs 3")
    assert not (tmp_path / "out").exists()  # printed, not run
    script = tmp_path / "job.sh"
    script.write_text(made.output, encoding="utf-8")
    env = {**os.environ, "PYTHONPATH": str(ROOT / "src")}
    ran = subprocess.run(
        ["bash", str(script)], cwd="/", env=env, capture_output=True, text=True, timeout=300
    )
    assert ran.returncode == 0, ran.stderr
    assert "1 analysed" in ran.stdout

    catalogue = dropkin.read_catalogue(tmp_path / "out")
    with sqlite3.connect(tmp_path / "out" / "catalogue.sqlite") as conn:
        reference = pd.read_sql_query("SELECT * FROM recordings ORDER BY label", conn)
    pd.testing.assert_frame_equal(catalogue, reference)
    (row,) = catalogue.to_dict("records")
    assert (row["label"], row["status"]) == ("fast_pair", "complete")

    result = api_result  # the same recording (another copy) with the same options
    dom = result.verdict.dominant
    assert (row["regime"], row["exponent_fit"]) == (dom.key, dom.exponent_fit)
    assert (row["exponent_ci_low"], row["exponent_ci_high"]) == tuple(dom.exponent_ci)

    table = dropkin.read_results(tmp_path / "out")
    assert list(table.columns[:2]) == ["label", "frame"] and set(table["label"]) == {"fast_pair"}
    mine = result.to_pandas()
    pd.testing.assert_frame_equal(table.drop(columns="label"), mine)


def test_a_job_script_and_a_scheduler_do_not_go_together(tmp_path):
    manifest = tmp_path / "campaign.toml"
    manifest.write_text(MANIFEST, encoding="utf-8")
    args = ["batch", str(manifest), "-o", str(tmp_path / "out"), "--job-script", "slurm"]
    run = CliRunner().invoke(main, [*args, "--scheduler", "tcp://127.0.0.1:8786"])
    assert run.exit_code == 2 and "--scheduler" in run.output
