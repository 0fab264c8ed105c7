"""Writing a synthetic recording: frames, experiment file and truth, atomically.

Two layouts:

* a folder ``OUT/`` of PNG frames ``frame_00000.png, ...`` (written with
  ``cv2.imwrite``), or of JPEG frames ``frame_00000.jpg, ...`` (lossy), with
  ``OUT/experiment.toml`` and ``OUT/truth.json``;
* a multi-page TIFF ``OUT.tif`` (tifffile, zlib-compressed pages), or an
  MPEG-4 video ``OUT.mp4`` (lossy), with ``OUT.toml`` and ``OUT.truth.json``
  beside it (``<stem>.toml``, ``<stem>.truth.json``).

The lossy exports (:mod:`dropkin.synth._lossy`) record how they were made in
the truth file (``export``).

Every file goes to a temporary name in its folder and is renamed into place
when complete.
"""

from __future__ import annotations

import json
import math
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from .._atomic import atomic_path, write_text_atomic
from .._version import __version__
from ..errors import ExperimentError
from ._lossy import frames_folder, write_jpeg_frames, write_mp4
from ._recording import SyntheticRecording
from ._setups import scene_at

__all__ = [
    "FORMATS",
    "WrittenRecording",
    "experiment_toml",
    "truth_record",
    "write_recording",
]

FORMATS = ("png", "tiff", "mp4", "jpeg")
_TIFF_SUFFIXES = (".tif", ".tiff")
_FILE_SUFFIXES = {"tiff": _TIFF_SUFFIXES, "mp4": (".mp4",)}


@dataclass(frozen=True)
class WrittenRecording:
    """Where a recording was written.

    Attributes
    ----------
    frames : pathlib.Path
        The frame folder, or the TIFF file.
    experiment : pathlib.Path
        The experiment file.
    truth : pathlib.Path
        The truth file.
    format : str
        One of :data:`FORMATS`.
    """

    frames: Path
    experiment: Path
    truth: Path
    format: str


def _num(value: float) -> str:
    """A float in short form, e.g. 20000, 0.0725, 1.5e-05."""
    return f"{value:.12g}"


def _quote(text: str) -> str:
    return json.dumps(text)  # a JSON string is a valid TOML basic string


def experiment_toml(recording: SyntheticRecording) -> str:
    """The experiment file of `recording`, in the format of the design.

    Every value with a unit is a string that pint parses. For two drops of
    unequal radii, ``[drops] radius`` is 2 R1 R2 / (R1 + R2), the radius that
    sets the gap near the neck (both radii are in the truth file).

    Returns
    -------
    text : str
    """
    camera, setup, liquid, medium = (
        recording.camera,
        recording.setup,
        recording.liquid,
        recording.medium,
    )
    lines = [
        "# Synthetic recording made by dropkin.synth (invented scenario, known truth).",
        "",
        "[recording]",
        f'frame_rate = "{_num(camera.frame_rate)} Hz"',
        f'pixel_size = "{_num(camera.pixel_size * 1e6)} um"',
        "",
        "[setup]",
        f'geometry = "{setup.geometry}"',
        f'view = "{setup.view}"',
        "",
        "[liquid]",
    ]
    if liquid.name:
        lines.append(f"name = {_quote(liquid.name)}")
    if liquid.glycerol_mass_fraction is not None:
        lines.append(f"glycerol_mass_fraction = {_num(liquid.glycerol_mass_fraction)}")
    if liquid.temperature is not None:
        lines.append(f'temperature = "{_num(round(liquid.temperature - 273.15, 9))} degC"')
    lines += [
        f'surface_tension = "{_num(liquid.surface_tension * 1e3)} mN/m"',
        f'viscosity = "{_num(liquid.viscosity * 1e3)} mPa*s"',
        f'density = "{_num(liquid.density)} kg/m^3"',
        "",
        "[medium]",
        f'viscosity = "{_num(medium.viscosity * 1e3)} mPa*s"',
        f'density = "{_num(medium.density)} kg/m^3"',
        "",
        "[drops]",
    ]
    if len(set(setup.radii)) > 1:
        lines.append("# 2 R1 R2 / (R1 + R2) of the two drop radii (see truth.json)")
    lines += [f'radius = "{_num(setup.effective_radius * 1e3)} mm"']
    if setup.geometry == "sessile-coalescence":
        lines.append(f'contact_angle = "{_num(setup.contact_angle_deg)} deg"')
    lines.append("")
    return "\n".join(lines)


def truth_record(recording: SyntheticRecording) -> dict:
    """The truth of `recording` as a JSON-ready dict (SI units, keys say the unit)."""
    truth, camera, setup = recording.truth, recording.camera, recording.setup
    px = camera.pixel_size
    scene = {}
    if setup.geometry == "coalescence":
        scene["angle_deg"] = setup.angle_deg
        # Contact point: where the drops touch, or will touch.
        touching = scene_at(setup, camera, 0.0, 0.0)
        r1 = touching.radius_1_px
        ar, ac = touching.axis()
        scene["contact_px"] = [
            touching.centre_1_px[0] + r1 * ar,
            touching.centre_1_px[1] + r1 * ac,
        ]
        scene["needle_width_m"] = setup.needle_width
        scene["approach"] = setup.approach
    elif setup.geometry == "sessile-coalescence":
        scene.update(_sessile_scene(recording))
    else:
        first = recording.scene(0)
        if setup.view == "side":
            scene["substrate_row_px"] = first.substrate_row_px
            scene["axis_col_px"] = first.centre_col_px
            scene["reflectivity"] = setup.reflectivity
        else:
            scene["centre_px"] = list(first.centre_px)
    quantity = {
        "coalescence": "neck radius",
        "sessile-coalescence": f"bridge {'height' if setup.view == 'side' else 'half-width'}",
    }.get(setup.geometry, "contact radius")
    bridge = {f"bridge_{key}_m": values.tolist() for key, values in truth.bridge.items()}
    return {
        "description": f"synthetic recording; radius_m is the true {quantity}",
        "dropkin_version": __version__,
        "geometry": setup.geometry,
        "view": setup.view,
        "frames": recording.frames,
        "frame_rate_hz": camera.frame_rate,
        "pixel_size_m": px,
        "shape": list(camera.shape),
        "bit_depth": recording.sensor.bit_depth,
        "contrast": recording.optics.contrast,
        "glow": recording.optics.glow if recording.optics.contrast == "bright-drops" else None,
        "seed": recording.seed,
        "contact_time_s": truth.contact_time,
        "contact_frame": truth.contact_frame,
        "law": {
            "name": truth.law.name,
            "parameters": {k: float(v) for k, v in truth.law.parameters.items()},
            "valid_until_s": None if math.isinf(truth.law.valid_until) else truth.law.valid_until,
        },
        "drop_radius_m": setup.effective_radius,
        "drop_radii_m": list(setup.radii),
        "drop_volume_m3": setup.volume,
        "liquid": {
            "name": recording.liquid.name,
            "surface_tension_n_per_m": recording.liquid.surface_tension,
            "viscosity_pa_s": recording.liquid.viscosity,
            "density_kg_per_m3": recording.liquid.density,
            "temperature_k": recording.liquid.temperature,
            "glycerol_mass_fraction": recording.liquid.glycerol_mass_fraction,
        },
        "medium": {
            "viscosity_pa_s": recording.medium.viscosity,
            "density_kg_per_m3": recording.medium.density,
        },
        "scene": scene,
        "frame_time_s": truth.frame_times.tolist(),
        "time_since_contact_s": truth.time_since_contact.tolist(),
        "in_contact": (truth.time_since_contact > 0).tolist(),
        "radius_m": truth.radius.tolist(),
        "radius_px": (truth.radius / px).tolist(),
        "gap_m": truth.gap.tolist(),
        **bridge,
    }


def _sessile_scene(recording: SyntheticRecording) -> dict:
    """The truth file's scene block of sessile drops."""
    setup, first = recording.setup, recording.scene(0)
    scene = {"contact_angle_deg": setup.contact_angle_deg, "reflectivity": setup.reflectivity}
    if setup.view == "side":
        scene["substrate_row_px"] = first.substrate_row_px
        scene["axis_col_px"] = first.centre_col_px
        scene["sphere_radius_px"] = first.sphere_radius_px
    return scene


def _resolve(out: Path, fmt: str | None) -> str:
    suffix = out.suffix.lower()
    if fmt is None:
        fmt = next((f for f, ends in _FILE_SUFFIXES.items() if suffix in ends), "png")
    if fmt not in FORMATS:
        raise ExperimentError(
            "is not a known format", key="format", value=fmt, expected=" or ".join(FORMATS)
        )
    ends = _FILE_SUFFIXES.get(fmt)
    if ends is not None and suffix not in ends:
        raise ExperimentError(f"must end in {' or '.join(ends)} for format {fmt}", path=out)
    if ends is None and any(suffix in e for e in _FILE_SUFFIXES.values()):
        raise ExperimentError(f"names a file, but the format {fmt} is a folder", path=out)
    return fmt


def write_recording(
    recording: SyntheticRecording,
    out,
    *,
    format: str | None = None,
    overwrite: bool = False,
    png_compression: int = 6,
    progress: Callable[[int, int], None] | None = None,
    bit_rate: float | None = None,
    jpeg_quality: int = 75,
) -> WrittenRecording:
    """Render `recording` and write frames, experiment file and truth.

    Parameters
    ----------
    recording : SyntheticRecording
    out : str or os.PathLike
        A folder (PNG or JPEG frames), a ``.tif``/``.tiff`` file (multi-page
        TIFF) or a ``.mp4`` file (MPEG-4 video).
    format : {"png", "tiff", "mp4", "jpeg"}, optional
        Chosen from the suffix of `out` when not given (a folder: png).
    overwrite : bool
        Replace existing output; otherwise existing frames are an error.
    png_compression : int
        zlib level 0-9 of the PNG frames (9 is smallest and slowest).
    progress : callable, optional
        ``progress(done, total)`` after each frame.
    bit_rate : float, optional
        mp4: bits per second at the 30 fps playback rate (the encoder's
        default when None; e.g. 10 000 for a heavily compressed export).
    jpeg_quality : int
        jpeg: the quality, 1-100.

    Returns
    -------
    written : WrittenRecording
    """
    out = Path(out)
    fmt = _resolve(out, format)
    record = truth_record(recording)
    if fmt == "png":
        experiment, truth = _write_png_frames(recording, out, overwrite, png_compression, progress)
    elif fmt == "tiff":
        experiment, truth = _write_tiff_stack(recording, out, overwrite, progress)
    elif fmt == "mp4":
        experiment, truth = write_mp4(
            recording, out, overwrite=overwrite, bit_rate=bit_rate, progress=progress
        )
        record["export"] = {"format": "mp4", "codec": "mp4v", "bit_rate_bps": bit_rate}
    else:
        experiment, truth = write_jpeg_frames(
            recording, out, overwrite=overwrite, quality=jpeg_quality, progress=progress
        )
        record["export"] = {"format": "jpeg", "quality": jpeg_quality}
    write_text_atomic(experiment, experiment_toml(recording))
    write_text_atomic(truth, json.dumps(record, indent=1) + "\n")
    return WrittenRecording(frames=out, experiment=experiment, truth=truth, format=fmt)


def _write_png_frames(recording, out: Path, overwrite, png_compression, progress):
    """One PNG per frame in the folder `out`; (experiment path, truth path) beside them."""
    import cv2

    total = recording.frames
    frames_folder(out, overwrite, "frame_*.png")
    for index, frame in enumerate(recording.iter_frames()):
        path = out / f"frame_{index:05d}.png"
        with atomic_path(path) as tmp:
            if not cv2.imwrite(str(tmp), frame, [cv2.IMWRITE_PNG_COMPRESSION, png_compression]):
                raise OSError(f"cannot write {path}")
        if progress is not None:
            progress(index + 1, total)
    return out / "experiment.toml", out / "truth.json"


def _write_tiff_stack(recording, out: Path, overwrite, progress):
    """One multi-page TIFF file `out`; (experiment path, truth path) beside it."""
    import tifffile

    total = recording.frames
    if out.exists() and not overwrite:
        raise ExperimentError("already exists", path=out, expected="a new file, or --overwrite")
    out.parent.mkdir(parents=True, exist_ok=True)

    def pages():
        for index, frame in enumerate(recording.iter_frames()):
            yield frame
            if progress is not None:
                progress(index + 1, total)

    # One series of K pages (K, M, N), written page by page from the iterator;
    # the baseline tag MaxSampleValue (281) records 255 or 4095.
    max_sample = (281, "H", 1, recording.sensor.max_count, True)
    with atomic_path(out) as tmp:
        tifffile.imwrite(
            tmp,
            pages(),
            shape=(total, *recording.camera.shape),
            dtype=recording.sensor.dtype,
            photometric="minisblack",
            compression="zlib",
            predictor=True,
            extratags=[max_sample],
        )
    return out.with_suffix(".toml"), out.with_name(out.stem + ".truth.json")
