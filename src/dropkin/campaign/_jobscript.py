"""A SLURM batch script that runs one campaign on one node (``dropkin batch --job-script slurm``).

The script asks for one task with as many cores as ``--jobs``, goes to the
folder the command was typed in (the manifest and OUT may be relative to
it), and runs the same ``dropkin batch`` there with the Python that wrote the
script, so the node uses the same installation (it must see it at the same
path, as on a cluster's shared file system). The lines a cluster adds of its
own (partition, account, time, memory) are left to the user, as a comment
says. docs/cluster.md tells when one node is enough and how to use several.
"""

from __future__ import annotations

import os
import re
import shlex
import sys

__all__ = ["JOB_SCRIPT_KINDS", "slurm_script"]

#: The kinds of job script ``--job-script`` writes.
JOB_SCRIPT_KINDS = ("slurm",)


def _job_name(manifest) -> str:
    """``dropkin-<manifest stem>``, in the characters every scheduler accepts."""
    stem = os.path.splitext(os.path.basename(os.fspath(manifest)))[0]
    return "dropkin-" + (re.sub(r"[^A-Za-z0-9_.-]+", "-", stem).strip("-") or "batch")


def slurm_script(
    manifest,
    out,
    *,
    jobs: int,
    redo: bool = False,
    allow_outside: bool = False,
    workdir=None,
    python: str | None = None,
) -> str:
    """The text of a SLURM batch script running ``dropkin batch`` on one node.

    Parameters
    ----------
    manifest, out : str or os.PathLike
        As given to ``dropkin batch`` (relative paths count from `workdir`).
    jobs : int
        Recordings at once; also the cores asked for (``--cpus-per-task``).
    redo, allow_outside : bool
        Passed on as ``--redo`` and ``--allow-outside-paths``.
    workdir : str or os.PathLike, optional
        The folder the script changes to (default: the current one).
    python : str, optional
        The interpreter that runs ``-m dropkin`` (default: this one).

    Examples
    --------
    >>> text = slurm_script("runs/series.toml", "out", jobs=8, workdir="/data", python="py")
    >>> print("\\n".join(line for line in text.splitlines() if not line.startswith("# ")))
    #!/bin/bash
    #SBATCH --job-name=dropkin-series
    #SBATCH --nodes=1
    #SBATCH --ntasks=1
    #SBATCH --cpus-per-task=8
    #SBATCH --output=dropkin-series-%j.log
    set -euo pipefail
    cd /data
    py -m dropkin batch runs/series.toml -o out --jobs 8
    """
    if jobs < 1:
        raise ValueError(f"jobs must be at least 1, got {jobs}")
    name = _job_name(manifest)
    command = [python or sys.executable, "-m", "dropkin", "batch", os.fspath(manifest)]
    command += ["-o", os.fspath(out), "--jobs", str(jobs)]
    command += ["--redo"] * redo + ["--allow-outside-paths"] * allow_outside
    workdir = os.path.abspath(os.fspath(workdir) if workdir is not None else os.getcwd())
    lines = [
        "#!/bin/bash",
        "# One dropkin campaign on one node, written by `dropkin batch --job-script slurm`.",
        "# Submit with `sbatch FILE`. Add the lines your cluster asks for, e.g.",
        "# #SBATCH --partition=..., --account=..., --time=..., --mem=...",
        "# The catalogue (OUT/catalogue.sqlite) is written by this one process only;",
        "# keep OUT on a disk that does not lose SQLite's locks (see docs/cluster.md).",
        f"#SBATCH --job-name={name}",
        "#SBATCH --nodes=1",
        "#SBATCH --ntasks=1",
        f"#SBATCH --cpus-per-task={jobs}",
        f"#SBATCH --output={name}-%j.log",
        "set -euo pipefail",
        f"cd {shlex.quote(workdir)}",
        "# exit code 3: some recordings failed (listed in the log); the others are complete",
        shlex.join(command),
    ]
    return "\n".join(lines) + "\n"
