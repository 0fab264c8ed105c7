"""Make the corpus of bad inputs in ``tests/data/bad/`` and its index ``cases.toml``.

Run from anywhere (``python tests/data/make_bad.py``); it rewrites the folder
from scratch. ``tests/hardening/test_bad_corpus.py`` checks that the committed
folder is exactly what this script makes, then runs every case through every
command its index entry names.

Images are written by hand from their specifications (PNG: ISO/IEC 15948,
stored deflate blocks; TIFF: TIFF 6.0 baseline, uncompressed strips), with the
standard library only, so that the bytes do not depend on an image library's
version and a case can cut or damage a file at a known place.

Each case has a kind, which says how the test hands its input to a command:

- ``experiment``: an experiment file, given with ``--experiment`` (``predict``,
  ``info``, ``measure``, ``analyze`` on the shipped sample recording;
  ``fit`` on the good radius series);
- ``recording``: a recording (folder or file) given as SOURCE;
- ``series``: a ``radius.csv`` given to ``dropkin fit`` (an experiment file beside it);
- ``liquids``: a liquid library, given with ``--liquids``;
- ``options``: no file; the case's ``options`` are bad option values, given with
  the good inputs;
- ``manifest``: a campaign manifest, given to ``dropkin batch``;
- ``catalogue``: a campaign's output folder, given to ``dropkin collapse``.

Fields of an index entry: ``kind``, ``input`` (path relative to ``bad/``; none
for ``options``), ``commands``, ``words`` (each must appear in the one-line
message), ``about`` (what is wrong), and optionally ``options`` (extra
arguments), ``exit`` (2 for click's usage errors; 1 otherwise) and ``xfail``
(a known bug, with its reason).
"""

from __future__ import annotations

import math
import shutil
import struct
import sys
import zlib
from pathlib import Path

HERE = Path(__file__).resolve().parent
BAD = HERE / "bad"

# ----------------------------------------------------------------- image writers


def _png_chunk(name: bytes, data: bytes) -> bytes:
    return struct.pack(">I", len(data)) + name + data + struct.pack(">I", zlib.crc32(name + data))


def png_bytes(rows: int, cols: int, *, depth: int = 8, value=None, sbit: int | None = None):
    """A grayscale PNG (colour type 0) of `depth` bits, filter 0, stored deflate blocks.

    `value(row, col)` gives each sample (default: a gentle ramp).
    """
    value = value or (lambda r, c: (40 + 3 * r + 2 * c) % (1 << depth))
    raw = bytearray()
    for r in range(rows):
        raw.append(0)  # filter type None
        for c in range(cols):
            v = int(value(r, c))
            raw += struct.pack(">H", v) if depth == 16 else bytes([v])
    ihdr = struct.pack(">IIBBBBB", cols, rows, depth, 0, 0, 0, 0)
    chunks = [_png_chunk(b"IHDR", ihdr)]
    if sbit is not None:
        chunks.append(_png_chunk(b"sBIT", bytes([sbit])))
    chunks.append(_png_chunk(b"IDAT", zlib.compress(bytes(raw), 0)))
    chunks.append(_png_chunk(b"IEND", b""))
    return b"\x89PNG\r\n\x1a\n" + b"".join(chunks)


def tiff_bytes(frames: int, rows: int, cols: int, *, value=None) -> bytes:
    """A little-endian baseline TIFF with `frames` uncompressed 8-bit gray pages."""
    value = value or (lambda k, r, c: (40 + 3 * r + 2 * c + k) % 256)
    pixels = [
        bytes(value(k, r, c) for r in range(rows) for c in range(cols)) for k in range(frames)
    ]
    n_tags = 9
    ifd_size = 2 + 12 * n_tags + 4
    out = bytearray(b"II*\x00" + struct.pack("<I", 8))
    offset = 8
    layout = []
    for k in range(frames):
        ifd_at = offset
        data_at = ifd_at + ifd_size
        offset = data_at + len(pixels[k])
        offset += offset % 2  # IFDs start on a word boundary
        layout.append((ifd_at, data_at))
    for k, (ifd_at, data_at) in enumerate(layout):
        out += b"\x00" * (ifd_at - len(out))
        following = layout[k + 1][0] if k + 1 < frames else 0
        tags = [
            (256, 4, 1, cols),  # ImageWidth (LONG)
            (257, 4, 1, rows),  # ImageLength
            (258, 3, 1, 8),  # BitsPerSample (SHORT)
            (259, 3, 1, 1),  # Compression: none
            (262, 3, 1, 1),  # PhotometricInterpretation: BlackIsZero
            (273, 4, 1, data_at),  # StripOffsets
            (277, 3, 1, 1),  # SamplesPerPixel
            (278, 4, 1, rows),  # RowsPerStrip
            (279, 4, 1, len(pixels[k])),  # StripByteCounts
        ]
        out += struct.pack("<H", n_tags)
        for tag, kind, count, val in tags:
            packed = struct.pack("<H", val) + b"\x00\x00" if kind == 3 else struct.pack("<I", val)
            out += struct.pack("<HHI", tag, kind, count) + packed
        out += struct.pack("<I", following)
        out += pixels[k]
    return bytes(out)


# ----------------------------------------------------------------- good texts

GOOD_EXPERIMENT = """\
# A consistent description (water drops in air, side view); cases change one thing.
[recording]
frame_rate = "100 kHz"
pixel_size = "10 um"

[setup]
geometry = "coalescence"
view = "side"

[liquid]
name = "water"
temperature = "20 degC"

[drops]
radius = "1 mm"
"""

GOOD_LIQUIDS = """\
# A valid library of one liquid; cases change one thing.
[liquid."bench-oil"]
description = "an oil as measured on the bench"
surface_tension = "20 mN/m"
viscosity = "50 mPa*s"
density = "960 kg/m^3"
temperature_min = "15 degC"
temperature_max = "30 degC"
source = "our own measurement"
"""

CSV_HEADER = "frame,time_s,since_contact_s,radius_m,radius_err_m,status"
_RATE = 100_000.0  # frames per second of the made-up series
_CONTACT = 5.2e-5  # contact between frames 5 and 6 (s)
_ROWS = 60


def good_series_rows() -> list[list[str]]:
    """Rows of a radius series that ``dropkin fit`` accepts: the inertial law of water.

    r = 1.1 (γR/ρ)^(1/4) τ^(1/2) for 1 mm water drops (γ = 72.74 mN/m,
    ρ = 998.2 kg/m^3; docs/physics.md §1), with a fixed ±0.5 % ripple instead of
    random noise so that the text is the same on every machine.
    """
    scale = 1.1 * (0.07274 * 1e-3 / 998.2) ** 0.25
    rows = []
    for k in range(_ROWS):
        t = k / _RATE
        tau = t - _CONTACT
        if tau <= 0:
            rows.append([str(k), repr(t), "", "", "", "before-contact"])
            continue
        r = scale * math.sqrt(tau) * (1 + 0.005 * math.sin(2.1 * k))
        rows.append([str(k), repr(t), repr(tau), repr(r), "1e-06", "ok"])
    return rows


def _csv(rows, header=CSV_HEADER) -> str:
    return "\n".join([header, *(",".join(r) for r in rows)]) + "\n"


def _edit(row_index: int, column: int, text: str) -> str:
    rows = good_series_rows()
    rows[row_index][column] = text
    return _csv(rows)


def _swap_times() -> str:
    rows = good_series_rows()
    rows[30][1], rows[31][1] = rows[31][1], rows[30][1]
    return _csv(rows)


def _duplicate_time() -> str:
    rows = good_series_rows()
    rows[31][1] = rows[30][1]
    return _csv(rows)


# ----------------------------------------------------------------- the cases

CASES: list[dict] = []


def case(name, kind, *, files, commands, words, about, **extra):
    """Add one case: `files` maps paths (relative to bad/) to bytes or str."""
    entry = {"kind": kind, "commands": commands, "words": words, "about": about, **extra}
    CASES.append({"name": name, "files": files, "entry": entry})


REC = ["info", "measure", "analyze"]  # commands that read a recording
EXP = [*REC, "predict", "fit"]  # commands that read an experiment file


def _experiment(name, text, *, words, about, commands=EXP, file_named=True, **extra):
    path = f"experiments/{name}.toml"
    case(
        name,
        "experiment",
        files={path: text},
        input=path,
        commands=commands,
        words=[f"{name}.toml", *words] if file_named else words,
        about=about,
        **extra,
    )


def _replace(old: str, new: str) -> str:
    assert old in GOOD_EXPERIMENT, old
    return GOOD_EXPERIMENT.replace(old, new)


def experiment_cases():
    _experiment(
        "malformed_toml",
        GOOD_EXPERIMENT.replace('pixel_size = "10 um"', 'pixel_size = "10 um'),
        words=["not valid TOML"],
        about="an unclosed string",
    )
    _experiment(
        "not_utf8",
        GOOD_EXPERIMENT.encode("utf-8").replace(b"water", b"w\xe4ter"),
        words=["UTF-8"],
        about="Latin-1 bytes",
    )
    _experiment(
        "unknown_key",
        _replace('pixel_size = "10 um"', 'pixel_size = "10 um"\nfram_rate = "100 kHz"'),
        words=["recording.fram_rate"],
        about="a misspelt key",
    )
    _experiment(
        "unknown_section",
        GOOD_EXPERIMENT + '\n[camera]\nmodel = "fast"\n',
        words=["camera"],
        about="a section the format does not have",
    )
    _experiment(
        "bare_number",
        _replace('frame_rate = "100 kHz"', "frame_rate = 100000"),
        words=["recording.frame_rate", "Hz"],
        about="a frame rate without a unit",
    )
    _experiment(
        "wrong_unit",
        _replace('frame_rate = "100 kHz"', 'frame_rate = "72 m/s"'),
        words=["recording.frame_rate", "72 m/s"],
        about="a speed where a frame rate belongs",
    )
    _experiment(
        "unparsable_quantity",
        _replace('pixel_size = "10 um"', 'pixel_size = "ten microns"'),
        words=["recording.pixel_size"],
        about="words where a length belongs",
    )
    _experiment(
        "negative_pixel_size",
        _replace('pixel_size = "10 um"', 'pixel_size = "-10 um"'),
        words=["recording.pixel_size", "positive"],
        about="a negative pixel size",
    )
    _experiment(
        "zero_frame_rate",
        _replace('frame_rate = "100 kHz"', 'frame_rate = "0 Hz"'),
        words=["recording.frame_rate", "positive"],
        about="a frame rate of zero",
    )
    _experiment(
        "nan_viscosity",
        _replace('temperature = "20 degC"', 'temperature = "20 degC"\nviscosity = "nan mPa*s"'),
        words=["liquid.viscosity", "finite"],
        about="NaN in a quantity",
    )
    _experiment(
        "inf_density",
        _replace('temperature = "20 degC"', 'temperature = "20 degC"\ndensity = "inf kg/m^3"'),
        words=["liquid.density", "finite"],
        about="infinity in a quantity",
    )
    _experiment(
        "toml_nan",
        _replace('radius = "1 mm"', "radius = nan"),
        words=["drops.radius"],
        about="a bare TOML nan",
    )
    _experiment(
        "below_absolute_zero",
        _replace('temperature = "20 degC"', 'temperature = "-300 degC"'),
        words=["liquid.temperature"],
        about="a temperature below 0 K",
    )
    _experiment(
        "wrong_type_table",
        _replace('[drops]\nradius = "1 mm"', 'drops = "1 mm"'),
        words=["drops"],
        about="a section written as a plain value",
    )
    _experiment(
        "wrong_type_frame",
        _replace('pixel_size = "10 um"', 'pixel_size = "10 um"\nfirst_frame = "3"'),
        words=["recording.first_frame"],
        about="a frame index written as text",
    )
    _experiment(
        "wrong_type_boolean",
        _replace('pixel_size = "10 um"', "pixel_size = true"),
        words=["recording.pixel_size"],
        about="a boolean where a length belongs",
    )
    _experiment(
        "fraction_out_of_range",
        _replace('name = "water"', 'name = "glycerol-water"\nglycerol_mass_fraction = 1.5'),
        words=["liquid.glycerol_mass_fraction"],
        about="a mass fraction above 1",
    )
    _experiment(
        "frames_reversed",
        _replace('pixel_size = "10 um"', 'pixel_size = "10 um"\nfirst_frame = 9\nlast_frame = 3'),
        words=["recording.last_frame"],
        about="last frame before the first",
    )
    _experiment(
        "geometry_unknown",
        _replace('geometry = "coalescence"', 'geometry = "bouncing"'),
        words=["setup.geometry", "bouncing"],
        about="a geometry dropkin does not know",
    )
    _experiment(
        "contact_angle_bare",
        _replace('geometry = "coalescence"', 'geometry = "sessile-coalescence"').replace(
            'radius = "1 mm"', 'radius = "1 mm"\ncontact_angle = 40'
        ),
        words=["drops.contact_angle", "40"],
        about="sessile drops whose contact angle has no unit (degrees or radians?)",
    )
    _experiment(
        "view_unknown",
        _replace('view = "side"', 'view = "top"'),
        words=["setup.view", "top"],
        about="a view dropkin does not know",
    )
    _experiment(
        "liquid_unknown",
        _replace('name = "water"', 'name = "unobtainium"'),
        words=["unobtainium"],
        commands=["analyze", "predict", "fit"],
        about="a liquid name not in the library (the commands that need its values)",
    )
    _experiment(
        "liquid_out_of_range",
        _replace('temperature = "20 degC"', 'temperature = "150 degC"'),
        words=["liquid.temperature"],
        commands=["analyze", "predict", "fit"],
        about="water above its correlation's range",
    )
    _experiment(
        "missing_recording_section",
        GOOD_EXPERIMENT.replace('[recording]\nframe_rate = "100 kHz"\npixel_size = "10 um"\n', ""),
        words=["recording.frame_rate", "experiment file"],
        commands=["measure", "analyze"],  # info describes the frames and says it is missing
        file_named=False,  # the recording lacks a frame rate; the message names it
        about="no [recording] section: the PNG frames have no frame rate of their own",
    )
    _experiment(
        "missing_setup_section",
        GOOD_EXPERIMENT.replace('[setup]\ngeometry = "coalescence"\nview = "side"\n', ""),
        words=["setup.geometry"],
        commands=["measure", "analyze"],
        about="no [setup] section: measuring needs the geometry",
    )
    _experiment(
        "missing_liquid_section",
        GOOD_EXPERIMENT.replace('[liquid]\nname = "water"\ntemperature = "20 degC"\n', ""),
        words=["liquid"],
        commands=["analyze", "predict", "fit"],
        about="no [liquid] section: the fit needs the liquid's values",
    )
    _experiment(
        "before_contact_only",
        _replace('pixel_size = "10 um"', 'pixel_size = "10 um"\nlast_frame = 1'),
        words=["no frame shows the drops in contact", "radius series written"],
        commands=["measure", "analyze"],
        file_named=False,  # the recording is at fault: its kept frames show no contact
        keeps=["radius.csv", "measure.json", "overlays/*.png", "datapackage.json"],
        about="the first two frames only, both before contact: the series is kept, exit 1",
    )


def recording_cases():
    good = GOOD_EXPERIMENT

    def folder(name, frames: dict, *, words, about, commands=REC, **extra):
        files = {f"recordings/{name}/{k}": v for k, v in frames.items()}
        files[f"recordings/{name}/experiment.toml"] = good
        case(
            name,
            "recording",
            files=files,
            input=f"recordings/{name}",
            commands=commands,
            words=words,
            about=about,
            **extra,
        )

    def single(name, filename, data, *, words, about, commands=REC, **extra):
        stem = filename.rsplit(".", 1)[0]
        case(
            name,
            "recording",
            files={f"recordings/{filename}": data, f"recordings/{stem}.toml": good},
            input=f"recordings/{filename}",
            commands=commands,
            words=[filename, *words],
            about=about,
            **extra,
        )

    frame = png_bytes(24, 32)
    folder(
        "empty_folder",
        {"notes.txt": "no frames here\n"},
        words=["empty_folder", "no frames"],
        about="a folder with an experiment file and no frames",
    )
    folder(
        "mixed_sizes",
        {"f_0.png": frame, "f_1.png": frame, "f_2.png": png_bytes(20, 32), "f_3.png": frame},
        words=["f_2.png", "frame 2", "24 x 32"],
        about="one frame smaller than the others",
    )
    folder(
        "mixed_bit_depths",
        {"f_0.png": frame, "f_1.png": png_bytes(24, 32, depth=16), "f_2.png": frame},
        words=["f_1.png", "frame 1", "uint16"],
        about="an 8-bit recording with one 16-bit frame",
    )
    twelve = png_bytes(24, 32, depth=16, sbit=12)
    folder(
        "mixed_significant_bits",
        {"f_0.png": twelve, "f_1.png": png_bytes(24, 32, depth=16, sbit=10), "f_2.png": twelve},
        words=["f_1.png", "frame 1"],
        commands=["info"],
        about="16-bit frames whose sBIT chunks say 12 and 10 significant bits",
    )
    folder(
        "zero_byte_png",
        {"f_0.png": frame, "f_1.png": b"", "f_2.png": frame},
        words=["f_1.png", "frame 1", "empty"],
        about="a frame file of 0 bytes",
    )
    folder(
        "truncated_png",
        {"f_0.png": frame, "f_1.png": frame[: len(frame) // 2], "f_2.png": frame},
        words=["f_1.png", "frame 1", "truncated"],
        about="a frame cut in half",
    )
    damaged = bytearray(frame)
    start = damaged.index(b"IDAT") + 4
    damaged[start : start + 40] = b"\xff" * 40  # the deflate header and first block
    folder(
        "damaged_png_data",
        {"f_0.png": frame, "f_1.png": bytes(damaged), "f_2.png": frame},
        words=["f_1.png", "frame 1"],
        commands=["measure", "analyze"],
        about="a frame whose header and end are intact but whose pixel data are not",
    )
    folder(
        "text_as_tif_frame",
        {"f_0.tif": tiff_bytes(1, 24, 32), "f_1.tif": "frame 1 was not saved\n"},
        words=["f_1.tif", "frame 1"],
        about="a text file renamed .tif among the frames",
    )
    folder(
        "no_drops",
        {f"f_{k}.png": png_bytes(24, 32, value=lambda r, c: 200) for k in range(3)},
        words=["no_drops", "drops were not found"],
        commands=["measure", "analyze"],
        about="frames of an even grey: nothing to measure",
    )
    stack = tiff_bytes(3, 24, 32)
    single(
        "zero_byte_tiff",
        "zero_byte.tif",
        b"",
        words=[],
        about="a TIFF stack of 0 bytes",
    )
    single(
        "truncated_tiff",
        "truncated.tif",
        stack[: len(stack) - 500],
        words=["truncated"],
        about="a 3-frame TIFF stack with its last 500 bytes missing",
    )
    single(
        "text_as_tif",
        "text_as.tif",
        "this is a lab note, not an image\n",
        words=[],
        about="a text file renamed .tif",
    )
    single(
        "unsupported_suffix",
        "clip.xyz",
        stack,
        words=["not a supported recording", ".xyz"],
        about="a recording file of a kind dropkin does not read",
    )
    single(
        "text_as_video",
        "text_as.avi",
        "this is not a video either\n",
        words=[],
        about="a text file renamed .avi",
    )


def cine_bytes(frames: int, rows: int, cols: int, *, mark: bytes = b"ST") -> bytes:
    """A gray 16-bit .cine file by the format's layout: file header, bitmap header,
    a setup block that ends after its Length field, the image offsets, the images
    (each behind an 8-byte annotation: its size, then the image's size)."""
    setup = bytes(140) + mark + struct.pack("<H", 144)
    table_at = 44 + 40 + len(setup)
    image = b"".join(
        struct.pack("<H", (40 + r + c) % 4096) for r in range(rows) for c in range(cols)
    )
    first = table_at + 8 * frames
    offsets = [first + k * (8 + len(image)) for k in range(frames)]
    header = struct.pack(
        "<2sHHHiIiIIIIQ", b"CI", 44, 0, 1, 0, frames, 0, frames, 44, 84, table_at, 0
    )
    bitmap = struct.pack("<IiiHHIIiiII", 40, cols, rows, 1, 16, 0, len(image), 0, 0, 0, 0)
    body = b"".join(struct.pack("<II", 8, len(image)) + image for _ in range(frames))
    return header + bitmap + setup + struct.pack(f"<{frames}q", *offsets) + body


def cih_text(frames: int, rows: int, cols: int) -> str:
    """A .cih header of a gray 8-bit .mraw recording."""
    return (
        "#Camera Information Header\nRecord Rate(fps) : 20000\n"
        f"Total Frame : {frames}\nStart Frame : -1\nSave Step : 1\n"
        f"Image Width : {cols}\nImage Height : {rows}\nColor Type : Mono\n"
        "Color Bit : 8\nFile Format : MRaw\nEffectiveBit Depth : 8\n"
    )


def camera_cases():
    good = GOOD_EXPERIMENT

    def camera(name, files: dict, given: str, *, words, about):
        files = {f"recordings/{k}": v for k, v in files.items()}
        files[f"recordings/{given.rsplit('.', 1)[0]}.toml"] = good
        case(
            name,
            "recording",
            files=files,
            input=f"recordings/{given}",
            commands=REC,
            words=words,
            about=about,
        )

    whole = cine_bytes(3, 8, 10)
    camera(
        "cine_cut",
        {"cine_cut.cine": whole[:-50]},
        "cine_cut.cine",
        words=["cine_cut.cine", "truncated", "frame 2"],
        about="a .cine file cut inside its last image",
    )
    camera(
        "cine_no_setup",
        {"cine_no_setup.cine": cine_bytes(3, 8, 10, mark=b"??")},
        "cine_no_setup.cine",
        words=["cine_no_setup.cine", "no setup block", "OffSetup"],
        about="a .cine file whose setup block lacks its 'ST' mark",
    )
    camera(
        "mraw_cut",
        {"mraw_cut.cih": cih_text(4, 6, 8), "mraw_cut.mraw": bytes(6 * 8 * 2 + 20)},
        "mraw_cut.cih",
        words=["mraw_cut.cih", "mraw_cut.mraw", "truncated", "Total Frame"],
        about="a .cih header claiming 4 frames for a .mraw file of 2.4",
    )
    camera(
        "cih_no_width",
        {
            "cih_no_width.cih": cih_text(2, 6, 8).replace("Image Width : 8\n", ""),
            "cih_no_width.mraw": bytes(2 * 6 * 8),
        },
        "cih_no_width.mraw",
        words=["cih_no_width.cih", "Image Width", "missing"],
        about="a .cih header without its image width, the .mraw given",
    )
    camera(
        "cihx_broken",
        {"cihx_broken.cihx": "<cih><frameInfo><totalFrame>2</cih>", "cihx_broken.mraw": bytes(96)},
        "cihx_broken.cihx",
        words=["cihx_broken.cihx", "not well-formed XML"],
        about="a .cihx header whose XML is cut",
    )


def series_cases():
    def series(name, text, *, words, about, experiment=GOOD_EXPERIMENT, **extra):
        files = {f"series/{name}/radius.csv": text}
        if experiment is not None:
            files[f"series/{name}/experiment.toml"] = experiment
        case(
            name,
            "series",
            files=files,
            input=f"series/{name}/radius.csv",
            commands=["fit"],
            words=[f"{name}/radius.csv", *words],
            about=about,
            **extra,
        )

    rows = good_series_rows()
    cut = [",".join(r[:5]) for r in rows]
    series(
        "missing_column",
        "\n".join([CSV_HEADER.rsplit(",", 1)[0], *cut]) + "\n",
        words=["columns", "status"],
        about="the status column left out",
    )
    series(
        "wrong_header",
        _csv(rows, header="frame,t,since_contact,r,r_err,status"),
        words=["columns"],
        about="columns named in other words",
    )
    series(
        "reordered_columns",
        _csv(
            [[r[0], r[1], r[2], r[4], r[3], r[5]] for r in rows],
            header="frame,time_s,since_contact_s,radius_err_m,radius_m,status",
        ),
        words=["columns"],
        about="radius and its error swapped in the header",
    )
    series("empty_file", "", words=["empty"], about="a file of 0 bytes")
    series(
        "only_header",
        CSV_HEADER + "\n",
        words=["no rows"],
        about="a header and nothing else",
    )
    series(
        "nan_radius",
        _edit(30, 3, "nan"),
        words=["line 32", "radius_m"],
        about="'nan' written where a radius belongs (the contract leaves such cells empty)",
    )
    series(
        "inf_radius",
        _edit(30, 3, "inf"),
        words=["line 32", "radius_m"],
        about="an infinite radius",
    )
    series(
        "nan_time",
        _edit(30, 1, "nan"),
        words=["line 32", "time_s"],
        about="a frame without a time",
    )
    series(
        "empty_time",
        _edit(30, 1, ""),
        words=["line 32", "time_s"],
        about="a frame whose time cell is empty",
    )
    series(
        "negative_radius",
        _edit(30, 3, "-0.0002"),
        words=["line 32", "radius_m"],
        about="a negative radius",
    )
    series(
        "negative_error",
        _edit(30, 4, "-1e-06"),
        words=["line 32", "radius_err_m"],
        about="a negative uncertainty",
    )
    series(
        "ok_without_radius",
        _edit(30, 3, ""),
        words=["line 32", "ok"],
        about="a frame with status ok and no radius",
    )
    series(
        "unsorted_times",
        _swap_times(),
        words=["line 33", "time_s"],
        about="two frames' times swapped",
    )
    series(
        "duplicated_times",
        _duplicate_time(),
        words=["line 33", "time_s"],
        about="two frames with the same time",
    )
    series(
        "non_numeric_cell",
        _edit(30, 3, "0.2 mm"),
        words=["line 32", "radius_m", "0.2 mm"],
        about="a radius with a unit in the cell",
    )
    series(
        "non_integer_frame",
        _edit(30, 0, "30.5"),
        words=["line 32", "frame"],
        about="a fractional frame number",
    )
    series(
        "wrong_status",
        _edit(30, 5, "good"),
        words=["line 32", "good"],
        about="a status word the format does not have",
    )
    series(
        "short_row",
        _csv(rows[:30] + [rows[30][:4]] + rows[31:]),
        words=["line 32", "fields"],
        about="a row with four cells",
    )
    series(
        "not_utf8_csv",
        _csv(rows).encode("utf-8").replace(b"before-contact", b"vor-\xfc", 1),
        words=["cannot be read"],
        about="Latin-1 bytes in the CSV",
    )
    series(
        "no_experiment",
        _csv(rows),
        experiment=None,
        words=["no experiment file"],
        about="a good series with no experiment file to describe its sample",
    )

    def beside(name, measure_json, *, words, about):
        """A good series and experiment beside a bad ``measure.json``."""
        case(
            name,
            "series",
            files={
                f"series/{name}/radius.csv": _csv(rows),
                f"series/{name}/experiment.toml": GOOD_EXPERIMENT,
                f"series/{name}/measure.json": measure_json,
            },
            input=f"series/{name}/radius.csv",
            commands=["fit"],
            words=[f"{name}/measure.json", *words],
            about=about,
        )

    beside(
        "broken_measure_json",
        '{"contact_time_s": 5.2e-05,',
        words=["JSON"],
        about="a good series beside a measure.json cut short",
    )
    beside(
        "measure_json_list",
        "[5.2e-05]\n",
        words=["JSON object"],
        about="measure.json holding a list",
    )
    beside(
        "measure_json_contact_text",
        '{"contact_time_s": "soon"}\n',
        words=["contact_time_s", "soon"],
        about="a contact instant written as a word",
    )
    beside(
        "measure_json_bracket_reversed",
        '{"contact_time_s": 5.2e-05, "contact_bracket_s": [6e-05, 5e-05]}\n',
        words=["contact_bracket_s"],
        about="a contact bracket that ends before it starts",
    )
    beside(
        "measure_json_negative_radius",
        '{"contact_time_s": 5.2e-05, "drop_radius_m": -0.001}\n',
        words=["drop_radius_m"],
        about="a negative drop radius",
    )
    beside(
        "measure_json_geometry",
        '{"contact_time_s": 5.2e-05, "geometry": "bouncing"}\n',
        words=["geometry", "bouncing"],
        about="a geometry dropkin does not know",
    )
    beside(
        "measure_json_provenance",
        '{"contact_time_s": 5.2e-05, "provenance": {"experiment_file": 7}}\n',
        words=["provenance.experiment_file"],
        about="an experiment file named by a number",
    )


def liquids_cases():
    def library(name, text, *, words, about, **extra):
        name = f"library_{name}"
        path = f"liquids/{name}.toml"
        case(
            name,
            "liquids",
            files={path: text},
            input=path,
            commands=["liquids", "predict"],
            words=[f"{name}.toml", *words],
            about=about,
            **extra,
        )

    def edit(old, new):
        assert old in GOOD_LIQUIDS, old
        return GOOD_LIQUIDS.replace(old, new)

    library(
        "malformed",
        edit('density = "960 kg/m^3"', "density = "),
        words=["not valid TOML"],
        about="a key without a value",
    )
    library(
        "unknown_key",
        edit('density = "960 kg/m^3"', 'density = "960 kg/m^3"\ndensty = "960 kg/m^3"'),
        words=['liquid."bench-oil".densty'],
        about="a misspelt key",
    )
    library(
        "unknown_section",
        GOOD_LIQUIDS + '\n[gas."argon"]\nviscosity = "0.02 mPa*s"\n',
        words=["gas"],
        about="a section other than [liquid.NAME]",
    )
    library(
        "bare_number",
        edit('viscosity = "50 mPa*s"', "viscosity = 0.05"),
        words=['liquid."bench-oil".viscosity', "Pa*s"],
        about="a viscosity without a unit",
    )
    library(
        "wrong_unit",
        edit('density = "960 kg/m^3"', 'density = "960 kg/m^2"'),
        words=['liquid."bench-oil".density'],
        about="an areal density where a density belongs",
    )
    library(
        "negative",
        edit('viscosity = "50 mPa*s"', 'viscosity = "-50 mPa*s"'),
        words=['liquid."bench-oil".viscosity', "positive"],
        about="a negative viscosity",
    )
    library(
        "nan",
        edit('surface_tension = "20 mN/m"', 'surface_tension = "nan mN/m"'),
        words=['liquid."bench-oil".surface_tension'],
        about="NaN surface tension",
    )
    library(
        "missing_required",
        edit('density = "960 kg/m^3"\n', ""),
        words=['liquid."bench-oil".density', "missing"],
        about="no density",
    )
    library(
        "reversed_range",
        edit('temperature_min = "15 degC"', 'temperature_min = "45 degC"'),
        words=['liquid."bench-oil".temperature_min'],
        about="a temperature range that ends before it starts",
    )
    library(
        "half_range",
        edit('temperature_max = "30 degC"\n', ""),
        words=['liquid."bench-oil"', "temperature_max"],
        about="a range with one end",
    )
    library(
        "duplicate_name",
        GOOD_LIQUIDS + GOOD_LIQUIDS.replace('"bench-oil"', '"Bench-Oil"').split("\n", 1)[1],
        words=["Bench-Oil", "twice"],
        about="two entries whose names differ only in case",
    )
    library(
        "wrong_type",
        edit('source = "our own measurement"', "source = 42"),
        words=['liquid."bench-oil".source'],
        about="a number where a text belongs",
    )
    library(
        "entry_not_table",
        '[liquid]\n"bench-oil" = "50 mPa*s"\n',
        words=['liquid."bench-oil"', "table"],
        about="an entry written as a plain value",
    )


def option_cases():
    def options(name, args, commands, *, words, about, **extra):
        case(
            name,
            "options",
            files={},
            commands=commands,
            words=words,
            about=about,
            options=args,
            **extra,
        )

    options(
        "roi_outside_frame",
        ["--roi", "0:5000,0:5000"],
        ["measure", "analyze"],
        words=["--roi", "0:5000,0:5000"],
        about="a region of interest larger than the frame",
    )
    options(
        "roi_reversed",
        ["--roi", "300:100,50:450"],
        ["measure", "analyze"],
        words=["--roi", "300:100"],
        about="a region whose rows run backwards",
    )
    options(
        "roi_not_a_region",
        ["--roi", "top-left"],
        ["measure", "analyze"],
        words=["--roi", "top-left"],
        about="words where a region belongs",
    )
    options(
        "threshold_above_range",
        ["--threshold", "1.5"],
        ["measure", "analyze"],
        words=["--threshold", "1.5"],
        exit=2,
        about="an edge level beyond the range 0.05-0.95 (a click usage error)",
    )
    options(
        "threshold_nan",
        ["--threshold", "nan"],
        ["measure", "analyze"],
        words=["--threshold", "nan"],
        exit=2,
        about="an edge level of NaN",
    )
    options(
        "frame_rate_wrong_unit",
        ["--frame-rate", "72 m/s"],
        ["info", "measure", "analyze", "predict"],
        words=["--frame-rate", "72 m/s"],
        exit=2,
        about="a speed given as the frame rate",
    )
    options(
        "pixel_size_negative",
        ["--pixel-size", "-5 um"],
        ["info", "measure", "analyze", "predict"],
        words=["--pixel-size", "positive"],
        exit=2,
        about="a negative pixel size on the command line",
    )
    options(
        "pixel_size_infinite",
        ["--pixel-size", "inf um"],
        ["info", "measure", "analyze", "predict"],
        words=["--pixel-size", "finite"],
        exit=2,
        about="an infinite pixel size on the command line",
    )
    options(
        "background_wrong_size",
        ["--background", "{bad}/recordings/mixed_sizes/f_0.png"],
        ["measure", "analyze"],
        words=["--background", "24, 32"],
        about="a background image that is not the size of the frames",
    )
    options(
        "background_not_an_image",
        ["--background", "{bad}/recordings/text_as_tif_frame/f_1.tif"],
        ["measure", "analyze"],
        words=["f_1.tif"],
        about="a text file given as the background image",
    )
    options(
        "t0_not_a_time",
        ["--t0", "soon"],
        ["fit"],
        words=["--t0", "soon"],
        exit=2,
        about="a contact instant that is not a time",
    )
    options(
        "t0_nan",
        ["--t0", "nan s"],
        ["fit"],
        words=["--t0", "finite"],
        exit=2,
        about="a contact instant of NaN",
    )
    options(
        "t0_after_the_data",
        ["--t0", "1 s"],
        ["fit"],
        words=["radius.csv", "before contact"],
        keeps=[
            "fit.json",
            "report.html",
            "plots/radius.png",
            "datapackage.json",
        ],
        about="a contact instant after the last frame: fit.json records the failed verdict, "
        "the report says why",
    )
    options(
        "glycerol_fraction_above_one",
        ["--liquid", "glycerol-water", "--glycerol-mass-fraction", "1.5"],
        ["predict", "liquids"],
        words=["glycerol_mass_fraction", "1.5"],
        about="a mass fraction above 1",
    )
    options(
        "liquid_unknown_name",
        ["--liquid", "unobtainium"],
        ["predict", "liquids"],
        words=["unobtainium"],
        about="a liquid the library does not hold",
    )
    options(
        "temperature_out_of_range",
        ["--liquid", "water", "--temperature", "150 degC"],
        ["predict", "liquids"],
        words=["temperature", "150"],
        about="water above its correlation's range",
    )
    options(
        "drop_radius_zero",
        ["--drop-radius", "0 m"],
        ["predict"],
        words=["--drop-radius", "positive"],
        exit=2,
        about="drops of no size",
    )
    options(
        "contact_angle_nan",
        ["--liquid", "water", "--geometry", "spreading", "--contact-angle", "nan"],
        ["predict"],
        words=["--contact-angle", "nan"],
        exit=2,
        about="a contact angle of NaN",
    )
    small = ["--size", "32x48", "--frames", "8"]  # contact at frame 5 by default
    for name, args, words, code, about in [
        ("synth_zero_frame_rate", ["--frame-rate", "0 Hz"], ["--frame-rate"], 2, "no frame rate"),
        ("synth_negative_pixel", ["--pixel-size", "-10 um"], ["--pixel-size"], 2, "pixel < 0"),
        ("synth_zero_drop", ["--drop-radius", "0 mm"], ["--drop-radius"], 2, "no drop"),
        ("synth_negative_viscosity", ["--viscosity", "-1 mPa*s"], ["--viscosity"], 2, "η < 0"),
        ("synth_power_without_exponent", ["--law", "power"], ["--law"], 1, "a power law, no n"),
        (
            "synth_nan_exponent",
            ["--law", "power", "--exponent", "nan", "--prefactor", "0.01"],
            ["--exponent"],
            2,
            "a NaN exponent",
        ),
        ("synth_nan_contact_frame", ["--contact-frame", "nan"], ["--contact-frame"], 2, "NaN"),
        (
            "synth_contact_after_last_frame",
            ["--contact-frame", "50"],
            ["--contact-frame", "50"],
            1,
            "contact after the last of 8 frames",
        ),
    ]:
        options(name, [*args, *small], ["synth"], words=words, exit=code, about=about)
    options(
        "synth_size_too_small",
        ["--size", "4x4"],
        ["synth"],
        words=["--size", "4x4"],
        exit=2,
        about="frames smaller than 8 x 8",
    )


# ----------------------------------------------------------------- writing


def _toml_string(text: str) -> str:
    return '"' + text.replace("\\", "\\\\").replace('"', '\\"') + '"'


def _toml_value(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, str):
        return _toml_string(value)
    return "[" + ", ".join(_toml_value(v) for v in value) + "]"


def index_text() -> str:
    lines = [
        "# The corpus of bad inputs, one table per case. Made by tests/data/make_bad.py:",
        "# edit the script, not this file. Fields are described in the script's docstring.",
        "",
    ]
    order = ("kind", "input", "commands", "options", "words", "exit", "keeps", "about", "xfail")
    for item in CASES:
        lines.append(f"[case.{item['name']}]")
        entry = item["entry"]
        assert set(entry) <= set(order), sorted(set(entry) - set(order))
        for key in order:
            if key in entry:
                lines.append(f"{key} = {_toml_value(entry[key])}")
        lines.append("")
    return "\n".join(lines)


def _manifest(name, text, *, words, about, **extra):
    path = f"manifests/{name}.toml"
    case(
        name,
        "manifest",
        files={path: text},
        input=path,
        commands=["batch"],
        words=[f"{name}.toml", *words],
        about=about,
        **extra,
    )


def campaign_cases():
    """Bad manifests for ``dropkin batch``; bad output folders for ``dropkin collapse``."""
    one = '[[recordings]]\npath = "."\n'
    _manifest(
        "manifest_malformed",
        "[[recordings]\n",
        words=["not valid TOML"],
        about="an unclosed table header",
    )
    _manifest(
        "manifest_empty",
        "",
        words=["recordings", "lists no recordings"],
        about="no recordings listed",
    )
    _manifest(
        "manifest_unknown_key",
        one + "speed = 3\n",
        words=["recordings[1].speed"],
        about="a key the format does not have",
    )
    _manifest(
        "manifest_escapes",
        '[[recordings]]\npath = "../../../elsewhere"\n',
        words=["recordings[1].path", "leads out"],
        about="a recording outside the manifest's folder",
    )
    _manifest(
        "manifest_absolute",
        '[[recordings]]\npath = "/tmp/rec"\n',
        words=["recordings[1].path", "absolute"],
        about="an absolute path",
    )
    _manifest(
        "manifest_glob_escapes",
        '[[recordings]]\nglob = "../*"\n',
        words=["recordings[1].glob", "leads out"],
        about="a glob out of the folder",
    )
    _manifest(
        "manifest_missing",
        '[[recordings]]\npath = "no-such-recording"\n',
        words=["recordings[1].path", "does not exist"],
        about="a recording not there",
    )
    _manifest(
        "manifest_bare_number",
        one + "recording = { frame_rate = 20000 }\n",
        words=["recordings[1].recording.frame_rate", "Hz"],
        about="a frame rate without a unit",
    )
    _manifest(
        "manifest_bad_threshold",
        "[shared]\nanalysis = { threshold = 7 }\n" + one,
        words=["shared.analysis.threshold"],
        about="an edge level outside 0.05-0.95",
    )
    _manifest(
        "manifest_same_label",
        one + one,
        words=["recordings[2].label"],
        about="two recordings with one label",
    )
    _manifest(
        "manifest_path_and_glob",
        one + 'glob = "*"\n',
        words=["recordings[1]", "either path or glob"],
        about="both path and glob",
    )
    for name, blob, about in (
        ("catalogue_garbage", b"not a database, just text\n" * 40, "text named catalogue.sqlite"),
        ("catalogue_empty", b"", "an empty catalogue.sqlite"),
    ):
        case(
            name,
            "catalogue",
            files={f"catalogues/{name}/catalogue.sqlite": blob},
            input=f"catalogues/{name}",
            commands=["collapse"],
            words=[f"{name}/catalogue.sqlite", "results catalogue"],
            about=about,
        )
    case(
        "catalogue_missing",
        "catalogue",
        files={"catalogues/catalogue_missing/README.txt": "A folder with no catalogue.\n"},
        input="catalogues/catalogue_missing",
        commands=["collapse"],
        words=["catalogue_missing", "no results catalogue"],
        about="a folder that dropkin batch did not write",
    )


def build() -> dict[str, bytes]:
    """Every file of the corpus, by path relative to ``bad/``."""
    CASES.clear()
    experiment_cases()
    recording_cases()
    camera_cases()
    series_cases()
    liquids_cases()
    option_cases()
    campaign_cases()
    names = [c["name"] for c in CASES]
    duplicates = {n for n in names if names.count(n) > 1}
    assert not duplicates, duplicates
    out: dict[str, bytes] = {}
    for item in CASES:
        for path, data in item["files"].items():
            blob = data.encode("utf-8") if isinstance(data, str) else bytes(data)
            assert out.get(path, blob) == blob, f"two cases write {path} differently"
            out[path] = blob
    out["cases.toml"] = index_text().encode("utf-8")
    return out


def write(target: Path = BAD) -> int:
    """Write the corpus into `target` (emptied first); return its size in bytes."""
    files = build()
    if target.exists():
        shutil.rmtree(target)
    for rel, blob in files.items():
        path = target / rel
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_bytes(blob)
    return sum(len(b) for b in files.values())


if __name__ == "__main__":
    size = write(Path(sys.argv[1]) if len(sys.argv) > 1 else BAD)
    print(f"{len(CASES)} cases, {size} bytes, in {BAD if len(sys.argv) < 2 else sys.argv[1]}")
