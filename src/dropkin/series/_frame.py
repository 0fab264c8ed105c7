"""A radius series as a table: the columns of ``radius.csv`` (and ``angles.csv``)
as a pandas DataFrame, for notebooks.

The columns, their names and their order are those of the files
(:mod:`dropkin.series._csv`); an empty cell of the file is NaN here. pandas is
imported when a table is asked for.
"""

from __future__ import annotations

import numpy as np

from ._csv import ANGLE_COLUMNS, CSV_COLUMNS, TRIGGER_COLUMN, level_column

__all__ = ["series_columns", "series_frame"]


def series_columns(series) -> dict[str, np.ndarray]:
    """Each column of a series' ``radius.csv``, in the file's order, then the
    apparent contact angles of ``angles.csv`` when the series has them."""
    columns = {
        CSV_COLUMNS[0]: np.asarray(series.frame, dtype=np.int64),
        CSV_COLUMNS[1]: np.asarray(series.time, dtype=np.float64),
        CSV_COLUMNS[2]: np.asarray(series.since_contact, dtype=np.float64),
        CSV_COLUMNS[3]: np.asarray(series.radius, dtype=np.float64),
        CSV_COLUMNS[4]: np.asarray(series.radius_err, dtype=np.float64),
        CSV_COLUMNS[5]: np.asarray(series.status, dtype=object),
    }
    for level in sorted(series.level_radii):
        columns[level_column(level)] = np.asarray(series.level_radii[level], dtype=np.float64)
    if series.trigger_time is not None:
        columns[TRIGGER_COLUMN] = columns["time_s"] - series.trigger_time
    if series.angles is not None:
        angles = np.asarray(series.angles, dtype=np.float64)
        for k, name in enumerate(ANGLE_COLUMNS[2:]):
            columns[name] = angles[:, k]
    return columns


def series_frame(series):
    """The series as a pandas DataFrame, one row per frame (see :func:`series_columns`).

    Raises
    ------
    ImportError
        When pandas is not installed, in one line.
    """
    try:
        import pandas as pd
    except ImportError:  # pragma: no cover - pandas is a dependency
        raise ImportError("a table of the series needs pandas: pip install pandas") from None
    return pd.DataFrame(series_columns(series))
