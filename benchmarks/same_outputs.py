"""Are the outputs of two versions of dropkin the same?

Runs ``dropkin analyze`` with the source tree of a base revision (a git
worktree made for the run) and with this working tree, on the three shipped
samples and on the 2,000-frame stack of ``benchmarks/measure_speed.py``, and
compares ``radius.csv``, ``measure.json`` and ``fit.json`` byte for byte after
setting aside what must differ between two runs: the tool version, the
absolute paths of inputs and outputs, timestamps and run times.

A refactoring that changes no behaviour must print ``same`` for every file.

    python benchmarks/same_outputs.py [--base REV] [--frames 2000] [--keep DIR]

With ``--keep DIR`` the stack, the base worktree and the base outputs stay in
DIR, and a later run with the same DIR reuses them (only the working tree's
outputs are made again).
"""

from __future__ import annotations

import argparse
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
    "experiment_file",
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
    else:
        same = a.read_bytes() == b.read_bytes()
    print(f"  {name}: {'same' if same else 'DIFFERENT'}")
    return same


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
