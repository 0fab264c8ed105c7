"""The input is pinned for the run (issue 17, finding 4; issue 18).

``measure.json`` records the SHA-256 of exactly the bytes measured: the files
are opened when the run starts and hashed from those descriptors beside the
measurement; a file replaced or written to during the run fails it with one
line (exit code 1, as every bad input) and nothing is written with a wrong
hash. The file is changed from a hook around the measurement, the way
another program would change it while dropkin reads it. The reference digest
is Python's ``hashlib`` over the file's bytes.
"""

import hashlib
import importlib
import json
import os
import shutil
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from dropkin.cli import main

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"


def _copy_sample(tmp_path) -> Path:
    src = tmp_path / "src"
    src.mkdir()
    for name in ("fast_pair.tif", "fast_pair.toml"):
        shutil.copy(SAMPLES / name, src / name)
    return src / "fast_pair.tif"


def _change_during_measurement(monkeypatch, change):
    """Run `change()` right after the frames were measured, inside the run."""
    importlib.import_module("dropkin.measure")
    package = sys.modules["dropkin.measure"]
    real = package.measure

    def measure_then_change(*args, **kwargs):
        result = real(*args, **kwargs)
        change()
        return result

    monkeypatch.setattr(package, "measure", measure_then_change)


def _replace(path: Path):
    def change():
        other = path.with_name("other.tif")
        shutil.copy(SAMPLES / "fast_pair.tif", other)
        with other.open("ab") as handle:
            handle.write(b"\0")  # other bytes, same frames
        os.replace(other, path)

    return change


def _append(path: Path):
    def change():
        with path.open("ab") as handle:
            handle.write(b"\0" * 16)

    return change


@pytest.mark.parametrize("how", [_replace, _append], ids=["replaced", "written-to"])
@pytest.mark.parametrize("command", ["measure", "analyze"])
def test_a_file_changed_during_the_run_fails_in_one_line_and_writes_no_result(
    tmp_path, monkeypatch, how, command
):
    source = _copy_sample(tmp_path)
    _change_during_measurement(monkeypatch, how(source))
    out = tmp_path / "out"
    fit = ["--bootstrap", "5"] if command == "analyze" else []
    result = CliRunner().invoke(main, [command, str(source), "-o", str(out), *fit])
    assert result.exit_code == 1, result.output
    lines = [line for line in result.stderr.splitlines() if line]
    assert len(lines) == 1, lines
    assert lines[0].startswith("dropkin: error: ") and str(source) in lines[0]
    assert "changed while it was being measured" in lines[0]
    written = sorted(p.relative_to(out).as_posix() for p in out.rglob("*") if p.is_file())
    assert not [p for p in written if p.endswith((".csv", ".json", ".html", ".png"))], written


def test_the_recorded_digest_is_that_of_the_bytes_measured(tmp_path):
    source = _copy_sample(tmp_path)
    out = tmp_path / "out"
    result = CliRunner().invoke(main, ["measure", str(source), "-o", str(out)])
    assert result.exit_code == 0, result.output
    info = json.loads((out / "measure.json").read_text(encoding="utf-8"))
    assert info["provenance"]["sha256"] == hashlib.sha256(source.read_bytes()).hexdigest()


def test_a_folder_of_frames_is_hashed_file_by_file_in_order(tmp_path):
    out = tmp_path / "out"
    folder = SAMPLES / "viscous_pair"
    result = CliRunner().invoke(main, ["measure", str(folder), "-o", str(out)])
    assert result.exit_code == 0, result.output
    digest = hashlib.sha256()
    for path in sorted(folder.glob("*.png")):
        digest.update(path.read_bytes())
    info = json.loads((out / "measure.json").read_text(encoding="utf-8"))
    assert info["provenance"]["sha256"] == digest.hexdigest()
