"""What the commands say on stderr besides errors: detail lines (``-v``) and progress bars.

Both respect ``-q``; progress bars are drawn only when stderr is a terminal,
so that logs and pipes stay clean.
"""

from __future__ import annotations

import contextlib
import sys
from pathlib import Path

import click

__all__ = ["verbosity", "detail", "detail_experiment", "detail_settings", "progress_bar"]


def verbosity(ctx: click.Context) -> int:
    """-1 with ``-q``, else the number of ``-v`` given (0 by default)."""
    return (ctx.find_root().obj or {}).get("verbosity", 0)


def detail(ctx: click.Context, text: str) -> None:
    """``dropkin: TEXT`` on stderr, with ``-v`` only."""
    if verbosity(ctx) > 0:
        click.echo(f"dropkin: {text}", err=True)


def detail_experiment(ctx: click.Context, path) -> None:
    """With ``-v``: the experiment file that was read, if any."""
    where = Path(path).resolve() if path is not None else "none (options and defaults only)"
    detail(ctx, f"experiment file: {where}")


def detail_settings(ctx: click.Context, settings, names) -> None:
    """With ``-v``: the fields `names` of the record `settings`, as used."""
    values = ", ".join(f"{name} = {getattr(settings, name)!r}" for name in names)
    detail(ctx, f"settings: {values}")


@contextlib.contextmanager
def progress_bar(ctx: click.Context, label: str, total: int):
    """A ``progress(done, total)`` callback drawing a bar on stderr, or None.

    The bar is shown only when stderr is a terminal and ``-q`` was not given.
    """
    if verbosity(ctx) < 0 or not sys.stderr.isatty():
        yield None
        return
    from rich.console import Console
    from rich.progress import Progress

    with Progress(console=Console(stderr=True), transient=True) as bar:
        task = bar.add_task(label, total=total)
        yield lambda done, total: bar.update(task, completed=done, total=total)
