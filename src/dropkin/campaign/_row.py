"""A recording's row of the catalogue, from the records of its analysis.

The columns come from the records' dict forms, the same values that
``measure.json`` and ``fit.json`` hold (:func:`dropkin.series.series_to_dict`,
:func:`dropkin.scaling.verdict_to_dict`), and from the experiment as used.
"""

from __future__ import annotations

from ..series import series_to_dict

__all__ = ["sample_columns", "series_columns", "verdict_columns"]


def sample_columns(exp) -> dict:
    """The sample's columns: geometry, view, liquid and medium, drops, recording."""
    liquid, medium = exp.liquid, exp.medium
    return {
        "geometry": exp.setup.geometry,
        "view": exp.setup.view,
        "liquid": liquid.name,
        "glycerol_mass_fraction": liquid.glycerol_mass_fraction,
        "temperature_k": liquid.temperature,
        "surface_tension_n_per_m": liquid.surface_tension,
        "viscosity_pa_s": liquid.viscosity,
        "density_kg_per_m3": liquid.density,
        "medium": medium.name,
        "medium_viscosity_pa_s": medium.viscosity,
        "medium_density_kg_per_m3": medium.density,
        "drop_radius_m": exp.drops.radius,
        "frame_rate_hz": exp.recording.frame_rate,
        "pixel_size_m": exp.recording.pixel_size,
    }


def series_columns(series) -> dict:
    """The measurement's columns: input hash, frames, ok frames, contact instant."""
    info = series_to_dict(series)
    return {
        "input_sha256": info["provenance"]["sha256"],  # measure_into hashed the frames
        "frames": info["frames"],
        "frames_ok": info["status_counts"]["ok"],
        "contact_time_s": info["contact_time_s"],
        "contact_time_err_s": info["contact_time_err_s"],
    }


def _ci(values, index):
    if not isinstance(values, list | tuple) or len(values) != 2:
        return None
    return values[index]


def verdict_columns(verdict) -> dict:
    """The verdict's columns: sentence, numbers, the dominant regime's fit, crossovers.

    The prefactor columns hold the dimensionless C (the fitted prefactor over
    the regime's group) and its interval.
    """
    from ..scaling import verdict_to_dict  # scipy: imported when needed

    data = verdict_to_dict(verdict)
    numbers = data["numbers"]
    cols = {"sentence": data["sentence"], "decided": int(bool(data["decidable"]))}
    cols.update({key: numbers.get(key) for key in ("ohnesorge", "bond", "viscosity_ratio")})
    dom = data["dominant"]
    if not dom:
        return cols
    same = (dom["regime"], dom["segment"])
    cand = next((c for c in data["candidates"] if (c["regime"], c["segment"]) == same), {})
    group = None
    if dom["prefactor_fit"] and cand.get("coefficient_fit"):
        group = dom["prefactor_fit"] / cand["coefficient_fit"]
    pci = cand.get("prefactor_fit_ci")
    theory_c = None
    if group and dom["prefactor_theory"] is not None:
        theory_c = dom["prefactor_theory"] / group
    cols.update(
        regime=dom["regime"],
        exponent_theory=dom["exponent_theory"],
        exponent_fit=dom["exponent_fit"],
        exponent_ci_low=_ci(dom["exponent_ci"], 0),
        exponent_ci_high=_ci(dom["exponent_ci"], 1),
        prefactor_fit=cand.get("coefficient_fit"),
        prefactor_ci_low=None if not (group and pci) else pci[0] / group,
        prefactor_ci_high=None if not (group and pci) else pci[1] / group,
        prefactor_theory=theory_c,
        window_start_s=_ci(dom["window_s"], 0),
        window_end_s=_ci(dom["window_s"], 1),
        crossovers=data["crossovers"],
    )
    return cols
