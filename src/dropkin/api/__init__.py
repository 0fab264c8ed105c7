"""dropkin from Python, for notebooks and scripts: the command line's work, in memory.

- :func:`open` — a recording with its experiment file honoured, array-like
  (``rec.shape``, ``np.asarray(rec)``, ``rec[k, rows, cols]``, ``rec.to_dask()``);
- :func:`analyze` — measure and fit one recording, nothing written: an
  :class:`~dropkin.pipeline.AnalysisResult` with its series (``.to_pandas()``),
  contact, verdict, warnings and figures, and ``.write(out)`` for the files
  ``dropkin analyze`` writes;
- :func:`read_results` and :func:`read_catalogue` — an output folder's radius
  series and a campaign's catalogue as pandas DataFrames.

Keywords are the command line's options with underscores and the same values
(``frame_rate="10 kHz"``, ``pixel_size="20 µm/px"``, ``liquid="water"``,
``temperature="20 degC"``); see :mod:`dropkin.api._options`. ``dropkin.open``
and the others are these functions (``import dropkin`` loads them when first
used).
"""

from ._calls import analyze as analyze
from ._calls import open as open  # noqa: A004 - dropkin.open, as the issue names it
from ._calls import read_catalogue as read_catalogue
from ._calls import read_results as read_results

__all__ = ["open", "analyze", "read_results", "read_catalogue"]
