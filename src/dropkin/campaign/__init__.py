"""Campaigns: a manifest of recordings run through the pipeline (in this process,
a process pool or Dask), the SQLite catalogue of results, and master curves."""

from ._catalogue import CATALOGUE_NAME as CATALOGUE_NAME
from ._catalogue import read_rows as read_rows
from ._collapse import master_curves as master_curves
from ._collapse import write_collapse as write_collapse
from ._manifest import read_manifest as read_manifest
from ._pooling import pool_log_prefactors as pool_log_prefactors
from ._runner import BatchSummary as BatchSummary
from ._runner import run_batch as run_batch

__all__ = [
    "read_manifest",
    "BatchSummary",
    "run_batch",
    "CATALOGUE_NAME",
    "read_rows",
    "master_curves",
    "write_collapse",
    "pool_log_prefactors",
]
