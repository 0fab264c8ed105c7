"""The report's reference list, its glossary and its overlay frames.

The laws' references are read from the regime catalogue
(:attr:`dropkin.scaling.Regime.reference`, journal, volume, page and year),
never written here; the verdict's records are read defensively, since a
verdict read back from ``fit.json`` or made by a newer catalogue may lack a
field.
"""

from __future__ import annotations

import base64
import re
from pathlib import Path

import numpy as np

from .._atomic import completed_files
from ..status import STATUSES
from ._origin import time_origin, time_text
from ._style import _num

__all__ = ["law_references", "glossary", "overlay_frames"]


def law_references(verdict) -> tuple[list[dict], dict[str, int]]:
    """The numbered references of the laws the report shows, and each regime's number.

    Returns
    -------
    references : list of dict
        ``number``, ``reference`` (the catalogue's string), ``laws`` (the
        regimes citing it, each ``key``, ``name``, ``code``, ``status`` of the
        law and ``prefactor_status``).
    numbers : dict
        Regime key → its reference's number.
    """
    references: list[dict] = []
    by_text: dict[str, dict] = {}
    numbers: dict[str, int] = {}
    for cand in verdict.candidates if verdict else ():
        regime = getattr(cand, "regime", None)
        text = str(getattr(regime, "reference", "") or "").strip()
        key = str(getattr(cand, "key", "") or getattr(regime, "key", ""))
        if not text or not key or key in numbers:
            continue
        entry = by_text.get(text)
        if entry is None:
            entry = {"number": len(references) + 1, "reference": text, "laws": []}
            by_text[text] = entry
            references.append(entry)
        entry["laws"].append(
            {
                "key": key,
                "name": str(getattr(regime, "name", "") or key),
                "code": str(getattr(regime, "code", "") or ""),
                "status": str(getattr(regime, "status", "") or "—"),
                "prefactor_status": str(getattr(regime, "prefactor_status", "") or "—"),
            }
        )
        numbers[key] = entry["number"]
    return references, numbers


#: What a frame's status means, in the report's words (the vocabulary is
#: :data:`dropkin.status.STATUSES`).
_STATUS_MEANING = {
    "ok": "a radius was measured",
    "before-contact": "the drops (or the drop and the plate) have not touched yet",
    "unresolved": "in contact, but the neck or contact point is narrower than the optics "
    "resolve; the radius shown is biased",
    "not-found": "nothing to measure was seen",
    "at-edge": "what is measured reaches the frame's border",
    "after-growth": "in contact, after the growth phase has ended (the merged drop rings or "
    "the neck nears the drop radius); kept out of the fit",
}


#: The symbols and codes of the report; "(b)" is filled in with the verdict's band.
_TERMS = (
    ("τ", "time since the contact instant, τ = t − t₀ (t from the first frame)"),
    ("t₀", "the contact instant fitted with the laws inside its bracket (or fixed by --t0)"),
    ("t_c", "the contact instant measured from the frames (measure.json)"),
    ("r, R", "the neck or contact radius; the drop radius"),
    (
        "n",
        (
            "the exponent of a law r = A τⁿ; 'ELS log' marks the logarithmic law "
            "r = −C (γτ/η) ln(γτ/(ηR)), whose local exponent is 1 + 1/ln(γτ/(ηR)), not 1"
        ),
    ),
    ("C", "the dimensionless coefficient of a law, on the group of the sample's values"),
    ("A", "the dimensional prefactor A = C × group, in the unit shown"),
    ("d ln r / d ln τ", "the local exponent: the slope of ln r against ln τ"),
    ("window", "the range of τ over which a law is fitted and holds"),
    ("AIC", "Akaike's information criterion of a fit; lower is better, differences count"),
    (
        "(a)",
        (
            "check on the exponent: the law's n lies inside the fitted exponent's "
            "combined 95 % interval"
        ),
    ),
    ("(b)", ""),
    (
        "(c)",
        (
            "check on the numbers: the sample's dimensionless numbers (Oh, Bo, ratios) "
            "allow the regime"
        ),
    ),
    ("(d)", "information: the AIC, used to rank candidates that pass the same checks"),
    ("consistent", "a candidate that passes (a), (b) and (c)"),
    (
        "statistical / systematic / combined",
        (
            "95 % intervals from the bootstrap; from the "
            "edge level (and, for C, the material values); both together"
        ),
    ),
    ("V", "status label of a law or value: verified against a source text"),
    ("C (label)", "status label: computed here by running the formula or a library"),
    (
        "D",
        (
            "status label: derived here by dimensional analysis or a few lines of algebra; "
            "check before relying on it"
        ),
    ),
    ("M", "status label: from memory, not verified; used as a prior, never to reject"),
)


def glossary(verdict) -> list[tuple[str, str]]:
    """Every symbol and code the report uses, with its meaning."""
    settings = dict(getattr(verdict, "settings", None) or {})
    band = settings.get("prefactor_band")
    band_text = (
        f"{band[0]:g}–{band[1]:g}" if isinstance(band, (list, tuple)) and len(band) == 2 else None
    )
    prefactor = "the fitted prefactor over the one the sample's own γ, η, ρ and R predict"
    prefactor += f" lies within {band_text}" if band_text else " is of order one"
    rows = [(t, f"check on the prefactor: {prefactor}" if t == "(b)" else m) for t, m in _TERMS]
    rows += [(f"status {s}", _STATUS_MEANING.get(s, s)) for s in STATUSES]
    return rows


_FRAME = re.compile(r"frame_(\d+)$")


def _data_uri(path: Path) -> str:
    return "data:image/png;base64," + base64.b64encode(path.read_bytes()).decode("ascii")


def _last_row(frames: np.ndarray, number: int) -> int | None:
    """The index of the last row of `frames` that is frame `number`, or None."""
    rows = np.flatnonzero(frames == number)
    return int(rows[-1]) if len(rows) else None


def overlay_frames(overlays_dir, series, verdict) -> list[dict]:
    """The annotated frames in order, each ``name``, ``caption`` and ``uri`` (a data: URI).

    The caption gives the frame, its status, τ from the report's origin and
    the radius.
    """
    origin = time_origin(series, verdict)
    tau = origin.tau(series.time)
    numbers = np.asarray(series.frame)
    frames = []
    for path in completed_files(Path(overlays_dir), "*.png"):
        match = _FRAME.fullmatch(path.stem)
        index = _last_row(numbers, int(match.group(1))) if match else None
        caption = path.stem
        if index is not None:
            parts = [f"frame {int(series.frame[index])}", str(series.status[index])]
            if np.isfinite(tau[index]):
                symbol = "τ" if origin.kind != "measured" else "t − t_c"
                parts.append(f"{symbol} = {time_text(tau[index])}")
            radius = _num(series.radius[index])
            if radius is not None:
                parts.append(f"r = {radius * 1e3:.4g} mm")
            caption = " · ".join(parts)
        frames.append({"name": path.stem, "caption": caption, "uri": _data_uri(path)})
    return frames
