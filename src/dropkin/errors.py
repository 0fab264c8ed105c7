"""The exceptions dropkin raises on purpose.

Every error that is the user's input or the data's fault is a
:class:`DropkinError`. The command line turns each into one line on stderr and
exit code 1; anything else is a bug and keeps its traceback.

Each class also derives from the built-in exception that fits, so callers who
do not know dropkin can still catch ``OSError`` or ``ValueError``. The fields
(``path``, ``key``, ``frame``, ``value``, ``expected``) are kept separately and
the message is built in ``__str__``, so that a test, a batch log or a report
can use them; every class survives ``pickle`` (batches send errors between
processes).

Examples
--------
>>> err = ExperimentError("must be positive", path="run3/experiment.toml",
...                       key="recording.frame_rate", value="-5 Hz")
>>> str(err)
"run3/experiment.toml: recording.frame_rate = '-5 Hz': must be positive"
"""

from __future__ import annotations

import os

__all__ = [
    "DropkinError",
    "ExperimentError",
    "QuantityError",
    "RecordingError",
    "MeasurementError",
    "FitError",
    "with_path",
    "Terminated",
    "readable",
]

_FIELDS = ("path", "key", "value", "expected", "frame")


def _restore(cls, message, fields):
    """Rebuild an error from its message and fields (the pickle path)."""
    return cls(message, **fields)


class DropkinError(Exception):
    """Root of dropkin's errors: bad input, or data that cannot be processed.

    Parameters
    ----------
    message : str
        What is wrong, in a few words, without the location.
    path : str or os.PathLike, optional
        The file or folder concerned.
    key : str, optional
        The dotted key in an experiment file, or the option on the command line.
    value : object, optional
        The offending value as the user wrote it.
    expected : str, optional
        What would have been accepted (a unit, a range, a list of names).
    frame : int, optional
        The frame index concerned.

    Attributes
    ----------
    message, path, key, value, expected, frame
        As given; ``path`` is stored as a string.
    """

    def __init__(
        self,
        message: str,
        *,
        path: str | os.PathLike | None = None,
        key: str | None = None,
        value: object = None,
        expected: str | None = None,
        frame: int | None = None,
    ) -> None:
        self.message = str(message)
        self.path = None if path is None else os.fspath(path)
        self.key = key
        self.value = value
        self.expected = expected
        self.frame = frame
        super().__init__(self.message)

    def __str__(self) -> str:
        parts = []
        if self.path is not None:
            parts.append(self.path)
        if self.frame is not None:
            parts.append(f"frame {self.frame}")
        if self.key is not None:
            parts.append(self.key if self.value is None else f"{self.key} = {self.value!r}")
        elif self.value is not None:
            parts.append(repr(self.value))
        text = self.message
        if self.expected is not None:
            text = f"{text} (expected {self.expected})"
        # One line, always: a newline in user text must not break a log; and UTF-8.
        return readable(": ".join([*parts, text]).replace("\n", " "))

    def __reduce__(self):
        fields = {name: getattr(self, name) for name in _FIELDS}
        return (_restore, (type(self), self.message, fields))


class ExperimentError(DropkinError, ValueError):
    """An experiment file or an option is missing, malformed or out of range."""


class QuantityError(ExperimentError):
    """A value with a unit cannot be parsed, or has the wrong dimension."""


class RecordingError(DropkinError, OSError):
    """A recording cannot be opened or read, or its frames are inconsistent."""

    def __init__(self, message: str, **fields) -> None:
        DropkinError.__init__(self, message, **fields)
        # OSError.__init__ would read a single argument as errno/strerror; keep
        # its attributes meaningful instead.
        self.filename = self.path

    __str__ = DropkinError.__str__


class MeasurementError(DropkinError, RuntimeError):
    """The frames cannot give a radius series (no drops found, no contact)."""


class FitError(DropkinError, ValueError):
    """A radius series cannot be fitted because the call itself is wrong."""


def readable(text: str) -> str:
    """`text` as valid UTF-8: each byte of a path that is not UTF-8 written ``\\xff``.

    Python reads such a byte from a file name as a lone surrogate (``\\udcff``),
    which no UTF-8 file, terminal or database accepts.

    Examples
    --------
    >>> print(readable("rec\\udcff\\udcfe/a.tif"))
    rec\\xff\\xfe/a.tif
    """
    try:
        text.encode("utf-8")
        return text
    except UnicodeEncodeError:
        pass
    try:
        return text.encode("utf-8", "surrogateescape").decode("utf-8", "backslashreplace")
    except UnicodeEncodeError:  # a surrogate no file name gives: its code point
        return text.encode("utf-8", "backslashreplace").decode("utf-8")


def with_path(error: DropkinError, path) -> DropkinError:
    """A copy of `error` that names `path`, when it names no file yet.

    For code that knows which file a value came from while the code that
    found the problem did not (a liquid looked up for an experiment file).

    Examples
    --------
    >>> err = ExperimentError("unknown liquid", key="liquid.name")
    >>> str(with_path(err, "run3/experiment.toml"))
    'run3/experiment.toml: liquid.name: unknown liquid'
    """
    if error.path is not None or path is None:
        return error
    fields = {name: getattr(error, name) for name in _FIELDS}
    fields["path"] = path
    return _restore(type(error), error.message, fields)


class Terminated(KeyboardInterrupt):
    """The process was sent SIGTERM (the command line turns the signal into this).

    A kind of KeyboardInterrupt, so that whatever cleans up after Ctrl-C
    (work folders, a batch's workers) cleans up after SIGTERM too.
    """
