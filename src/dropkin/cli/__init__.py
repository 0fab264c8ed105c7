"""The ``dropkin`` command line: thin click commands over the library.

Commands parse options, call the library and print. Heavy imports (numpy,
OpenCV, scipy, matplotlib, the synthetic recordings) happen inside the
commands, so that ``dropkin --help`` is quick. ``_main`` holds the group, its
global options and the one place where errors become exit codes; the
commands are grouped by topic:

- ``_recording``: ``info``, ``measure``;
- ``_analysis``: ``fit``, ``analyze``;
- ``_physics``: ``predict``, ``liquids``;
- ``_campaign``: ``batch``, ``collapse``;
- ``_synth``: ``synth``.

``_options`` holds the parameter types and shared options, ``_console`` the
detail lines of ``-v`` and the progress bars.
"""

from ._analysis import analyze_command, fit_command
from ._campaign import batch_command, collapse_command
from ._main import main as main
from ._main import run as run
from ._physics import liquids_command, predict_command
from ._recording import info_command, measure_command
from ._synth import synth_command

__all__ = ["main", "run"]

for _command in (
    info_command,
    measure_command,
    fit_command,
    analyze_command,
    batch_command,
    collapse_command,
    predict_command,
    liquids_command,
    synth_command,
):
    main.add_command(_command)
del _command
