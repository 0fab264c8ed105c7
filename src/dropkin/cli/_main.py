"""The ``dropkin`` group: its global options and the one place where errors become exit codes.

A :class:`~dropkin.errors.DropkinError` (or an ``OSError``, the machine's
fault rather than the data's) is one line on stderr and exit code 1; click's
usage errors are exit code 2. The commands themselves are in the topic
modules (``_recording``, ``_analysis``, ``_physics``, ``_campaign``,
``_synth``) and are added to the group by ``dropkin.cli``.
"""

from __future__ import annotations

import signal
import threading

import click

from .._version import __version__
from ..errors import DropkinError, Terminated

__all__ = [
    "main",
    "run",
    "EXIT_INPUT_ERROR",
    "EXIT_BATCH_PARTIAL",
    "EXIT_INTERRUPTED",
    "EXIT_TERMINATED",
]

#: Bad input or data: a one-line error on stderr.
EXIT_INPUT_ERROR = 1
#: ``dropkin batch``: some recordings failed, the others are complete.
EXIT_BATCH_PARTIAL = 3
#: ``dropkin batch`` was interrupted (run it again to finish).
EXIT_INTERRUPTED = 130
#: Stopped by SIGTERM (128 + 15; a batch keeps what finished, as with Ctrl-C).
EXIT_TERMINATED = 143

#: Where the group keeps its arguments as given, for the provenance.
_ARGS = "dropkin.args"


class _Group(click.Group):
    """A click group that turns dropkin's errors into one line and exit code 1, and
    hands the command line as given to the outputs' provenance while a command runs."""

    def parse_args(self, ctx, args):
        ctx.meta[_ARGS] = list(args)
        return super().parse_args(ctx, args)

    def resolve_command(self, ctx, args):
        name, command, rest = super().resolve_command(ctx, args)
        if command is not None:
            from .._provenance import set_invocation
            from ._invocation import invocation

            set_invocation(invocation(ctx.meta.get(_ARGS, []), command, name, ctx, rest))
        return name, command, rest

    def invoke(self, ctx):
        restore = _catch_sigterm()
        try:
            return super().invoke(ctx)
        except Terminated:
            click.echo("dropkin: terminated (SIGTERM)", err=True)
            ctx.exit(EXIT_TERMINATED)
        except DropkinError as exc:
            click.echo(f"dropkin: error: {exc}", err=True)
            ctx.exit(EXIT_INPUT_ERROR)
        except OSError as exc:  # the machine's fault, not the data's: still one line
            where = f"{exc.filename}: " if getattr(exc, "filename", None) else ""
            click.echo(f"dropkin: error: {where}{exc.strerror or exc}", err=True)
            ctx.exit(EXIT_INPUT_ERROR)
        finally:  # a later call from Python in this process is not this command
            from .._provenance import set_invocation

            set_invocation(None)
            restore()


def _raise_terminated(signum, frame):
    raise Terminated()


def _catch_sigterm():
    """Turn SIGTERM into :class:`Terminated` while a command runs (in the main thread: the
    only one where signals can be handled); what puts the former handler back."""
    if threading.current_thread() is not threading.main_thread():
        return lambda: None
    previous = signal.signal(signal.SIGTERM, _raise_terminated)
    if previous is None:  # set outside Python: the default is the nearest
        previous = signal.SIG_DFL
    return lambda: signal.signal(signal.SIGTERM, previous)


@click.group(cls=_Group, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(__version__, "--version", prog_name="dropkin")
@click.option(
    "-v",
    "--verbose",
    count=True,
    help="Also say on stderr which experiment file and settings were used and how the "
    "contact instant was found.",
)
@click.option("-q", "--quiet", is_flag=True, help="Say nothing on stderr but errors.")
@click.pass_context
def main(ctx: click.Context, verbose: int, quiet: bool) -> None:
    """Neck and contact radius from high-speed recordings of merging or
    spreading drops, and the scaling regime that governs them."""
    ctx.ensure_object(dict)
    ctx.obj["verbosity"] = -1 if quiet else verbose


def run() -> None:  # pragma: no cover - exercised through ``python -m dropkin``
    """Entry point for ``python -m dropkin``."""
    main(prog_name="dropkin")
