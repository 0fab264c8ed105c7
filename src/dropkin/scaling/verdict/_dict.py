"""The verdict's dict form, ``fit.json`` (docs/architecture.md): one pair, both ways.

:func:`verdict_to_dict` gives plain JSON-ready values (SI; every time counted
from the contact instant; NaN written as null); :func:`verdict_from_dict`
builds a :class:`RegimeVerdict` back from them, so that a report made from an
analysis folder follows the same path as one made in the run.

Examples
--------
>>> from dropkin.scaling import RegimeVerdict
>>> verdict_to_dict(RegimeVerdict(False, "Too few points: 3 after contact, at least 8 needed."))
... # doctest: +NORMALIZE_WHITESPACE
{'success': False, 'reason': 'Too few points: 3 after contact, at least 8 needed.',
 'decidable': False, 'sentence': '', 'numbers': {}, 'candidates': [], 'dominant': None,
 'crossovers': []}
>>> verdict_from_dict(verdict_to_dict(RegimeVerdict(False, "No points."))).reason
'No points.'
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from ...errors import FitError
from ...fitting._local import LocalExponent, exponent_plateaus
from ...fitting._power import LawFit
from ...fitting._windows import ModelScore
from ._dict_candidate import (
    candidate_dict,
    candidate_from_dict,
    floats,
    num,
    pair,
    to_float,
    warning_dicts,
)
from ._evidence import CrossoverFit
from ._verdict import RegimeVerdict
from ._warnings import VerdictWarning

__all__ = ["verdict_to_dict", "verdict_from_dict", "SavedNumbers"]


_num, _pair, _float, _floats = num, pair, to_float, floats


# fit.json's names of the sample's numbers -> the attributes of SampleNumbers.
_NUMBERS = {
    "ohnesorge": "ohnesorge",
    "bond": "bond",
    "viscosity_ratio": "viscosity_ratio",
    "ohnesorge_outer": "ohnesorge_outer",
    "density_ratio": "density_ratio",
    "viscous_time_s": "viscous_time",
    "inertial_time_s": "inertial_time",
    "capillary_length_m": "capillary_length",
    "capillary_speed_m_per_s": "capillary_speed",
}


def _dominant_dict(d) -> dict:
    return {
        "regime": d.key,
        "exponent_theory": d.exponent_theory,
        "exponent_fit": _num(d.exponent_fit),
        "exponent_ci": _pair(d.exponent_ci),
        "prefactor_fit": _num(d.prefactor_fit),
        "prefactor_theory": _num(d.prefactor_theory),
        "window_s": _pair(d.window),
        "segment": d.segment,
        "consistent": d.consistent,
    }


def _crossover_dict(x) -> dict:
    return {
        "from": x.early,
        "to": x.late,
        "time_s": _num(x.time),
        "radius_m": _num(x.radius),
        "predicted_time_s": _num(x.predicted_time),
        "time_ci_s": _pair(x.time_ci),
        "predicted_formula": x.predicted_formula,
        "sharpness": _num(x.sharpness),
        "delta_aic": _num(x.delta_aic),
        "model": x.model,
    }


def _evidence_dict(verdict) -> dict:
    """The keys that only a successful verdict has, after ``crossovers``."""
    out = {
        "regimes": list(verdict.regimes),
        "two_regime": verdict.two_regime,
        "delta_aic": _num(verdict.delta_aic),
        "model_reason": verdict.model_reason,
        "contact": {
            "t0_s": _num(verdict.t0),
            "t0_ci_s": _pair(verdict.t0_ci),
            "bracket_s": _pair(verdict.t0_bracket),
            "fixed": verdict.t0_fixed,
            "note": "t0_s, t0_ci_s and bracket_s count from the first frame; "
            "all other times from t0",
        },
        "n_points": verdict.n_points,
        "time_range_s": _pair(verdict.time_range),
        "validity": {
            "max_radius_ratio": _num(verdict.validity_ratio),
            "regime": verdict.validity_regime,
            "n_left_out": verdict.n_beyond_validity,
        },
        "edge_levels": list(verdict.edge_levels),
        "warnings": warning_dicts(verdict.warnings),
    }
    fit = getattr(verdict.dominant, "fit", None)  # with a pivot point when a power-law fit
    if fit is not None and hasattr(fit, "pivot_time"):
        out["pivot"] = {
            "time_s": _num(fit.pivot_time),
            "radius_m": _num(fit.pivot_radius),
            "radius_ci_m": _pair(fit.pivot_radius_ci),
            "exponent": _num(fit.exponent),
            "prefactor_raw": _num(fit.prefactor),
            "correlation_raw": _num(fit.correlation_raw),
            "correlation_pivot": _num(fit.correlation_pivot),
        }
    loc = verdict.local
    if loc:
        out["local_exponent"] = {
            "method": loc.method,
            "time_s": [_num(v) for v in loc.time],
            "exponent": [_num(v) for v in loc.exponent],
            "lower": [_num(v) for v in loc.lower],
            "upper": [_num(v) for v in loc.upper],
            "plateaus": [
                {"start_s": a, "end_s": b, "exponent": n} for a, b, n in exponent_plateaus(loc)
            ],
        }
    out["models"] = [
        {"model": m.name, "regimes": m.regimes, "aic": _num(m.aic), "n_params": m.n_params}
        for m in verdict.models
    ]
    settings = dict(verdict.settings)
    settings["prefactor_band"] = list(settings.get("prefactor_band", ()))
    out["settings"] = settings
    return out


def verdict_to_dict(verdict) -> dict:
    """The ``fit.json`` structure of docs/architecture.md, plus extra keys (JSON-ready).

    Keys: ``numbers``, ``candidates`` (regime, exponent_theory,
    prefactor_theory, prefactor_fit, exponent_fit, exponent_ci, window_s,
    aic, consistent, and more), ``dominant``, ``crossovers`` (from, to,
    time_s, radius_m, predicted_time_s, and more); extra: ``success``,
    ``reason``, ``decidable``, ``sentence``, ``regimes``, ``two_regime``,
    ``delta_aic``, ``contact``, ``validity``, ``edge_levels``, ``warnings``,
    ``pivot``, ``local_exponent``, ``models``, ``settings``. SI units; times
    count from the contact instant (``contact.t0_s`` itself counts from the
    first frame).
    """
    n = verdict.numbers
    out = {
        "success": verdict.success,
        "reason": verdict.reason,
        "decidable": verdict.decidable,
        "sentence": verdict.sentence,
        "numbers": {} if n is None else {k: _num(getattr(n, a)) for k, a in _NUMBERS.items()},
        "candidates": [candidate_dict(c) for c in verdict.candidates],
        "dominant": None,
        "crossovers": [],
    }
    if not verdict:
        return out
    if verdict.dominant is not None:
        out["dominant"] = _dominant_dict(verdict.dominant)
    out["crossovers"] = [_crossover_dict(x) for x in verdict.crossovers]
    out.update(_evidence_dict(verdict))
    return out


@dataclass(frozen=True)
class SavedNumbers:
    """The sample's numbers as ``fit.json`` keeps them (SI; None where unknown).

    The material values they were made from are not in the file, so a verdict
    read back holds this record where a fresh one holds its
    :class:`~dropkin.scaling.SampleNumbers`; the names are the same.
    """

    ohnesorge: float | None = None
    bond: float | None = None
    viscosity_ratio: float | None = None
    ohnesorge_outer: float | None = None
    density_ratio: float | None = None
    viscous_time: float | None = None
    inertial_time: float | None = None
    capillary_length: float | None = None
    capillary_speed: float | None = None


def _crossover_from_dict(x: Mapping) -> CrossoverFit:
    return CrossoverFit(
        early=x["from"],
        late=x["to"],
        time=_float(x.get("time_s")),
        time_ci=_floats(x.get("time_ci_s")),
        radius=_float(x.get("radius_m")),
        predicted_time=x.get("predicted_time_s"),
        predicted_formula=x.get("predicted_formula", ""),
        sharpness=_float(x.get("sharpness")),
        delta_aic=_float(x.get("delta_aic")),
        model=x.get("model", ""),
    )


def _pivot_from_dict(p: Mapping) -> LawFit:
    """The dominant's free fit, as far as ``fit.json`` keeps it (its pivot point)."""
    return LawFit(
        success=True,
        message="",
        law="power",
        exponent=_float(p.get("exponent")),
        prefactor=_float(p.get("prefactor_raw")),
        pivot_time=_float(p.get("time_s")),
        pivot_radius=_float(p.get("radius_m")),
        pivot_radius_ci=_floats(p.get("radius_ci_m")),
        correlation_raw=_float(p.get("correlation_raw")),
        correlation_pivot=_float(p.get("correlation_pivot")),
    )


def _local_from_dict(loc: Mapping) -> LocalExponent:
    def array(key):
        return np.array([_float(v) for v in loc.get(key) or ()], dtype=np.float64)

    time = array("time_s")
    return LocalExponent(
        success=True,
        message="",
        time=time,
        exponent=array("exponent"),
        stat_err=np.full(time.shape, np.nan),  # not in the file
        lower=array("lower"),
        upper=array("upper"),
        t0=math.nan,
        t0_bracket=(math.nan, math.nan),
        points_per_decade=0,
        window_decades=math.nan,
        method=loc.get("method", ""),
    )


def _dominant_from_dict(data: Mapping, candidates: tuple) -> tuple[object, tuple]:
    """The dominant candidate (with its pivot fit), and the candidates holding it."""
    dom = data.get("dominant")
    if not dom:
        return None, candidates
    same = [
        i
        for i, c in enumerate(candidates)
        if c.key == dom["regime"] and c.segment == dom.get("segment", c.segment)
    ]
    if not same:
        raise FitError("is not one of the candidates", key="dominant", value=dom["regime"])
    pivot = data.get("pivot")
    dominant = candidates[same[0]]
    if pivot:
        dominant = dataclasses.replace(dominant, fit=_pivot_from_dict(pivot))
        candidates = (*candidates[: same[0]], dominant, *candidates[same[0] + 1 :])
    return dominant, candidates


def verdict_from_dict(data: Mapping) -> RegimeVerdict:
    """The :class:`RegimeVerdict` that :func:`verdict_to_dict` gave `data`.

    What ``fit.json`` does not keep is left empty: the candidates' law shapes
    and fits (but the dominant's pivot point), the local exponent's standard
    errors, the models' fits, the geometry and the view. ``numbers`` is a
    :class:`SavedNumbers`.

    Raises
    ------
    ExperimentError, FitError
        For a regime the catalogue does not know, or a dominant regime that
        is not among the candidates.
    """
    saved = data.get("numbers") or {}
    numbers = SavedNumbers(**{a: saved.get(k) for k, a in _NUMBERS.items()}) if saved else None
    base = {
        "decidable": data.get("decidable", False),
        "sentence": data.get("sentence", ""),
        "numbers": numbers,
        "candidates": tuple(candidate_from_dict(c) for c in data.get("candidates") or ()),
    }
    if not data.get("success"):
        return RegimeVerdict(False, data.get("reason", ""), **base)
    dominant, base["candidates"] = _dominant_from_dict(data, base["candidates"])
    contact = data.get("contact") or {}
    validity = data.get("validity") or {}
    local = data.get("local_exponent")
    models = data.get("models") or ()
    settings = dict(data.get("settings") or {})
    if "prefactor_band" in settings:
        settings["prefactor_band"] = tuple(settings["prefactor_band"])
    return RegimeVerdict(
        success=True,
        reason=data.get("reason", ""),
        regimes=tuple(data.get("regimes") or ()),
        dominant=dominant,
        crossovers=tuple(_crossover_from_dict(x) for x in data.get("crossovers") or ()),
        two_regime=data.get("two_regime", False),
        delta_aic=_float(data.get("delta_aic")),
        models=tuple(
            ModelScore(m["model"], m["regimes"], _float(m.get("aic")), m["n_params"], None)
            for m in models
        ),
        model_reason=data.get("model_reason", ""),
        local=_local_from_dict(local) if local else None,
        t0=_float(contact.get("t0_s")),
        t0_ci=_floats(contact.get("t0_ci_s")),
        t0_bracket=_floats(contact.get("bracket_s")),
        t0_fixed=contact.get("fixed", False),
        n_points=data.get("n_points", 0),
        time_range=_floats(data.get("time_range_s")),
        validity_ratio=validity.get("max_radius_ratio"),
        validity_regime=validity.get("regime", ""),
        n_beyond_validity=validity.get("n_left_out", 0),
        edge_levels=tuple(data.get("edge_levels") or ()),
        warnings=tuple(
            VerdictWarning(w["code"], w["message"]) for w in data.get("warnings") or ()
        ),
        settings=settings,
        **base,
    )
