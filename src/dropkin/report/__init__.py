"""Figures and the self-contained HTML report of one analysis, from its records;
master-curve figures."""

from ._collapse import write_master_curve as write_master_curve
from ._figures import analysis_figures as analysis_figures
from ._html import write_analysis_report as write_analysis_report
from ._html import write_report as write_report
from ._origin import origin_dict as origin_dict
from ._origin import origin_sentence as origin_sentence
from ._origin import time_origin as time_origin
from ._plots import write_plots as write_plots

__all__ = [
    "analysis_figures",
    "write_plots",
    "write_report",
    "write_analysis_report",
    "write_master_curve",
    "time_origin",
    "origin_sentence",
    "origin_dict",
]
