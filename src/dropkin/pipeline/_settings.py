"""What decides an analysis besides the sample: :class:`AnalysisSettings`, and
:func:`parse_roi` for the region of interest as the command line writes it."""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["AnalysisSettings", "parse_roi"]


@dataclass(frozen=True)
class AnalysisSettings:
    """Everything but the sample that decides an analysis' result.

    Attributes
    ----------
    roi : tuple of int or None
        Region of interest (row_start, row_stop, col_start, col_stop), pixels.
    threshold : float
        Edge level (see :class:`dropkin.measure.MeasureOptions`, ``level``).
    background : str or None
        Path of an image of the empty field of view.
    jobs, chunk_size : int
        Worker processes and frames per chunk of the measurement (they do not
        change the result).
    overlays : int
        Annotated frames to write.
    t0 : float or None
        Contact instant fixed by hand (s from the first frame).
    seed, bootstrap : int
        Bootstrap seed and resamples of the fit's intervals.
    initial_radius : bool
        Also try a finite initial radius r0 in the fits (kept when the AIC
        prefers it).
    plot_formats : tuple of str
        File formats of the figures (``png``, ``svg``, ``pdf``); they do not
        change the result.
    """

    roi: tuple[int, int, int, int] | None = None
    threshold: float = 0.5
    background: str | None = None
    jobs: int = 1
    chunk_size: int = 64
    overlays: int = 6
    t0: float | None = None
    seed: int = 0
    bootstrap: int = 200
    initial_radius: bool = False
    plot_formats: tuple[str, ...] = ("png",)

    def fit_settings(self) -> dict:
        """The keywords of the fit (:func:`~dropkin.pipeline._fit.fit_measurement`)."""
        return {
            "t0": self.t0,
            "seed": self.seed,
            "bootstrap": self.bootstrap,
            "initial_radius": self.initial_radius,
        }

    def result_settings(self) -> dict:
        """The settings that can change the outputs (for a settings hash)."""
        return {
            "roi": None if self.roi is None else list(self.roi),
            "threshold": self.threshold,
            "background": self.background,
            "overlays": self.overlays,
            "t0": self.t0,
            "seed": self.seed,
            "bootstrap": self.bootstrap,
            "initial_radius": self.initial_radius,
        }


def parse_roi(text, *, key: str = "--roi", path=None):
    """``'ROW0:ROW1,COL0:COL1'`` -> (row0, row1, col0, col1); None stays None.

    Raises
    ------
    ExperimentError
        Naming `key` (and `path`) when the text is not four whole numbers in
        that form. Whether the region fits the frame is checked on measuring.

    Examples
    --------
    >>> parse_roi("100:300,50:450")
    (100, 300, 50, 450)
    """
    from ..errors import ExperimentError

    if text is None:
        return None
    try:
        rows, cols = text.split(",")
        r0, r1 = (int(v) for v in rows.split(":"))
        c0, c1 = (int(v) for v in cols.split(":"))
    except (ValueError, AttributeError):
        raise ExperimentError(
            "is not a region",
            key=key,
            value=text,
            path=path,
            expected="ROW0:ROW1,COL0:COL1 in pixels, e.g. 100:300,50:450",
        ) from None
    return (r0, r1, c0, c1)
