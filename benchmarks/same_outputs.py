"""Are the outputs of two versions of dropkin the same?

Runs ``dropkin analyze`` with the source tree of a base revision (a git
worktree made for the run) and with this working tree, on the three shipped
samples and on the 2,000-frame stack of ``benchmarks/measure_speed.py``, and
compares ``radius.csv``, ``measure.json`` and ``fit.json`` byte for byte after
setting aside what must differ between two runs: the tool version, the
paths of inputs and outputs, timestamps and run times, and the provenance's
record of the run (command line, versions, platform, time).

A refactoring that changes no behaviour must print ``same`` for every file.
``radius.csv`` is compared on the columns the base has (``same``), and columns
only one run has are listed apart (``extra columns: ...``): a change that adds
columns at the end keeps the old ones byte for byte.

    python benchmarks/same_outputs.py [--base REV] [--frames 2000] [--keep DIR]

With ``--keep DIR`` the stack, the base worktree and the base outputs stay in
DIR, and a later run with the same DIR reuses them (only the working tree's
outputs are made again).
"""

from __future__ import annotations

import argparse
import csv
import io
import json
import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ("fast_pair.tif", "viscous_pair", "spreading_drop")
COMPARED = ("radius.csv", "measure.json", "fit.json")
# Keys whose values differ between two runs of the same code.
VOLATILE = {
    "version",
    "input",
    "input_absolute",
    "experiment_file",
    "radius_csv",
    "run",
    "output",
    "created",
    "created_utc",
    "timestamp",
    "elapsed_s",
    "seconds",
    "source",
}


def _scrub(value):
    """The JSON value with run-dependent entries replaced by a marker."""
    if isinstance(value, dict):
        return {k: ("<run>" if k in VOLATILE else _scrub(v)) for k, v in value.items()}
    if isinstance(value, list):
        return [_scrub(v) for v in value]
    return value


def _analyze(src: Path, source: Path, out: Path) -> None:
    env = dict(os.environ, PYTHONPATH=str(src))
    cmd = [sys.executable, "-m", "dropkin", "-q", "analyze", str(source), "-o", str(out)]
    done = subprocess.run(cmd, env=env, capture_output=True, text=True)
    if done.returncode not in (0, 1):
        raise SystemExit(f"{' '.join(cmd)} failed ({done.returncode}):\n{done.stderr}")


def _compare(name: str, a: Path, b: Path) -> bool:
    if not a.exists() or not b.exists():
        same = a.exists() == b.exists()
        print(f"  {name}: {'both missing' if same else 'missing in one run'}")
        return same
    if name.endswith(".json"):
        left = _scrub(json.loads(a.read_text()))
        right = _scrub(json.loads(b.read_text()))
        same = left == right
        extra = []
        if not same and _without_new(right, left, "", extra) == left:
            print(f"  {name}: same on the base's keys; extra keys: {', '.join(extra)}")
            return True
    elif name.endswith(".csv"):
        same, extra = _compare_columns(a.read_text(), b.read_text())
        if extra:
            print(
                f"  {name}: {'same' if same else 'DIFFERENT'} on the base's columns; "
                f"extra columns: {', '.join(extra)}"
            )
            return same
    else:
        same = a.read_bytes() == b.read_bytes()
    print(f"  {name}: {'same' if same else 'DIFFERENT'}")
    return same


def _without_new(new, base, where: str, extra: list):
    """`new` without the object keys `base` lacks (at any depth); their paths
    are added to `extra`."""
    if isinstance(new, dict) and isinstance(base, dict):
        out = {}
        for key, value in new.items():
            if key in base:
                out[key] = _without_new(value, base[key], f"{where}{key}.", extra)
            else:
                extra.append(where + key)
        return out
    return new


def _compare_columns(base: str, new: str) -> tuple[bool, list[str]]:
    """Whether the CSV text `new` holds `base`'s columns byte for byte (cell by
    cell, in `base`'s order), and the names of the columns only one has."""
    left = list(csv.reader(io.StringIO(base)))
    right = list(csv.reader(io.StringIO(new)))
    if not left or not right:
        return base == new, []
    extra = [c for c in right[0] if c not in left[0]] + [c for c in left[0] if c not in right[0]]
    if any(c not in right[0] for c in left[0]) or len(left) != len(right):
        return False, extra
    index = [right[0].index(c) for c in left[0]]
    same = all([row[i] for i in index] == old for row, old in zip(right, left, strict=True))
    return same, extra


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--base", default="HEAD", help="git revision to compare against")
    parser.add_argument("--frames", type=int, default=2000, help="frames of the stack")
    parser.add_argument("--keep", type=Path, help="keep the outputs (and stack) here")
    args = parser.parse_args(argv)

    scratch = Path(args.keep) if args.keep else Path(tempfile.mkdtemp(prefix="dropkin-same-"))
    scratch.mkdir(parents=True, exist_ok=True)
    base_tree = scratch / "base-tree"
    if not base_tree.exists():
        subprocess.run(
            ["git", "-C", str(ROOT), "worktree", "add", "--detach", str(base_tree), args.base],
            check=True,
            capture_output=True,
        )
    stack = scratch / "stack.tif"
    if not stack.exists():
        sys.path.insert(0, str(ROOT / "benchmarks"))
        from measure_speed import generate

        print(f"rendering {args.frames} frames to {stack}", file=sys.stderr)
        generate(stack, args.frames)

    sources = [ROOT / "sample_frames" / s for s in SAMPLES] + [stack]
    all_same = True
    try:
        for source in sources:
            print(source.name)
            base_out = scratch / "base" / source.stem
            new_out = scratch / "new" / source.stem
            if new_out.exists():
                shutil.rmtree(new_out)
            if not (args.keep and (base_out / "radius.csv").exists()):
                _analyze(base_tree / "src", source, base_out)
            _analyze(ROOT / "src", source, new_out)
            for name in COMPARED:
                all_same &= _compare(name, base_out / name, new_out / name)
    finally:
        if not args.keep:
            subprocess.run(
                ["git", "-C", str(ROOT), "worktree", "remove", "--force", str(base_tree)],
                capture_output=True,
            )
    print("all outputs the same" if all_same else "outputs DIFFER")
    return 0 if all_same else 1


if __name__ == "__main__":
    raise SystemExit(main())
