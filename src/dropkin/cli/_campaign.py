"""``dropkin batch`` and ``dropkin collapse``: a campaign of recordings and its master curve."""

from __future__ import annotations

import click

from .._words import count
from ._console import verbosity
from ._main import EXIT_BATCH_PARTIAL, EXIT_INTERRUPTED, EXIT_TERMINATED
from ._options import output_option, overwrite_option, plot_formats_option

__all__ = ["batch_command", "collapse_command"]


def _batch_line(done, total, label, row) -> str:
    """``[ 2/12] label: regime, n = 0.5 (3.1 s)`` for a recording just finished."""
    width = len(str(total))
    head = f"[{done:>{width}}/{total}] {label}: "
    if row is None:
        return head + "unchanged since its complete row, skipped"
    if row["status"] != "complete":
        return head + f"failed: {row.get('error')}"
    n = row.get("exponent_fit")
    exponent = f", n = {n:.3g}" if n is not None else ""
    return head + f"{row.get('regime')}{exponent} ({row.get('seconds', 0):.1f} s)"


@click.command("batch")
@click.argument("manifest", type=click.Path(exists=True, dir_okay=False, path_type=str))
@output_option("Folder for the catalogue and one folder per recording.")
@click.option(
    "--jobs",
    type=click.IntRange(1, 256),
    default=1,
    show_default=True,
    help="Recordings analysed at once on this machine, each in a worker process.",
)
@click.option(
    "--scheduler",
    metavar="ADDRESS",
    help="Run on a Dask distributed cluster (e.g. tcp://10.0.0.5:8786) instead.",
)
@click.option("--redo", is_flag=True, help="Analyse again even recordings already complete.")
@click.option(
    "--allow-outside-paths",
    is_flag=True,
    help="Let the manifest name recordings outside its own folder.",
)
@click.option(
    "--job-script",
    type=click.Choice(["slurm"]),
    help="Print a batch script that runs this command on one cluster node with --jobs "
    "cores (submit it with sbatch), instead of running it; see docs/cluster.md.",
)
@click.pass_context
def batch_command(ctx, manifest, out, jobs, scheduler, redo, allow_outside_paths, job_script):
    """Analyse every recording a campaign MANIFEST lists; catalogue the results.

    Exits 3 when some recordings failed (the others are complete; the
    failures are listed), 130 when interrupted, 143 on SIGTERM (run it
    again to finish), 1 when another batch is running on OUT.
    """
    from pathlib import Path

    if job_script is not None:
        from ..campaign._jobscript import slurm_script

        if scheduler is not None:
            raise click.UsageError("--job-script writes a one-node job: leave out --scheduler")
        text = slurm_script(manifest, out, jobs=jobs, redo=redo, allow_outside=allow_outside_paths)
        click.echo(text, nl=False)
        return

    from ..campaign._catalogue import CATALOGUE_NAME
    from ..campaign._runner import run_batch

    quiet = verbosity(ctx) < 0

    def report(done, total, label, row):
        if not quiet:
            click.echo(_batch_line(done, total, label, row), err=True)

    summary = run_batch(
        manifest,
        out,
        jobs=jobs,
        scheduler=scheduler,
        redo=redo,
        allow_outside=allow_outside_paths,
        report=report,
    )
    finished = len(summary.done) + len(summary.skipped) + len(summary.failed)
    if summary.interrupted:
        how = "terminated (SIGTERM)" if summary.terminated else "interrupted"
        click.echo(
            f"dropkin: {how}: {finished} of {count(summary.total, 'recording')} "
            "finished and "
            "catalogued; run the same command again to do the rest",
            err=True,
        )
        ctx.exit(EXIT_TERMINATED if summary.terminated else EXIT_INTERRUPTED)
    click.echo(
        f"{count(summary.total, 'recording')}: {len(summary.done)} analysed, "
        f"{len(summary.skipped)} unchanged, {len(summary.failed)} failed; "
        f"catalogue {Path(out) / CATALOGUE_NAME}"
    )
    if summary.failed:
        for label, message in summary.failed:
            click.echo(f"dropkin: failed: {label}: {message}", err=True)
        ctx.exit(EXIT_BATCH_PARTIAL)


@click.command("collapse")
@click.argument("out", type=click.Path(exists=True, file_okay=False, path_type=str))
@click.option(
    "--regime",
    help="Put every recording on this regime's scales (default: each on its own regime's).",
)
@click.option(
    "-o",
    "--output",
    "dest",
    type=click.Path(file_okay=False, path_type=str),
    help="Folder for collapse.json and the figures (default: OUT/collapse).",
)
@plot_formats_option
@overwrite_option
def collapse_command(out, regime, dest, plot_formats, overwrite):
    """Master curve of a campaign (the OUT of dropkin batch): r/R against t/tau,
    the collective prefactor, and the recordings that do not collapse.

    The folder is replaced whole: an earlier collapse's files without
    --overwrite, anything else dropkin wrote with it."""
    import os
    from pathlib import Path

    from ..campaign._collapse import master_curves, write_collapse
    from ..pipeline._outputs import claim_output_folder, output_folder

    dest = Path(dest) if dest else Path(out) / "collapse"
    earlier = [  # an earlier collapse's outputs: replaced whole
        name
        for name in (os.listdir(dest) if dest.is_dir() else [])
        if name == "collapse.json"
        or (name.startswith("collapse-") and name[-4:] in (".png", ".svg", ".pdf"))
    ]
    claim_output_folder(dest, overwrite=overwrite, replaced=earlier)
    curves = master_curves(out, regime=regime)
    with output_folder(dest, overwrite=overwrite, replaced=earlier) as stage:
        write_collapse(curves, stage, plot_formats)
    for curve in curves:
        lo, hi = curve.pooled.ci
        published = "" if curve.published is None else f" (published {curve.published:g})"
        click.echo(
            f"{curve.regime}: C = {curve.pooled.value:.4g} [{lo:.4g}, {hi:.4g}] from "
            f"{count(curve.pooled.k, 'recording')}{published}"
        )
        for member in curve.members:
            if not member.collapses:
                click.echo(f"  does not collapse: {member.label}: {member.note}")
    left = {label: why for curve in curves for label, why in curve.left_out}
    for label, why in left.items():
        click.echo(f"  left out: {label}: {why}")
    click.echo(f"wrote {dest / 'collapse.json'}")
