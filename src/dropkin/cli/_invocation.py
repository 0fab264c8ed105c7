"""The command line as given, for the provenance of the outputs (:mod:`dropkin._provenance`).

:func:`invocation` reads a subcommand's arguments as typed, before click turns
them into values: ``--frame-rate "20 kfps"`` is recorded as ``"20 kfps"``
(the value as resolved, 20000 Hz, is in the outputs' own fields).
"""

from __future__ import annotations

import click

from .._provenance import command_line

__all__ = ["invocation"]


def _as_json(value):
    if isinstance(value, list | tuple):
        return [_as_json(v) for v in value]
    if isinstance(value, bool | int | float) or value is None:
        return value
    return str(value)


def _given(command: click.Command, name: str, parent: click.Context, args: list) -> dict:
    """Each parameter of `command` present in `args`, by its long option name (or its
    argument's name in capitals), as typed; {} when `args` do not parse (click says why)."""
    ctx = command.context_class(command, info_name=name, parent=parent)
    try:
        raw, _, _ = command.make_parser(ctx).parse_args(args=list(args))
    except click.UsageError:
        return {}
    given = {}
    for param in command.get_params(ctx):
        if param.name not in raw or param.name == "help":
            continue
        if isinstance(param, click.Option):
            key = max(param.opts, key=len)
        else:
            key = param.human_readable_name
        given[key] = _as_json(raw[param.name])
    return given


def invocation(all_args: list, command: click.Command, name: str, parent, args: list) -> dict:
    """The record :func:`dropkin._provenance.invoked` takes: the whole command line
    (`all_args`, after the program's name) and the subcommand's options as given."""
    return {
        "command_line": command_line(all_args),
        "options_given": _given(command, name, parent, args),
    }
