"""One recording from frames to report: open, check, measure, fit, report; in
memory (:func:`analyze_in_memory`, then :func:`write_result`) or into a folder
(:func:`analyze_into`, both at once)."""

from ._outputs import read_fit as read_fit
from ._outputs import write_analysis_outputs as write_analysis_outputs
from ._outputs import write_fit as write_fit
from ._result import AnalysisResult as AnalysisResult
from ._result import analyze_in_memory as analyze_in_memory
from ._result import write_result as write_result
from ._steps import Analysis as Analysis
from ._steps import AnalysisSettings as AnalysisSettings
from ._steps import analyze_into as analyze_into
from ._steps import fit_into as fit_into
from ._steps import measure_into as measure_into
from ._steps import open_source as open_source
from ._steps import parse_roi as parse_roi

__all__ = [
    "AnalysisSettings",
    "Analysis",
    "parse_roi",
    "open_source",
    "measure_into",
    "fit_into",
    "analyze_into",
    "AnalysisResult",
    "analyze_in_memory",
    "write_result",
    "write_fit",
    "read_fit",
    "write_analysis_outputs",
]
