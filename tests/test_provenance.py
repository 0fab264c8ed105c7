"""Issue 16, point 4: provenance that reproduces a run, and a datapackage.json per output folder.

The command runs through the real command line (click's CliRunner) on the
shipped samples. The data package is checked by the Frictionless Data
reference implementation (the ``frictionless`` package, a test extra)
against the Data Package and Table Schema standards
(https://specs.frictionlessdata.io); a corrupted ``radius.csv`` must fail it.
"""

from __future__ import annotations

import json
import os
import platform
import shlex
import shutil
from datetime import UTC, datetime
from pathlib import Path

import numpy as np
import pytest
import scipy
from click.testing import CliRunner

import dropkin.cli
from dropkin import _provenance
from dropkin.pipeline._package import datapackage

if os.environ.get("CI"):  # .ci/run installs the test extras: a missing package fails there
    import frictionless
else:
    frictionless = pytest.importorskip("frictionless")

SAMPLES = Path(__file__).resolve().parents[1] / "sample_frames"
ARGS = ("--frame-rate", "60 kfps", "--pixel-size", "20 um", "--bootstrap", "20")


def _run(*argv):
    return CliRunner().invoke(dropkin.cli.main, [str(a) for a in argv])


def _json(path: Path) -> dict:
    return json.loads(path.read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def pair(tmp_path_factory):
    """`analyze` of the two-drop sample with its frame rate and pixel size typed in."""
    out = tmp_path_factory.mktemp("provenance") / "results" / "pair"
    result = _run("analyze", SAMPLES / "fast_pair.tif", "-o", out, *ARGS)
    assert result.exit_code == 0, result.output
    return out


def _validate(package: Path):
    return frictionless.validate(str(package))


def test_the_command_line_and_the_options_as_typed_are_recorded(pair):
    run = _json(pair / "measure.json")["provenance"]["run"]
    assert shlex.split(run["command_line"]) == [
        "dropkin", "analyze", str(SAMPLES / "fast_pair.tif"), "-o", str(pair), *ARGS,
    ]  # fmt: skip
    given = run["options_given"]
    assert given["--frame-rate"] == "60 kfps" and given["--pixel-size"] == "20 um"
    assert given["--bootstrap"] == "20" and "--threshold" not in given  # a default: not typed
    # fit.json names the same run
    assert _json(pair / "fit.json")["provenance"]["run"]["command_line"] == run["command_line"]


def test_the_options_as_resolved_are_recorded_in_si(pair):
    info = _json(pair / "measure.json")
    assert info["frame_rate_hz"] == pytest.approx(60e3, rel=1e-12)
    assert info["pixel_size_m"] == pytest.approx(20e-6, rel=1e-12)
    assert info["provenance"]["frame_rate_origin"] == "command line"
    settings = info["provenance"]["settings"]
    assert settings["bootstrap"] == 20 and settings["threshold"] == 0.5  # default, resolved
    assert _json(pair / "fit.json")["provenance"]["settings"]["bootstrap"] == 20


def test_versions_platform_and_utc_time_are_recorded(pair):
    run = _json(pair / "measure.json")["provenance"]["run"]
    versions = run["versions"]
    assert versions["dropkin"] == dropkin.__version__
    assert versions["numpy"] == np.__version__ and versions["scipy"] == scipy.__version__
    for name in ("pint", "opencv", "tifffile", "matplotlib"):
        assert versions[name], name
    assert run["python"].endswith(platform.python_version())
    assert run["platform"] == platform.platform()
    created = datetime.fromisoformat(run["created_utc"])
    assert created.utcoffset().total_seconds() == 0
    assert abs((datetime.now(UTC) - created).total_seconds()) < 3600


def test_paths_are_relative_to_the_output_folder(pair):
    prov = _json(pair / "measure.json")["provenance"]
    for key in ("input", "experiment_file"):
        assert not Path(prov[key]).is_absolute(), key
    assert (pair / prov["input"]).resolve() == (SAMPLES / "fast_pair.tif").resolve()
    assert (pair / prov["experiment_file"]).resolve() == (SAMPLES / "fast_pair.toml").resolve()
    # the one absolute copy: the recording, which the folder never holds
    assert Path(prov["input_absolute"]) == (SAMPLES / "fast_pair.tif").absolute()
    # the command line's relative paths count from the recorded working directory
    assert (pair / prov["run"]["working_directory"]).resolve() == Path.cwd().resolve()


def test_a_fit_from_another_directory_finds_the_experiment_the_provenance_names(
    pair, tmp_path, monkeypatch
):
    """The relative experiment path counts from measure.json's folder, not from the cwd."""
    monkeypatch.chdir(tmp_path)
    result = _run("fit", pair / "radius.csv", "-o", "refit", "--bootstrap", "20")
    assert result.exit_code == 0, result.output
    prov = _json(tmp_path / "refit" / "fit.json")["provenance"]
    assert prov["run"]["working_directory"] == ".."
    assert (tmp_path / "refit" / prov["experiment_file"]).resolve() == (
        SAMPLES / "fast_pair.toml"
    ).resolve()


def test_two_runs_differ_only_in_the_run_and_the_paths(pair, tmp_path):
    again = tmp_path / "again"
    result = _run("analyze", SAMPLES / "fast_pair.tif", "-o", again, *ARGS)
    assert result.exit_code == 0, result.output
    for name in ("radius.csv", "datapackage.json"):
        assert (again / name).read_bytes() == (pair / name).read_bytes(), name
    for name in ("measure.json", "fit.json"):
        first, second = _json(pair / name), _json(again / name)
        for info in (first, second):
            prov = info["provenance"]
            for key in ("run", "input", "experiment_file", "radius_csv"):
                prov.pop(key, None)
        assert first == second, name


def test_a_call_from_python_says_it_has_no_command_line(pair):
    """The command line's record ends with the command (this process ran one above)."""
    assert _provenance.current_invocation() is None
    run = _provenance.run_record()
    assert run["command_line"] is None and run["options_given"] is None


def test_the_data_package_validates_and_describes_every_column(pair):
    report = _validate(pair / "datapackage.json")
    assert report.valid, report.flatten(["rowNumber", "fieldName", "type", "message"])
    package = _json(pair / "datapackage.json")
    by_name = {r["name"]: r for r in package["resources"]}
    radius = by_name["radius"]
    header = (pair / "radius.csv").read_text(encoding="utf-8").splitlines()[0].split(",")
    fields = radius["schema"]["fields"]
    assert [f["name"] for f in fields] == header
    assert radius["schema"]["primaryKey"] == ["frame"]
    assert radius["schema"]["missingValues"] == [""]
    units = {f["name"]: f.get("unit") for f in fields}
    assert units["time_s"] == "s" and units["radius_m"] == "m" and units["frame"] is None
    assert all(f["description"] for f in fields)
    assert units["radius_level_0.4_m"] == "m"
    # the other files are resources too, with paths inside the folder
    assert {"measure", "fit", "report", "plot-radius.png"} <= set(by_name)
    assert all((pair / r["path"]).is_file() for r in package["resources"])


@pytest.mark.parametrize(
    ("edit", "error"),
    [
        (lambda cells: cells.__setitem__(3, "abc"), "type-error"),  # radius_m not a number
        (lambda cells: cells.__setitem__(5, "touching"), "constraint-error"),  # unknown status
        (lambda cells: cells.__setitem__(0, "0"), "primary-key"),  # a frame given twice
    ],
)
def test_a_corrupted_radius_csv_fails_validation(pair, tmp_path, edit, error):
    bad = tmp_path / "bad"
    shutil.copytree(pair, bad)
    lines = (bad / "radius.csv").read_text(encoding="utf-8").splitlines()
    cells = lines[10].split(",")
    edit(cells)
    lines[10] = ",".join(cells)
    (bad / "radius.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    report = _validate(bad / "datapackage.json")
    assert not report.valid
    found = report.flatten(["rowNumber", "type"])
    assert [11, error] in found, found


def test_a_spreading_measurement_describes_its_angles(tmp_path):
    out = tmp_path / "spreading"
    result = _run("measure", SAMPLES / "spreading_drop", "-o", out, "--overlays", "0")
    assert result.exit_code == 0, result.output
    package = datapackage(out)
    angles = next(r for r in package["resources"] if r["name"] == "angles")
    assert [f.get("unit") for f in angles["schema"]["fields"]] == [None, "s", "deg", "deg"]
    assert _json(out / "datapackage.json") == package
    report = _validate(out / "datapackage.json")
    assert report.valid, report.flatten(["rowNumber", "fieldName", "type", "message"])
