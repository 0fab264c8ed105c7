"""The Python API (dropkin.open, analyze, read_results, read_catalogue) against the
real command line on a shipped sample, and the notebook walk-through in examples/.

The reference for the numbers is the command line itself, run through click
on the same recording with the same options: the API must give the same
radii and the same fit, bit for bit, and write the same files. The frames
are checked against tifffile's own reading of the stack; the sample's frame
rate and pixel size against its experiment file.
"""

from __future__ import annotations

import json
import runpy
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import tifffile
from click.testing import CliRunner

import dropkin
from dropkin.api._options import ANALYZE_KEYWORDS, SETTING_RANGES, THRESHOLD_RANGE
from dropkin.cli import main
from dropkin.errors import ExperimentError
from dropkin.scaling import verdict_to_dict
from dropkin.series import read_series

ROOT = Path(__file__).resolve().parents[2]
SAMPLE = ROOT / "sample_frames" / "fast_pair.tif"
EXAMPLE = ROOT / "examples" / "notebook_walkthrough.py"
# The walk-through's options (those of the api_result fixture), as keywords and
# as the command line types them.
OPTIONS = {
    "frame_rate": "60 kHz",
    "pixel_size": "20 µm/px",
    "liquid": "water",
    "temperature": "20 degC",
}
CLI_OPTIONS = [f"--{k.replace('_', '-')}={v}" for k, v in OPTIONS.items()]


@pytest.fixture(scope="module")
def cli_out(tmp_path_factory):
    out = tmp_path_factory.mktemp("cli") / "fast_pair"
    run = CliRunner().invoke(main, ["analyze", str(SAMPLE), "-o", str(out), *CLI_OPTIONS])
    assert run.exit_code == 0, run.output
    return out


@pytest.fixture
def result(api_result):
    return api_result


def _without(data: dict, *keys) -> dict:
    return {k: v for k, v in data.items() if k not in keys}


def test_the_api_measures_the_radii_the_command_line_writes(cli_out, result):
    written = read_series(cli_out / "radius.csv")
    for name in ("frame", "time", "radius", "radius_err"):
        np.testing.assert_array_equal(getattr(result.series, name), getattr(written, name))
    assert list(result.series.status) == list(written.status)
    assert result.series.contact_time == written.contact_time
    assert result.contact.time == written.contact_time
    # the table in memory is the table of the files, exactly
    pd.testing.assert_frame_equal(result.to_pandas(), dropkin.read_results(cli_out))


def test_the_api_fits_the_numbers_the_command_line_writes(cli_out, result):
    fit = json.loads((cli_out / "fit.json").read_text(encoding="utf-8"))
    fit = _without(fit, "provenance", "time_origin")
    fit["settings"] = _without(fit["settings"], "sample")
    mine = json.loads(json.dumps(verdict_to_dict(result.verdict), allow_nan=False))
    assert mine == fit
    assert result.verdict.dominant.exponent_fit == fit["dominant"]["exponent_fit"]


def test_the_walkthrough_runs_and_writes_what_the_command_line_writes(
    cli_out, tmp_path, monkeypatch, capsys
):
    monkeypatch.setattr(sys, "argv", [str(EXAMPLE), str(tmp_path)])
    runpy.run_path(str(EXAMPLE), run_name="__main__")
    said = capsys.readouterr().out
    folder = tmp_path / "fast_pair"
    assert f"wrote {folder}" in said and "n = " in said
    assert (folder / "radius.csv").read_bytes() == (cli_out / "radius.csv").read_bytes()
    for name in ("measure.json", "fit.json"):
        mine, theirs = (
            json.loads((f / name).read_text(encoding="utf-8")) for f in (folder, cli_out)
        )
        assert _without(mine, "provenance") == _without(theirs, "provenance")
    mine = json.loads((folder / "fit.json").read_text(encoding="utf-8"))["provenance"]["run"]
    assert mine["command_line"] is None and mine["options_given"]["pixel_size"] == "20 µm/px"
    assert sorted(p.name for p in (folder / "plots").iterdir()) == sorted(
        p.name for p in (cli_out / "plots").iterdir()
    )
    assert (folder / "report.html").is_file() and (folder / "datapackage.json").is_file()
    assert {p.name for p in tmp_path.glob("*.png")} == {
        f"{stem}.png" for stem in ("radius", "local_exponent", "residuals")
    }


def test_figures_are_matplotlib_figures_of_the_series(result):
    from matplotlib.figure import Figure

    figures = result.figures()
    assert set(figures) >= {"radius"} and all(isinstance(f, Figure) for f in figures.values())
    ax = figures["radius"].axes[0]
    assert (ax.get_xscale(), ax.get_yscale()) == ("log", "log")


def test_open_honours_the_experiment_file_and_the_keywords():
    rec = dropkin.open(SAMPLE)
    # fast_pair.toml: frame_rate = "60000 Hz", pixel_size = "20 um"
    assert rec.frame_rate == 60000.0 and rec.pixel_size == pytest.approx(20e-6, rel=1e-15)
    assert rec.frame_rate_origin == "experiment file"
    stack = tifffile.imread(SAMPLE)
    assert (rec.shape, rec.ndim, rec.dtype) == (stack.shape, 3, stack.dtype)
    np.testing.assert_array_equal(np.asarray(rec), stack)
    np.testing.assert_array_equal(rec.to_dask(chunk_size=7)[10:20, 5].compute(), stack[10:20, 5])
    faster = dropkin.open(SAMPLE, frame_rate="30 kHz")
    assert faster.frame_rate == 30000.0 and faster.times[2] == pytest.approx(2 / 30000.0)


@pytest.mark.parametrize(
    ("call", "keywords", "named", "said"),
    [
        ("analyze", {"framerate": "1 kHz"}, "framerate", "is not an option of dropkin.analyze"),
        ("open", {"liquid": "water"}, "liquid", "an option of dropkin.analyze"),
        ("analyze", {"pixel_size": "20 px"}, "pixel_size = '20 px'", "image pixel"),
        ("analyze", {"temperature": "20 C"}, "temperature = '20 C'", "degC"),
        ("analyze", {"liquid": "watr"}, "liquid = 'watr'", "did you mean water"),
        ("analyze", {"threshold": 2}, "threshold = 2", "0.05 to 0.95"),
        ("analyze", {"jobs": 0}, "jobs = 0", "1 to 64"),
        ("analyze", {"t0": "1 m"}, "t0 = '1 m'", "unit of s"),
        ("analyze", {"plot_formats": "png,gif"}, "plot_formats = 'png,gif'", "png, svg, pdf"),
    ],
)
def test_a_bad_keyword_is_one_error_naming_it(call, keywords, named, said):
    with pytest.raises(ExperimentError) as caught:
        getattr(dropkin, call)(SAMPLE, **keywords)
    text = str(caught.value)
    assert text.startswith(named) and said in text and "recording." not in text


def test_the_keywords_are_the_analyze_command_options_with_the_same_ranges():
    command = main.commands["analyze"]
    params = {p.name: p for p in command.params}
    renamed = {"overlay_count": "overlays", "liquids_file": "liquids"}
    # where the files go, and whether an earlier run's folder may be replaced,
    # are said when writing: result.write(out, overwrite=...)
    names = {renamed.get(name, name) for name in params} - {"source", "out", "overwrite"}
    assert names == set(ANALYZE_KEYWORDS)
    for name, (low, high) in SETTING_RANGES.items():
        kind = params["overlay_count" if name == "overlays" else name].type
        assert (kind.min, kind.max) == (low, high), name
    assert (params["threshold"].type.min, params["threshold"].type.max) == THRESHOLD_RANGE


def test_import_dropkin_loads_the_api_only_when_used():
    import subprocess

    code = (
        "import sys, dropkin; print('dropkin.api' in sys.modules, 'pandas' in sys.modules);"
        "dropkin.read_results; print('dropkin.api' in sys.modules)"
    )
    env = {"PYTHONPATH": str(ROOT / "src"), "PATH": ""}
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env)
    assert run.stdout.split() == ["False", "False", "True"], run.stderr


def test_write_refuses_another_runs_folder_and_replaces_it_whole_when_asked(
    result, cli_out, tmp_path
):
    # The rule of every command that writes (issue on faults, finding 3): a folder
    # holding another run's results is refused, or with overwrite replaced whole.
    import shutil

    out = tmp_path / "used"
    shutil.copytree(cli_out, out)
    (out / "angles.csv").write_text("frame,left_deg,right_deg\n0,1,1\n", encoding="utf-8")
    with pytest.raises(dropkin.DropkinError, match="already holds the results of another run"):
        result.write(out)
    assert (out / "angles.csv").is_file()  # left as it was
    result.write(out, overwrite=True)
    assert not (out / "angles.csv").exists()  # nothing of the other run is kept
    assert (out / "radius.csv").read_bytes() == (cli_out / "radius.csv").read_bytes()
