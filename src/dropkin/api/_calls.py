"""The four calls of the Python API: open, analyze, read_results, read_catalogue.

Each is the command line's work through the same pipeline functions
(:func:`dropkin.pipeline.open_source`, :func:`dropkin.pipeline.analyze_in_memory`,
:func:`dropkin.pipeline.write_result`, the readers of the output files), so
``dropkin.analyze(path, **options)`` gives the numbers ``dropkin analyze path
--options`` gives.
"""

from __future__ import annotations

import json
from collections.abc import Callable
from dataclasses import replace
from pathlib import Path

from ..campaign import CATALOGUE_NAME, read_rows
from ..errors import DropkinError
from ..pipeline import AnalysisResult, analyze_in_memory, open_source
from ..series import CSV_COLUMNS, read_series
from ._options import OPEN_KEYWORDS, parse_options

__all__ = ["open", "analyze", "read_results", "read_catalogue"]

#: Where a frame rate given as a keyword came from, for the recording's record.
_ORIGIN = "Python keyword"


def open(path, **options):  # noqa: A001 - dropkin.open
    """Open a recording as ``dropkin analyze`` would: its experiment file honoured.

    Parameters
    ----------
    path : str or os.PathLike
        A folder of frames, a TIFF stack, a video, a .cine or .mraw file.
    **options
        ``experiment`` (a file named explicitly), ``frame_rate``,
        ``pixel_size``, ``contrast``, ``geometry``, ``view``: the command
        line's options with underscores, with its values (``"10 kHz"``,
        ``"20 µm/px"``), over the experiment file beside the recording.

    Returns
    -------
    Recording
        Lazy and array-like: ``rec.shape`` is (frames, rows, cols),
        ``rec[k]`` a frame, ``np.asarray(rec)`` every frame, ``rec.to_dask()``
        a dask view; ``rec.times`` in s, ``rec.pixel_size`` in m.
    """
    parsed = parse_options(options, allowed=OPEN_KEYWORDS, call="dropkin.open")
    with parsed.named():
        _, rec = open_source(
            path, experiment=parsed.experiment, overrides=parsed.overrides, origin=_ORIGIN
        )
    return rec


def analyze(
    source, *, progress: Callable[[int, int], None] | None = None, **options
) -> AnalysisResult:
    """Measure and fit one recording in memory, as ``dropkin analyze`` does.

    Parameters
    ----------
    source : str or os.PathLike
        The recording.
    progress : callable, optional
        Called as ``progress(frames_done, frames_total)`` while measuring.
    **options
        The options of ``dropkin analyze`` with underscores and the same
        values: those of :func:`open`, the sample's (``liquid``,
        ``temperature``, ``glycerol_mass_fraction``, ``medium``,
        ``drop_radius``, ``liquids``) and the settings (``roi``,
        ``threshold``, ``background``, ``jobs``, ``chunk_size``,
        ``overlays``, ``t0``, ``seed``, ``bootstrap``, ``initial_radius``).

    Returns
    -------
    AnalysisResult
        ``.series`` (``.to_pandas()``), ``.contact``, ``.verdict``,
        ``.warnings``, ``.figures()``, ``.summary()``, and ``.write(out)``
        for the files. A recording without a contact gives a result whose
        verdict is None (its warning says why) rather than an error.

    Raises
    ------
    DropkinError
        For input that cannot be read or measured, naming the file, the key
        or the keyword.
    """
    parsed = parse_options(options)
    with parsed.named():
        result = analyze_in_memory(
            source,
            parsed.settings,
            experiment=parsed.experiment,
            overrides=parsed.overrides,
            origin=_ORIGIN,
            liquids=parsed.liquids,
            progress=progress,
        )
    given = {"SOURCE": str(source), **parsed.given}
    return replace(result, invocation={"command_line": None, "options_given": given})


def _read_json(path: Path) -> dict | None:
    if not path.is_file():
        return None
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise DropkinError(f"cannot be read as JSON ({exc})", path=path) from None


def _folder_frame(folder: Path):
    """One analysis folder's series as a DataFrame; ``measure.json`` and
    ``fit.json`` (when there is one) as dicts in its ``attrs``."""
    frame = read_series(folder / "radius.csv").to_pandas()
    frame.attrs["measure"] = _read_json(folder / "measure.json")
    frame.attrs["fit"] = _read_json(folder / "fit.json")
    return frame


def _inside(out: Path, name) -> Path:
    folder = (out / str(name)).resolve()
    if not folder.is_relative_to(out.resolve()):
        raise DropkinError("names a folder outside the campaign's output folder", path=folder)
    return folder


def read_results(out):
    """The radius series of an output folder as a pandas DataFrame.

    For the folder of ``dropkin analyze`` or ``measure``: one row per frame,
    the columns of ``radius.csv`` (then ``angles.csv``'s angles), NaN for an
    empty cell; ``attrs["measure"]`` and ``attrs["fit"]`` hold
    ``measure.json`` and ``fit.json`` (None when absent). For a campaign's
    folder (``dropkin batch``): every complete recording's rows, with its
    ``label`` as the first column.
    """
    import pandas as pd

    out = Path(out)
    if not (out / CATALOGUE_NAME).is_file():
        return _folder_frame(out)
    frames = []
    for row in read_rows(out):
        if row["status"] == "complete":
            frame = _folder_frame(_inside(out, row.get("output") or row["label"]))
            frame.insert(0, "label", row["label"])
            frames.append(frame)
    if not frames:
        return pd.DataFrame(columns=["label", *CSV_COLUMNS])
    return pd.concat(frames, ignore_index=True)


def read_catalogue(out):
    """A campaign's catalogue (``OUT/catalogue.sqlite``, or the file) as a pandas
    DataFrame: one row per recording, its columns in the table's order
    (docs/architecture.md); SI values, 95 % intervals, JSON columns as text."""
    import pandas as pd

    from ..campaign._catalogue import COLUMN_NAMES

    rows = read_rows(out)
    if not rows:
        return pd.DataFrame(columns=list(COLUMN_NAMES))
    return pd.DataFrame(rows)
