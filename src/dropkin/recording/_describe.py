"""What a recording holds, as plain data and as text (``dropkin info``).

:func:`describe` gathers the facts of a :class:`~dropkin.recording.Recording`
and its :class:`~dropkin.experiment.Experiment` into a JSON-ready dictionary
with SI values (keys end in their unit); :func:`format_description` turns it
into the lines a person reads, with units chosen for reading.
"""

from __future__ import annotations

import dataclasses

from ..units import registry

__all__ = ["describe", "format_description"]


def _fluid(fluid) -> dict:
    names = {
        "temperature": "temperature_k",
        "surface_tension": "surface_tension_n_per_m",
        "viscosity": "viscosity_pa_s",
        "density": "density_kg_per_m3",
    }
    values = dataclasses.asdict(fluid)
    return {names.get(key, key): value for key, value in values.items()}


def describe(recording, experiment) -> dict:
    """The facts of a recording and its experiment, JSON-ready, in SI units.

    Parameters
    ----------
    recording : Recording
        An opened recording (only its metadata and times are read).
    experiment : Experiment
        The experiment that goes with it.

    Returns
    -------
    dict
        Keys: ``source``, ``kind``, ``frames``, ``rows``, ``cols``, ``dtype``,
        ``bit_depth``, ``frame_rate_hz``, ``frame_rate_origin``,
        ``frame_interval_s``, ``duration_s`` (frames times the mean interval),
        ``pixel_size_m``, ``field_of_view_m`` (rows, cols), ``geometry``,
        ``view``, ``liquid``, ``medium``, ``drop_radius_m``,
        ``experiment_file``, ``notes``, ``lossy_compression`` (the lossy
        compression the frames went through, or None), and for a camera file whose header
        records them ``trigger_frame``, ``trigger_time_s`` (on the axis of the
        frame times) and ``camera_header`` (what the header says: record
        rate, save step, saved-frame rate, bit depths, time stamps). A
        caller that found no frame rate adds ``frame_rate_missing`` (why,
        and how to give one), which :func:`format_description` prints.
    """
    rows, cols = recording.frame_shape
    times = recording.times
    frames = len(recording)
    if recording.frame_rate is not None:
        interval = 1.0 / recording.frame_rate
    elif frames > 1:
        interval = float(times[-1] - times[0]) / (frames - 1)
    else:
        interval = None
    pixel = recording.pixel_size
    return {
        "source": str(recording.path),
        "kind": recording.kind,
        "frames": frames,
        "rows": rows,
        "cols": cols,
        "dtype": str(recording.dtype),
        "bit_depth": recording.bit_depth,
        "frame_rate_hz": recording.frame_rate,
        "frame_rate_origin": recording.frame_rate_origin,
        "frame_interval_s": interval,
        "duration_s": None if interval is None else frames * interval,
        "pixel_size_m": pixel,
        "field_of_view_m": None if pixel is None else [rows * pixel, cols * pixel],
        "geometry": experiment.setup.geometry,
        "view": experiment.setup.view,
        "liquid": _fluid(experiment.liquid),
        "medium": _fluid(experiment.medium),
        "drop_radius_m": experiment.drops.radius,
        "experiment_file": None if experiment.path is None else str(experiment.path),
        "notes": list(recording.notes),
        "lossy_compression": getattr(recording, "lossy", None),
        **_camera(recording),
    }


def _camera(recording) -> dict:
    """The trigger and the camera header's facts, for a camera file (else nothing)."""
    facts = getattr(recording, "header_facts", None) or {}
    if not facts:
        return {}
    return {
        "trigger_frame": recording.trigger_frame,
        "trigger_time_s": recording.trigger_time,
        "camera_header": facts,
    }


def _camera_lines(d: dict) -> list[str]:
    """Lines on what a camera file's header says (none for other sources)."""
    facts = d.get("camera_header")
    if not facts:
        return []
    lines = []
    rate, step, saved = (
        facts.get(k) for k in ("record_rate_hz", "save_step", "saved_frame_rate_hz")
    )
    if rate:
        lines.append(f"record rate     {rate:.6g} fps, save step {step:g}")
    if saved:
        lines.append(f"saved rate      {saved:.6g} fps (record rate / save step)")
    if d.get("trigger_frame") is not None:
        line = f"trigger         at frame {d['trigger_frame']:g} of the file"
        if d.get("trigger_time_s") is not None:
            line += f" ({_readable(d['trigger_time_s'], 's')} on the time axis)"
        lines.append(line)
    if facts.get("first_frame_number") is not None:
        lines.append(f"first frame     number {facts['first_frame_number']} from the trigger")
    depth = f"bit depth       {facts.get('bit_depth')} bits"
    if facts.get("effective_bit_depth"):
        depth += f" (header's effective bit depth {facts['effective_bit_depth']})"
    lines.append(depth + f", stored as {_PACKINGS.get(facts.get('packing'), '?')}")
    if facts.get("per_frame_timestamps"):
        lines.append("time stamps     per frame, in the file (the times come from them)")
    else:
        lines.append("time stamps     none in the file (times from the saved-frame rate)")
    return lines


_PACKINGS = {"u8": "8-bit bytes", "u16": "16-bit words", "p12": "packed 12-bit"}


def _readable(value, unit: str, digits: int = 4) -> str:
    """An SI value in the unit that reads best (5 ms, not 0.005 s)."""
    quantity = registry().Quantity(value, unit).to_compact()
    return f"{quantity.magnitude:.{digits}g} {quantity.units:~P}"


def _fluid_line(fluid: dict) -> str:
    parts = []
    if fluid.get("name"):
        parts.append(fluid["name"])
    if fluid.get("glycerol_mass_fraction") is not None:
        parts.append(f"glycerol mass fraction {fluid['glycerol_mass_fraction']:g}")
    if fluid.get("temperature_k") is not None:
        celsius = registry().Quantity(fluid["temperature_k"], "K").to("degC").magnitude
        parts.append(f"{celsius:.4g} °C")
    for key, unit, label in (
        ("surface_tension_n_per_m", "mN/m", "surface tension"),
        ("viscosity_pa_s", "mPa*s", "viscosity"),
        ("density_kg_per_m3", "kg/m^3", "density"),
    ):
        if fluid.get(key) is not None:
            si_unit = {"mN/m": "N/m", "mPa*s": "Pa*s", "kg/m^3": "kg/m^3"}[unit]
            shown = registry().Quantity(fluid[key], si_unit).to(unit)
            parts.append(f"{label} {shown.magnitude:.4g} {shown.units:~P}")
    return ", ".join(parts) if parts else "not given"


def format_description(description: dict) -> str:
    """Lines of text for a person, from :func:`describe`'s dictionary."""
    d = description
    lines = [
        f"source          {d['source']} ({d['kind']})",
        f"frames          {d['frames']}",
        f"frame size      {d['rows']} rows x {d['cols']} columns",
        f"pixel data      {d['dtype']}, {d['bit_depth']}-bit",
    ]
    if d.get("lossy_compression"):
        lines.append(
            f"compression     lossy: {d['lossy_compression']} (sub-pixel accuracy is not expected)"
        )
    if d.get("frame_rate_missing"):
        lines.append(f"frame rate      missing: {d['frame_rate_missing']}")
    elif d["frame_rate_hz"] is not None:
        lines.append(
            f"frame rate      {d['frame_rate_hz']:.6g} fps (from {d['frame_rate_origin']})"
        )
    else:
        lines.append(f"frame rate      irregular (times from {d['frame_rate_origin']})")
    if d["duration_s"] is not None:
        lines.append(
            f"duration        {_readable(d['duration_s'], 's')}"
            f" (interval {_readable(d['frame_interval_s'], 's')})"
        )
    lines.extend(_camera_lines(d))
    if d["pixel_size_m"] is not None:
        fov_rows, fov_cols = (
            registry().Quantity(v, "m").to("mm").magnitude for v in d["field_of_view_m"]
        )
        lines.append(f"pixel size      {_readable(d['pixel_size_m'], 'm')}")
        lines.append(f"field of view   {fov_rows:.4g} mm x {fov_cols:.4g} mm")
    else:
        lines.append("pixel size      not given (recording.pixel_size)")
    lines.append(f"geometry        {d['geometry'] or 'not given'}, {d['view']} view")
    lines.append(f"liquid          {_fluid_line(d['liquid'])}")
    lines.append(f"medium          {_fluid_line(d['medium'])}")
    if d["drop_radius_m"] is not None:
        lines.append(f"drop radius     {_readable(d['drop_radius_m'], 'm')}")
    lines.append(f"experiment file {d['experiment_file'] or 'none found'}")
    lines.extend(f"note            {note}" for note in d["notes"])
    return "\n".join(lines)
