"""What the commands say on stderr besides errors: progress bars.

They respect ``-q`` and are drawn only when stderr is a terminal, so that
logs and pipes stay clean.
"""

from __future__ import annotations

import contextlib
import sys

import click

__all__ = ["verbosity", "progress_bar"]


def verbosity(ctx: click.Context) -> int:
    """-1 with ``-q``, else the number of ``-v`` given (0 by default)."""
    return (ctx.find_root().obj or {}).get("verbosity", 0)


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
