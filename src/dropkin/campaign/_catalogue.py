"""The results catalogue of a campaign: one SQLite row per recording.

``OUT/catalogue.sqlite`` holds table ``recordings``: the recording's
parameters, its verdict (regime, exponent and prefactor with their
intervals; ``decided`` is 0 when the data could not decide, and ``regime``
is then only the closest), its status (``complete`` or ``failed``) and error
message, the SHA-256 of its input and of its settings, and the dropkin
version. Each row is written in a transaction of its own, so a killed batch
keeps every row it finished. Values are SI floats; intervals are 95 %.

Paths are text (UTF-8). A recording whose path is not valid UTF-8 (bytes
such as ``\xff`` in a folder's name) has its ``source`` stored as the path's
bytes, a BLOB (:func:`os.fsdecode` gives the path back); in the other text
columns (the error message) each such byte reads ``\xff``.
"""

from __future__ import annotations

import json
import os
import sqlite3
from pathlib import Path

from ..errors import readable

__all__ = [
    "CATALOGUE_NAME",
    "COLUMNS",
    "TIMING_COLUMNS",
    "open_catalogue",
    "write_row",
    "read_rows",
]

CATALOGUE_NAME = "catalogue.sqlite"
SCHEMA_VERSION = 1

# (name, SQL type); the order is the table's.
COLUMNS = (
    ("label", "TEXT PRIMARY KEY"),
    ("status", "TEXT NOT NULL"),
    ("error", "TEXT"),
    ("source", "TEXT NOT NULL"),
    ("input_sha256", "TEXT"),
    ("input_stat", "TEXT"),
    ("settings_sha256", "TEXT"),
    ("settings", "TEXT"),
    ("dropkin_version", "TEXT NOT NULL"),
    ("geometry", "TEXT"),
    ("view", "TEXT"),
    ("liquid", "TEXT"),
    ("glycerol_mass_fraction", "REAL"),
    ("temperature_k", "REAL"),
    ("surface_tension_n_per_m", "REAL"),
    ("viscosity_pa_s", "REAL"),
    ("density_kg_per_m3", "REAL"),
    ("medium", "TEXT"),
    ("medium_viscosity_pa_s", "REAL"),
    ("medium_density_kg_per_m3", "REAL"),
    ("drop_radius_m", "REAL"),
    ("frame_rate_hz", "REAL"),
    ("pixel_size_m", "REAL"),
    ("frames", "INTEGER"),
    ("frames_ok", "INTEGER"),
    ("contact_time_s", "REAL"),
    ("contact_time_err_s", "REAL"),
    ("ohnesorge", "REAL"),
    ("bond", "REAL"),
    ("viscosity_ratio", "REAL"),
    ("decided", "INTEGER"),
    ("regime", "TEXT"),
    ("sentence", "TEXT"),
    ("exponent_theory", "REAL"),
    ("exponent_fit", "REAL"),
    ("exponent_ci_low", "REAL"),
    ("exponent_ci_high", "REAL"),
    ("prefactor_fit", "REAL"),
    ("prefactor_ci_low", "REAL"),
    ("prefactor_ci_high", "REAL"),
    ("prefactor_theory", "REAL"),
    ("window_start_s", "REAL"),
    ("window_end_s", "REAL"),
    ("crossovers", "TEXT"),
    ("output", "TEXT"),
    ("started_utc", "TEXT"),
    ("finished_utc", "TEXT"),
    ("seconds", "REAL"),
)
COLUMN_NAMES = tuple(name for name, _ in COLUMNS)
# Columns that say when and how long, not what: they differ between two runs
# of the same work.
TIMING_COLUMNS = ("started_utc", "finished_utc", "seconds")


def open_catalogue(out_dir) -> sqlite3.Connection:
    """Open (creating if needed) the catalogue of a campaign's output folder.

    Raises :class:`~dropkin.errors.DropkinError` naming the file when it
    cannot be opened or written (a full disk, a file that is not SQLite).
    """
    path = Path(out_dir) / CATALOGUE_NAME
    path.parent.mkdir(parents=True, exist_ok=True)
    conn = sqlite3.connect(path, timeout=30.0)
    conn.row_factory = sqlite3.Row
    try:
        with conn:
            conn.execute("CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT)")
            conn.execute(
                "INSERT OR IGNORE INTO meta VALUES ('schema_version', ?)", (str(SCHEMA_VERSION),)
            )
            columns = ", ".join(f"{name} {kind}" for name, kind in COLUMNS)
            conn.execute(f"CREATE TABLE IF NOT EXISTS recordings ({columns})")
    except sqlite3.Error as exc:
        conn.close()
        from ..errors import DropkinError

        raise DropkinError(f"cannot be opened or written ({exc})", path=path) from None
    return conn


def write_row(conn: sqlite3.Connection, row: dict) -> None:
    """Insert or replace one recording's row, in a transaction of its own."""
    unknown = set(row) - set(COLUMN_NAMES)
    if unknown:  # pragma: no cover - a programming error, not the user's
        raise KeyError(f"not catalogue columns: {sorted(unknown)}")
    values = [_stored(name, row.get(name)) for name in COLUMN_NAMES]
    marks = ", ".join("?" for _ in COLUMN_NAMES)
    with conn:
        conn.execute(
            f"INSERT OR REPLACE INTO recordings ({', '.join(COLUMN_NAMES)}) VALUES ({marks})",
            values,
        )


def _stored(name: str, value):
    """A value as SQLite stores it: lists and tables as JSON; text that is not valid
    UTF-8 (a path's undecodable bytes, as Python decodes them) made storable."""
    if isinstance(value, list | dict):
        return json.dumps(value)  # escapes what UTF-8 cannot carry (\udcff)
    if not isinstance(value, str):
        return value
    if readable(value) is value:
        return value
    if name == "source":  # the path's own bytes, as a BLOB: nothing lost
        return os.fsencode(value)
    return readable(value)  # text for people (an error naming the path): \xff per byte


#: Columns a reader of the catalogue relies on (collapse, reports).
_READ_COLUMNS = ("label", "status")


def read_rows(source) -> list[dict]:
    """Every row of a catalogue (a connection, an output folder or the file)."""
    if isinstance(source, sqlite3.Connection):
        cursor = source.execute("SELECT * FROM recordings ORDER BY label")
        return [dict(r) for r in cursor.fetchall()]
    path = Path(source)
    if path.is_dir():
        path = path / CATALOGUE_NAME
    from ..errors import DropkinError

    if not path.is_file():
        raise DropkinError("has no results catalogue (run dropkin batch first)", path=path)
    try:
        conn = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
        conn.row_factory = sqlite3.Row
        try:
            cursor = conn.execute("SELECT * FROM recordings ORDER BY label")
            names = {d[0] for d in cursor.description}
            rows = [dict(r) for r in cursor.fetchall()]
        finally:
            conn.close()
    except sqlite3.DatabaseError as exc:
        raise DropkinError(f"is not a dropkin results catalogue ({exc})", path=path) from None
    missing = [c for c in _READ_COLUMNS if c not in names]
    if missing:
        raise DropkinError(
            "is not a dropkin results catalogue (its recordings table has no "
            f"{', '.join(missing)} column)",
            path=path,
        )
    return rows
