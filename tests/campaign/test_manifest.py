"""The campaign manifest: merging, labels, and paths that may not leave its folder."""

from __future__ import annotations

import os

import pytest

from dropkin.campaign._manifest import read_manifest
from dropkin.errors import DropkinError


@pytest.fixture
def tree(tmp_path):
    """campaign/ with two recordings (files need only exist here) and one outside it."""
    root = tmp_path / "campaign"
    (root / "runs" / "a").mkdir(parents=True)
    (root / "runs" / "b").mkdir()
    (root / "runs" / "a" / "frame_000.png").write_bytes(b"")
    (root / "runs" / "b" / "frame_000.png").write_bytes(b"")
    (root / "bg.png").write_bytes(b"")
    outside = tmp_path / "elsewhere"
    outside.mkdir()
    (outside / "c.tif").write_bytes(b"")
    return root, outside


def _write(root, text):
    path = root / "m.toml"
    path.write_text(text, encoding="utf-8")
    return path


def _refused(path, **kwargs) -> str:
    with pytest.raises(DropkinError) as info:
        read_manifest(path, **kwargs)
    message = str(info.value)
    assert "\n" not in message and str(path) in message
    return message


def test_shared_values_then_the_entry_win_and_globs_label_by_name(tree):
    root, _ = tree
    path = _write(
        root,
        """
[shared]
recording = { pixel_size = "5 um", frame_rate = "10 kHz" }
liquid = { name = "water" }
analysis = { threshold = 0.4, seed = 3, background = "bg.png" }

[[recordings]]
path = "runs/a"
label = "first"
recording = { frame_rate = "20 kHz" }
analysis = { roi = "0:100,10:200" }

[[recordings]]
glob = "runs/b*"
""",
    )
    campaign = read_manifest(path)
    first, second = campaign.tasks
    assert (first.label, second.label) == ("first", "b")
    assert first.overrides["recording.frame_rate"] == "20 kHz"
    assert second.overrides["recording.frame_rate"] == "10 kHz"
    assert first.overrides["recording.pixel_size"] == "5 um"
    assert first.settings.threshold == 0.4 and first.settings.seed == 3
    assert first.settings.roi == (0, 100, 10, 200) and second.settings.roi is None
    assert first.settings.background == str((root / "bg.png").resolve())
    assert first.source == str((root / "runs" / "a").resolve())


@pytest.mark.parametrize(
    ("entry", "key"),
    [
        ('path = "../elsewhere/c.tif"', "recordings[1].path"),
        ('glob = "../elsewhere/*"', "recordings[1].glob"),
        ('path = "runs/../../elsewhere/c.tif"', "recordings[1].path"),
    ],
)
def test_paths_may_not_leave_the_manifests_folder(tree, entry, key):
    root, _ = tree
    path = _write(root, f"[[recordings]]\n{entry}\n")
    message = _refused(path)
    assert key in message and "leads out of the manifest's folder" in message
    # Allowed by the option, they resolve.
    (task,) = read_manifest(path, allow_outside=True).tasks
    assert task.source.endswith("c.tif")


def test_absolute_paths_need_the_option(tree):
    root, outside = tree
    target = outside / "c.tif"
    path = _write(root, f'[[recordings]]\npath = "{target}"\n')
    assert "is an absolute path" in _refused(path)
    (task,) = read_manifest(path, allow_outside=True).tasks
    assert task.source == str(target.resolve())


@pytest.mark.skipif(not hasattr(os, "symlink"), reason="needs symbolic links")
def test_a_symbolic_link_out_of_the_folder_is_refused(tree):
    root, outside = tree
    (root / "link.tif").symlink_to(outside / "c.tif")
    path = _write(root, '[[recordings]]\npath = "link.tif"\n')
    assert "leads out" in _refused(path)


def test_an_experiment_or_background_outside_is_refused_too(tree):
    root, outside = tree
    (outside / "exp.toml").write_text("")
    path = _write(root, '[[recordings]]\npath = "runs/a"\nexperiment = "../elsewhere/exp.toml"\n')
    assert "recordings[1].experiment" in _refused(path)
    path = _write(
        root,
        '[shared]\nanalysis = { background = "../elsewhere/c.tif" }\n'
        '[[recordings]]\npath = "runs/a"\n',
    )
    assert "shared.analysis.background" in _refused(path)


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("[[recordings]\n", "is not valid TOML"),
        ("", "lists no recordings"),
        ("[extra]\n[[recordings]]\npath = 'runs/a'\n", "extra"),
        ("[[recordings]]\npath = 'runs/a'\nspeed = 3\n", "recordings[1].speed"),
        ("[[recordings]]\nlabel = 'x'\n", "needs either path or glob"),
        ("[[recordings]]\npath = 'runs/a'\nglob = 'runs/*'\n", "needs either path or glob"),
        ("[[recordings]]\npath = 'runs/missing'\n", "does not exist"),
        ("[[recordings]]\nglob = 'nothing*'\n", "matches no recording"),
        (
            (
                "[[recordings]]\npath = 'runs/a'\nlabel = 'same'\n"
                "[[recordings]]\npath = 'runs/b'\nlabel = 'same'\n"
            ),
            "recordings[2].label",
        ),
        ("[[recordings]]\npath = 'runs/a'\nlabel = '../up'\n", "is not a usable label"),
        (
            "[[recordings]]\npath = 'runs/a'\nrecording = { frame_rate = 20000 }\n",
            "recordings[1].recording.frame_rate",
        ),
        (
            "[[recordings]]\npath = 'runs/a'\nliquid = { viscosity = '72 m/s' }\n",
            "recordings[1].liquid.viscosity",
        ),
        (
            "[shared]\nanalysis = { threshold = 2.0 }\n[[recordings]]\npath = 'runs/a'\n",
            "shared.analysis.threshold",
        ),
        (
            "[shared]\nanalysis = { roi = '5:1,0:9' }\n[[recordings]]\npath = 'runs/a'\n",
            "shared.analysis.roi",
        ),
        (
            "[shared]\nanalysis = { jobs = 4 }\n[[recordings]]\npath = 'runs/a'\n",
            "shared.analysis.jobs",
        ),
        (
            "[shared]\nsetup = { geometry = 'sessile' }\n[[recordings]]\npath = 'runs/a'\n",
            "shared.setup.geometry",
        ),
    ],
)
def test_a_bad_manifest_is_refused_in_one_line_naming_the_key(tree, text, words):
    root, _ = tree
    assert words in _refused(_write(root, text))


def test_the_initial_radius_setting_must_be_a_boolean(tmp_path):
    # The manifest's analysis table takes initial_radius = true/false (TOML booleans).
    (tmp_path / "a.tif").write_bytes(b"")
    good = tmp_path / "good.toml"
    good.write_text(
        '[shared]\nanalysis = { initial_radius = true }\n[[recordings]]\npath = "a.tif"\n'
    )
    (task,) = read_manifest(good).tasks
    assert task.settings.initial_radius is True
    bad = tmp_path / "bad.toml"
    bad.write_text(
        '[shared]\nanalysis = { initial_radius = "yes" }\n[[recordings]]\npath = "a.tif"\n'
    )
    with pytest.raises(DropkinError, match="initial_radius.*must be true or false"):
        read_manifest(bad)


LIBRARY = """
[liquid."bench-oil"]
description = "invented for this test"
surface_tension = "21 mN/m"
viscosity = "20 mPa*s"
density = "950 kg/m^3"
"""


def test_sample_short_keys_and_a_liquid_library(tree):
    root, _ = tree
    (root / "lib").mkdir()
    (root / "lib" / "liquids.toml").write_text(LIBRARY, encoding="utf-8")
    path = _write(
        root,
        """
[shared]
liquid = "water"
temperature = "21 degC"
liquids = "lib/liquids.toml"

[[recordings]]
path = "runs/a"
liquid = "bench-oil"
drop_radius = "1 mm"
medium = "air"

[[recordings]]
path = "runs/b"
liquid = { name = "ethanol", temperature = "25 degC" }
""",
    )
    first, second = read_manifest(path).tasks
    assert first.overrides["liquid.name"] == "bench-oil"
    assert first.overrides["liquid.temperature"] == "21 degC"
    assert first.overrides["drops.radius"] == "1 mm"
    assert first.overrides["medium.name"] == "air"
    assert second.overrides["liquid.name"] == "ethanol"
    assert second.overrides["liquid.temperature"] == "25 degC"
    library = str((root / "lib" / "liquids.toml").resolve())
    assert first.liquids_file == second.liquids_file == library


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ('liquids = "../elsewhere/lib.toml"', ("recordings[1].liquids", "leads out")),
        ('liquids = "bg.png"', ("recordings[1].liquids", "is not valid TOML")),
        ('liquids = "none.toml"', ("recordings[1].liquids", "does not exist")),
        ('temperature = "21 C"', ("recordings[1].temperature", "degC")),
        ('drop_radius = "-1 mm"', ("recordings[1].drop_radius", "positive")),
        (
            'temperature = "21 degC"\nliquid = { temperature = "20 degC" }',
            ("recordings[1].temperature", "given twice"),
        ),
        ("liquid = 3", ("recordings[1].liquid", "must be a table")),
    ],
)
def test_bad_sample_keys_are_refused_naming_them(tree, text, words):
    root, outside = tree
    (outside / "lib.toml").write_text(LIBRARY, encoding="utf-8")
    (root / "bg.png").write_bytes(b"not toml [[")
    message = _refused(_write(root, f'[[recordings]]\npath = "runs/a"\n{text}\n'))
    assert all(word in message for word in words), message
