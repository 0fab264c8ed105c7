"""The ``dropkin`` command line: thin click commands over the library."""

from ._commands import main as main
from ._commands import run as run

__all__ = ["main", "run"]
