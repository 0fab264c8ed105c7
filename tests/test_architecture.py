"""The architecture as checked contracts: import-linter on the tree, and on a broken copy.

The contracts live in ``pyproject.toml`` (``[tool.importlinter]``) and are
explained in docs/architecture.md ("Who may import whom"). The first test
runs ``lint-imports`` on the package as it is; the others copy the package
to a temporary folder, add one import that a contract forbids, and check
that ``lint-imports`` run on the copy fails and names that contract — so a
contract that can never fail (a typo in a module name, a wrong option) is
noticed here.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
SOURCE = ROOT / "src" / "dropkin"

# `lint-imports` through its console-script entry point, in this interpreter.
LINT_IMPORTS = (
    "import sys; from importlib.metadata import entry_points; "
    "(ep,) = entry_points(group='console_scripts', name='lint-imports'); "
    "sys.argv[0] = 'lint-imports'; ep.load()()"
)


def lint_imports(source_root: Path, project: Path) -> subprocess.CompletedProcess:
    """Run ``lint-imports`` on the ``dropkin`` package found in `source_root`.

    The configuration is the ``pyproject.toml`` in `project`, the working
    folder, where lint-imports finds it by itself: every version from 2.1 on
    does (``--config`` is deprecated in recent ones, and older ones take no
    file argument).
    """
    env = dict(os.environ, PYTHONPATH=str(source_root))
    return subprocess.run(
        [sys.executable, "-c", LINT_IMPORTS, "--no-cache"],
        cwd=project,
        env=env,
        capture_output=True,
        text=True,
        timeout=300,
    )


def contract_lines(output: str) -> dict[str, str]:
    """``{contract name: "KEPT" | "BROKEN"}`` from the summary of a run."""
    found = {}
    for line in output.splitlines():
        for word in ("KEPT", "BROKEN"):
            if line.endswith(" " + word):
                found[line[: -len(word) - 1]] = word
    return found


def test_the_tree_keeps_every_contract():
    # The real package with the project's own configuration: every contract
    # is kept, and there are seven of them (a contract lost from the
    # configuration would pass silently otherwise).
    run = lint_imports(ROOT / "src", ROOT)
    assert run.returncode == 0, run.stdout + run.stderr
    contracts = contract_lines(run.stdout)
    assert len(contracts) == 7, run.stdout
    assert set(contracts.values()) == {"KEPT"}, run.stdout


# (package that gets the bad module, the forbidden import, the contract that must break)
BREACHES = [
    ("vision", "from dropkin import units", "vision/ works on arrays: no files, no units"),
    ("vision", "import pint", "vision/ works on arrays: no files, no units"),
    ("fitting", "from dropkin import scaling", "fitting/ is generic curve fitting"),
    ("scaling", "from dropkin import vision", "fitting/ and scaling/ know no pixels"),
    ("synth", "from dropkin import vision", "synth/ shares no code with vision/ or measure/"),
    ("measure", "from dropkin import synth", "vision/ and measure/ never use synth/"),
    ("campaign", "from dropkin import cli", "The library never imports the command line"),
    ("recording", "from dropkin import measure", "Imports run downward"),
]


@pytest.mark.parametrize(("package", "statement", "contract"), BREACHES)
def test_a_forbidden_import_breaks_its_contract(tmp_path, package, statement, contract):
    # A copy of the package and of the configuration, with one module added
    # that makes the forbidden import; lint-imports must fail (exit code 1)
    # and list the contract as broken, naming the added module (which exists
    # only in the copy: proof that the copy, not the tree, was analysed).
    copy = tmp_path / "src"
    shutil.copytree(SOURCE, copy / "dropkin", ignore=shutil.ignore_patterns("__pycache__"))
    breach = copy / "dropkin" / package / "_breach.py"
    breach.write_text(f'"""A deliberately forbidden import."""\n\n{statement}  # noqa: F401\n')
    shutil.copyfile(ROOT / "pyproject.toml", tmp_path / "pyproject.toml")

    run = lint_imports(copy, tmp_path)

    assert run.returncode == 1, run.stdout + run.stderr
    broken = [name for name, state in contract_lines(run.stdout).items() if state == "BROKEN"]
    assert any(name.startswith(contract) for name in broken), run.stdout
    assert f"dropkin.{package}._breach" in run.stdout, run.stdout
