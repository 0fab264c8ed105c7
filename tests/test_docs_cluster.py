"""docs/cluster.md and the README's Python example, checked against the code they describe.

Every ``dropkin`` command in a bash block of docs/cluster.md must parse with
the real command line (its options exist and take values as written), the
Python block must compile (dask-jobqueue, which it uses, is not installed
here, so it is not run), and the README's Python example runs as written.
"""

from __future__ import annotations

import re
import shlex
from pathlib import Path

import click
import pytest

from dropkin.cli import main

ROOT = Path(__file__).resolve().parents[1]
CLUSTER = ROOT / "docs" / "cluster.md"
README = ROOT / "README.md"


def _blocks(path: Path, language: str) -> list[str]:
    text = path.read_text(encoding="utf-8")
    return re.findall(rf"^```{language}\n(.*?)^```", text, flags=re.S | re.M)


def _commands(path: Path) -> list[list[str]]:
    commands = []
    for block in _blocks(path, "bash"):
        for line in block.splitlines():
            if line.startswith("dropkin "):
                words = shlex.split(line.split(">")[0])
                commands.append(words[1:])
    return commands


def test_cluster_page_has_the_commands_it_describes():
    commands = _commands(CLUSTER)
    flags = {word for args in commands for word in args if word.startswith("--")}
    assert {"--jobs", "--job-script", "--scheduler"} <= flags
    python = _blocks(CLUSTER, "python")
    assert len(python) == 1 and "SLURMCluster(" in python[0]


@pytest.mark.parametrize("args", _commands(CLUSTER), ids=" ".join)
def test_each_command_of_the_cluster_page_parses(args):
    name, *rest = args
    command = main.commands[name]
    ctx = click.Context(command, info_name=name)
    command.make_parser(ctx).parse_args(args=rest)  # raises on an unknown option


def test_the_cluster_page_python_compiles():
    (block,) = _blocks(CLUSTER, "python")
    compile(block, str(CLUSTER), "exec")


def test_the_readme_python_example_runs(tmp_path, monkeypatch, capsys):
    blocks = [b for b in _blocks(README, "python") if "dropkin.analyze(" in b]
    assert len(blocks) == 1
    (tmp_path / "sample_frames").symlink_to(ROOT / "sample_frames")
    monkeypatch.chdir(tmp_path)
    exec(compile(blocks[0], str(README), "exec"), {"__name__": "readme"})
    said = capsys.readouterr().out
    assert "inertial" in said and "(60, 224, 144) uint16" in said
