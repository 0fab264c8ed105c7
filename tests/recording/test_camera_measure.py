"""A camera file measured end to end: the same frames as the shipped TIFF sample.

The frames of ``sample_frames/fast_pair.tif`` (12-bit data in 16-bit words)
are repacked as a .mraw recording with a .cih header, and as packed 12-bit;
``dropkin measure`` must give the same radius series as from the TIFF, plus
radius.csv's ``time_since_trigger_s`` column, and ``dropkin info`` must show
what the header says.
"""

from __future__ import annotations

import csv
import shutil
from pathlib import Path

import numpy as np
import pytest
import tifffile
from click.testing import CliRunner

from dropkin.cli import main
from dropkin.recording._camera import pack12
from dropkin.series import read_series

SAMPLE = Path(__file__).resolve().parents[2] / "sample_frames" / "fast_pair.tif"

CIH = """#Camera Information Header
Record Rate(fps) : 60000
Total Frame : {count}
Start Frame : -20
Correct Trigger Frame : 0
Save Step : 1
Image Width : {cols}
Image Height : {rows}
Color Type : Mono
Color Bit : {bits}
File Format : MRaw
EffectiveBit Depth : 12
EffectiveBit Side : Lower
"""


def _as_mraw(folder: Path, bits: int) -> Path:
    frames = tifffile.imread(SAMPLE)
    count, rows, cols = frames.shape
    data = pack12(frames.ravel()) if bits == 12 else frames.astype("<u2").tobytes()
    (folder / "fast_pair.mraw").write_bytes(data)
    header = folder / "fast_pair.cih"
    header.write_text(CIH.format(count=count, rows=rows, cols=cols, bits=bits))
    # The experiment file without its frame rate: the header gives it.
    text = SAMPLE.with_suffix(".toml").read_text().replace('frame_rate = "60000 Hz"\n', "")
    (folder / "fast_pair.toml").write_text(text)
    return header


def _run(*args):
    result = CliRunner().invoke(main, [str(a) for a in args])
    assert result.exit_code == 0, result.output
    return result.output


@pytest.mark.parametrize("bits", [16, 12])
def test_measure_a_mraw_like_the_tiff(tmp_path, bits):
    header = _as_mraw(tmp_path, bits)
    shutil.copy(SAMPLE.with_suffix(".toml"), tmp_path / "tiff.toml")
    _run("measure", SAMPLE, "-o", tmp_path / "tiff", "--experiment", tmp_path / "tiff.toml")
    _run("measure", header, "-o", tmp_path / "mraw", "--experiment", tmp_path / "fast_pair.toml")
    tiff = read_series(tmp_path / "tiff" / "radius.csv")
    mraw = read_series(tmp_path / "mraw" / "radius.csv")
    assert np.array_equal(tiff.radius, mraw.radius, equal_nan=True)
    assert np.allclose(tiff.time, mraw.time, rtol=1e-12)
    assert mraw.contact_time == pytest.approx(tiff.contact_time, rel=1e-12)
    assert tiff.trigger_time is None and mraw.trigger_time == pytest.approx(20 / 60000)
    with open(tmp_path / "mraw" / "radius.csv", newline="") as handle:
        rows = list(csv.DictReader(handle))
    since = np.array([float(row["time_since_trigger_s"]) for row in rows])
    assert np.allclose(since, (np.arange(len(rows)) - 20) / 60000, atol=1e-15)


def test_info_shows_the_header(tmp_path):
    header = _as_mraw(tmp_path, 12)
    text = header.read_text().replace("Save Step : 1", "Save Step : 36")
    header.write_text(text.replace("Start Frame : -20", "Start Frame : -720"))
    shown = _run("info", header)
    assert "record rate     60000 fps, save step 36" in shown
    assert "saved rate      1666.67 fps" in shown
    assert "interval 600 µs" in shown
    assert "trigger         at frame 20 of the file" in shown
    assert "12 bits" in shown and "packed 12-bit" in shown
