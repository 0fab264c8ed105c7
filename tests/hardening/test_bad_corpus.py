"""The corpus of bad inputs (``tests/data/bad/``) through every command it applies to.

The rule checked is the project's (docs/architecture.md, "Exit codes"; CLI docstring):
bad input gives exit code 1 and ONE line on stderr that names the file, the
key or the frame, never a traceback, and no output file left behind. Click's
usage errors (a bad option value caught while parsing) are exit code 2 and
click's own text, whose ``Error:`` line names the option.

The table is data-driven twice over:

- ``tests/data/bad/cases.toml`` (written by ``tests/data/make_bad.py``) says, for
  each case, its kind, which commands it goes through and which words the
  message must name;
- :data:`COMMANDS` below says, for each command, how a case of each kind is
  handed to it. A new command is one entry there, e.g.::

      "batch": Command(lambda case, out, good: ["batch", case.source, "-o", out]),

  and its cases one table each in ``make_bad.py`` with ``commands = ["batch"]``.

Most runs use click's CliRunner (in this process: fast); one case per command
and input kind also runs as a real subprocess of the installed ``dropkin``
script. The whole file took 32 s on 2 cores (21 s of CPU), most of it in the
subprocesses, which each import numpy, OpenCV and pint anew.
"""

from __future__ import annotations

import collections
import fnmatch
import importlib.util
import json
import os
import shutil
import subprocess
import sys
import tomllib
import traceback
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import pytest
from click.testing import CliRunner

from dropkin.cli import main

ROOT = Path(__file__).resolve().parents[2]
BAD = ROOT / "tests" / "data" / "bad"
GOOD_RECORDING = ROOT / "sample_frames" / "viscous_pair"  # shipped, measurable
KINDS = ("experiment", "recording", "series", "liquids", "options", "manifest", "catalogue")


def _make_bad():
    """The corpus script, imported from its file (tests are not a package)."""
    spec = importlib.util.spec_from_file_location("make_bad", ROOT / "tests/data/make_bad.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


MAKE_BAD = _make_bad()


@dataclass(frozen=True)
class Case:
    """One entry of ``cases.toml`` (see ``make_bad.py`` for the fields)."""

    name: str
    kind: str
    commands: tuple[str, ...]
    words: tuple[str, ...]
    about: str
    input: str | None = None
    options: tuple[str, ...] = ()
    exit: int = 1
    keeps: tuple[str, ...] = ()
    xfail: str | None = None

    @property
    def source(self) -> str:
        """The input's path (in the committed corpus)."""
        assert self.input is not None, f"case {self.name} has no input"
        return str(BAD / self.input)

    @property
    def args(self) -> list[str]:
        return [a.replace("{bad}", str(BAD)) for a in self.options]


def load_cases() -> list[Case]:
    table = tomllib.loads((BAD / "cases.toml").read_text(encoding="utf-8"))["case"]
    cases = []
    for name, entry in table.items():
        fields = {k: tuple(v) if isinstance(v, list) else v for k, v in entry.items()}
        cases.append(Case(name=name, **fields))
    return cases


@dataclass(frozen=True)
class Goods:
    """Good inputs a case's bad one is combined with (made per test run)."""

    recording: str  # a measurable recording
    series: str  # a radius.csv that `dropkin fit` accepts, experiment beside it


@dataclass(frozen=True)
class Command:
    """How a case goes through one command.

    Attributes
    ----------
    argv : callable
        ``argv(case, out, goods) -> list of str`` (without the program name);
        `out` is a fresh, not yet existing folder the command may write to.
    """

    argv: Callable[[Case, str, Goods], list[str]]
    kinds: tuple[str, ...] = field(default=KINDS)


def _source(case: Case, goods: Goods) -> list[str]:
    """SOURCE (and --experiment) for the commands that read a recording."""
    if case.kind == "recording":
        return [case.source]
    if case.kind == "experiment":
        return [goods.recording, "--experiment", case.source]
    return [goods.recording]


def _fit(case, out, goods):
    csv = case.source if case.kind == "series" else goods.series
    experiment = ["--experiment", case.source] if case.kind == "experiment" else []
    return ["fit", csv, "-o", out, *experiment, "--bootstrap", "10", *case.args]


def _predict(case, out, goods):
    extra = []
    if case.kind == "experiment":
        extra = ["--experiment", case.source]
    elif case.kind == "liquids":
        extra = ["--liquids", case.source, "--liquid", "bench-oil", "--drop-radius", "1 mm"]
    return ["predict", *extra, *case.args]


def _liquids(case, out, goods):
    args = case.args
    if "--liquid" in args:  # `dropkin liquids` takes the name as its argument
        i = args.index("--liquid")
        args = [args[i + 1], *args[:i], *args[i + 2 :]]
    library = ["--liquids", case.source] if case.kind == "liquids" else []
    return ["liquids", *args, *library]


COMMANDS: dict[str, Command] = {
    "info": Command(
        lambda case, out, goods: ["info", *_source(case, goods), *case.args],
        kinds=("experiment", "recording", "options"),
    ),
    "measure": Command(
        lambda case, out, goods: ["measure", *_source(case, goods), "-o", out, *case.args],
        kinds=("experiment", "recording", "options"),
    ),
    "analyze": Command(
        lambda case, out, goods: [
            "analyze",
            *_source(case, goods),
            "-o",
            out,
            "--bootstrap",
            "10",
            *case.args,
        ],
        kinds=("experiment", "recording", "options"),
    ),
    "fit": Command(_fit, kinds=("experiment", "series", "options")),
    "predict": Command(_predict, kinds=("experiment", "liquids", "options")),
    "liquids": Command(_liquids, kinds=("liquids", "options")),
    "synth": Command(lambda case, out, goods: ["synth", out, *case.args], kinds=("options",)),
    "batch": Command(
        lambda case, out, goods: ["batch", case.source, "-o", out, *case.args],
        kinds=("manifest",),
    ),
    "collapse": Command(
        lambda case, out, goods: ["collapse", case.source, "-o", out, *case.args],
        kinds=("catalogue",),
    ),
}

CASES = load_cases()
RUNS = [(c, cmd) for c in CASES for cmd in c.commands]


# ----------------------------------------------------------------- the good inputs


@pytest.fixture(scope="module")
def goods(tmp_path_factory) -> Goods:
    """The good series (from make_bad.py's own rows) with the good experiment beside it."""
    folder = tmp_path_factory.mktemp("good")
    (folder / "radius.csv").write_text(
        MAKE_BAD._csv(MAKE_BAD.good_series_rows()), encoding="utf-8"
    )
    (folder / "experiment.toml").write_text(MAKE_BAD.GOOD_EXPERIMENT, encoding="utf-8")
    return Goods(recording=str(GOOD_RECORDING), series=str(folder / "radius.csv"))


# ----------------------------------------------------------------- one run, judged


@dataclass
class Outcome:
    code: int
    stderr: str
    crash: str = ""  # a traceback, when the command raised


def _invoke(argv: list[str], cwd: Path) -> Outcome:
    """Run the command in this process with click's CliRunner, inside `cwd`."""
    previous = Path.cwd()
    os.chdir(cwd)
    try:
        result = CliRunner().invoke(main, argv)
    finally:
        os.chdir(previous)
    crash = ""
    if result.exception is not None and not isinstance(result.exception, SystemExit):
        crash = "".join(traceback.format_exception(*result.exc_info))
    return Outcome(result.exit_code, result.stderr, crash)


def _program() -> str:
    """The installed console script (beside this Python, as a venv installs it)."""
    beside = Path(sys.executable).with_name("dropkin")
    found = str(beside) if beside.is_file() else shutil.which("dropkin")
    assert found, "the dropkin console script is not installed (pip install -e .)"
    return found


def _subprocess(argv: list[str], cwd: Path) -> Outcome:
    done = subprocess.run(
        [_program(), *argv], cwd=cwd, capture_output=True, text=True, timeout=120, check=False
    )
    crash = done.stderr if "Traceback" in done.stderr else ""
    return Outcome(done.returncode, done.stderr, crash)


def _files(folder: Path) -> list[Path]:
    return sorted(p for p in folder.rglob("*") if p.is_file()) if folder.exists() else []


def judge(case: Case, outcome: Outcome, out: Path, cwd: Path, complete) -> list[str]:
    """What is wrong with one run (an empty list when it behaved)."""
    problems = []
    if outcome.crash:
        return [f"crashed:\n{outcome.crash}"]
    if outcome.code != case.exit:
        problems.append(f"exit code {outcome.code}, expected {case.exit}")
    lines = outcome.stderr.strip().splitlines()
    if "Traceback" in outcome.stderr:
        problems.append("a traceback on stderr")
    if case.exit == 1:
        message = lines[0] if len(lines) == 1 else ""
        if len(lines) != 1:
            problems.append(f"{len(lines)} lines on stderr, expected one")
        elif not message.startswith("dropkin: error: "):
            problems.append("the line does not start with 'dropkin: error: '")
    else:  # click's usage error: its text ends in the one "Error:" line
        errors = [line for line in lines if line.startswith("Error:")]
        message = errors[0] if len(errors) == 1 and lines[-1] == errors[0] else ""
        if not message:
            problems.append("no single final 'Error:' line from click")
    missing = [w for w in case.words if w not in message]
    if missing:
        problems.append(f"the message does not name {missing}")
    written = _files(out)
    kept = [
        p
        for p in written
        if any(fnmatch.fnmatchcase(p.relative_to(out).as_posix(), k) for k in case.keeps)
    ]
    extra = [p for p in written if p not in kept]
    if extra:
        problems.append(f"left {[str(p.relative_to(out)) for p in extra]}")
    for path in kept:
        problem = complete(path)
        if problem:
            problems.append(f"kept {path.name} incomplete: {problem}")
    stray = [p.name for p in cwd.iterdir() if p != out]
    if stray:
        problems.append(f"wrote {stray} into the working folder")
    if problems:
        problems.append(f"stderr was: {outcome.stderr.strip()!r}")
    return problems


def _run_case(case, command, goods, tmp_path, complete, runner=_invoke):
    cwd = tmp_path / f"{case.name}-{command}"
    cwd.mkdir()
    out = cwd / "out"
    argv = COMMANDS[command].argv(case, str(out), goods)
    return judge(case, runner(argv, cwd), out, cwd, complete)


# ----------------------------------------------------------------- the tests


def test_the_corpus_on_disk_is_what_make_bad_makes():
    """Committed files = the script's output, byte for byte; the folder is small."""
    made = MAKE_BAD.build()
    on_disk = {str(p.relative_to(BAD)): p.read_bytes() for p in BAD.rglob("*") if p.is_file()}
    assert sorted(on_disk) == sorted(made), "run python tests/data/make_bad.py"
    stale = [name for name in made if on_disk[name] != made[name]]
    assert not stale, f"stale files {stale}: run python tests/data/make_bad.py"
    assert sum(map(len, made.values())) < 300_000  # the brief: well under 1 MB


def test_every_case_names_known_commands_and_kinds():
    assert len(CASES) >= 100
    for case in CASES:
        assert case.kind in KINDS, case
        assert case.commands and case.words and case.about, case
        assert (case.input is None) == (case.kind == "options"), case
        if case.input is not None:
            assert (BAD / case.input).exists(), case
        for command in case.commands:
            assert command in COMMANDS, (case.name, command)
            assert case.kind in COMMANDS[command].kinds, (case.name, command)


def test_the_good_inputs_pass(goods, tmp_path):
    """Controls: the inputs each case spoils are accepted, so a failure is the spoiling's."""
    experiment = tmp_path / "experiment.toml"
    experiment.write_text(MAKE_BAD.GOOD_EXPERIMENT, encoding="utf-8")
    library = tmp_path / "liquids.toml"
    library.write_text(MAKE_BAD.GOOD_LIQUIDS, encoding="utf-8")
    runs = [
        ["info", goods.recording, "--experiment", str(experiment)],
        ["predict", "--experiment", str(experiment)],
        ["fit", goods.series, "-o", str(tmp_path / "fit"), "--bootstrap", "10"],
        ["fit", goods.series, "-o", str(tmp_path / "fit2"), "--experiment", str(experiment)],
        ["liquids", "--liquids", str(library)],
        ["predict", "--liquids", str(library), "--liquid", "bench-oil", "--drop-radius", "1 mm"],
        ["synth", str(tmp_path / "synth"), "--size", "32x48", "--frames", "8"],
    ]
    for argv in runs:
        outcome = _invoke(argv, tmp_path)
        assert outcome.code == 0 and not outcome.crash, (argv, outcome)
    fit = json.loads((tmp_path / "fit" / "fit.json").read_text(encoding="utf-8"))
    assert fit["dominant"]["regime"] == "inertial"  # the law the good series follows


def test_every_bad_case_fails_cleanly_in_every_command(goods, tmp_path, complete, capsys):
    tried = collections.Counter()
    failures = []
    for case, command in RUNS:
        if case.xfail:
            continue
        tried[command] += 1
        problems = _run_case(case, command, goods, tmp_path, complete)
        if problems:
            failures.append(f"{case.name} × {command}: " + "; ".join(problems))
    total = sum(tried.values())
    with capsys.disabled():
        per = ", ".join(f"{cmd} {n}" for cmd, n in sorted(tried.items()))
        print(f"\nbad corpus: {total} case × command runs ({len(CASES)} cases; {per})")
    assert not failures, f"{len(failures)} of {total} case × command runs misbehaved:\n" + (
        "\n".join(failures)
    )


def _subprocess_sample():
    """The first case of each (command, kind) pair that is not a known bug."""
    seen = {}
    for case, command in RUNS:
        if not case.xfail:
            seen.setdefault((command, case.kind), (case, command))
    return list(seen.values())


@pytest.mark.parametrize(
    ("case", "command"),
    _subprocess_sample(),
    ids=lambda v: v.name if isinstance(v, Case) else v,
)
def test_a_sample_as_a_real_subprocess(case, command, goods, tmp_path, complete):
    problems = _run_case(case, command, goods, tmp_path, complete, runner=_subprocess)
    assert not problems, problems


def test_every_command_has_a_subprocess_sample():
    assert {command for _, command in _subprocess_sample()} == set(COMMANDS)


@pytest.mark.parametrize(
    ("case", "command"),
    [
        pytest.param(c, cmd, marks=pytest.mark.xfail(strict=True, reason=c.xfail))
        for c, cmd in RUNS
        if c.xfail
    ],
    ids=lambda v: v.name if isinstance(v, Case) else v,
)
def test_known_bugs(case, command, goods, tmp_path, complete):
    problems = _run_case(case, command, goods, tmp_path, complete)
    assert not problems, problems


def test_a_damaged_png_gives_one_line_in_a_real_subprocess(goods, tmp_path, complete):
    (case,) = [c for c in CASES if c.name == "damaged_png_data"]
    problems = _run_case(case, "measure", goods, tmp_path, complete, runner=_subprocess)
    assert not problems, problems
