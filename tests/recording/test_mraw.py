"""The .mraw + .cih/.cihx reader against pyMRAW, an independent reader (and writer).

8- and 16-bit recordings are written by pyMRAW's own ``save_mraw`` (frames and
.cih header); packed 12-bit frames, .cihx headers and headers with a save step
are written here in tmp_path and read by pyMRAW's ``load_video`` as well as by
dropkin. Pixels, frame count, bit depth and the header's rates are compared.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest

from dropkin.errors import RecordingError
from dropkin.recording import open_recording
from dropkin.recording._camera import pack12

with warnings.catch_warnings():
    warnings.simplefilter("ignore")
    pymraw = pytest.importorskip("pyMRAW")

CIH = """#Camera Information Header
Record Rate(fps) : {rate}
Shutter Speed(s) : 1/{rate}
Total Frame : {count}
Original Total Frame : {count}
Start Frame : {start}
Correct Trigger Frame : 0
Save Step : {step}
Image Width : {cols}
Image Height : {rows}
Color Type : Mono
Color Bit : {bits}
File Format : MRaw
EffectiveBit Depth : 12
EffectiveBit Side : Lower
"""

CIHX = """<?xml version="1.0" encoding="utf-8"?>
<cih>
<fileInfo><date>2024/06/01</date></fileInfo>
<deviceInfo><deviceName>test</deviceName></deviceInfo>
<basicInfo><comment>written by the tests</comment></basicInfo>
<recordInfo><recordRate>{rate}</recordRate><shutterSpeed>{shutter}</shutterSpeed></recordInfo>
<frameInfo><totalFrame>{count}</totalFrame><recordedFrame>{count}</recordedFrame>
<startFrame>{start}</startFrame><skipFrame>{step}</skipFrame></frameInfo>
<imageDataInfo><resolution><width>{cols}</width><height>{rows}</height></resolution>
<colorInfo><type>Mono</type><bit>{bits}</bit></colorInfo>
<effectiveBit><depth>12</depth><side>Lower</side></effectiveBit></imageDataInfo>
<imageFileInfo><fileFormat>MRaw</fileFormat></imageFileInfo>
</cih>
"""


def write_mraw(folder, frames, *, bits=12, rate=60000, step=1, start=0, xml=False):
    """The frames as .mraw (packed when `bits` is 12) with a .cih or .cihx header."""
    count, rows, cols = frames.shape
    data = pack12(frames.ravel()) if bits == 12 else frames.astype(f"<u{bits // 8}").tobytes()
    (folder / "run.mraw").write_bytes(data)
    fields = dict(
        rate=rate,
        shutter=1 / rate,
        count=count,
        start=start,
        step=step,
        cols=cols,
        rows=rows,
        bits=bits,
    )
    header = folder / ("run.cihx" if xml else "run.cih")
    # A .cihx starts with a few bytes of binary preamble before its XML.
    text = (CIHX if xml else CIH).format(**fields)
    header.write_bytes((b"\x00\x01\x02\x03" if xml else b"") + text.encode())
    return header


def pymraw_frames(header):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        images, cih = pymraw.load_video(str(header))
        return np.array(images), cih


@pytest.fixture
def frames12(rng):
    return rng.integers(0, 4096, size=(5, 8, 12), dtype=np.uint16)


@pytest.mark.parametrize("bits", [8, 16])
def test_files_written_by_pymraw(tmp_path, rng, bits):
    top = 255 if bits == 8 else 4095
    frames = rng.integers(0, top + 1, size=(5, 8, 12)).astype(np.uint8 if bits == 8 else np.uint16)
    info = {"Record Rate(fps)": 20000, "Start Frame": -2}
    _, cih = pymraw.save_mraw(frames, str(tmp_path / "saved.cih"), bit_depth=bits, info_dict=info)
    theirs, header = pymraw_frames(cih)
    for given in (cih, tmp_path / "saved.mraw"):
        with open_recording(given) as rec:
            ours = np.stack(list(rec))
            assert np.array_equal(ours, theirs) and np.array_equal(ours, frames)
            assert rec.dtype == frames.dtype
            assert rec.bit_depth == header["EffectiveBit Depth"]
            assert rec.frame_rate == header["Record Rate(fps)"] == 20000
            assert rec.trigger_frame == 2.0
            assert rec.time_since_trigger[2] == pytest.approx(0.0)
            assert np.array_equal(rec.memmap(1, 4), frames[1:4])


@pytest.mark.parametrize("xml", [False, True])
def test_packed_12bit_against_pymraw(tmp_path, frames12, xml):
    header = write_mraw(tmp_path, frames12, xml=xml)
    theirs, cih = pymraw_frames(header)
    with open_recording(header) as rec:
        ours = np.stack(list(rec))
        blocks = np.concatenate([block for _, block in rec.chunks(2)])
        assert rec.memmap() is None
        assert rec.bit_depth == 12 == cih["EffectiveBit Depth"]
        assert len(rec) == cih["Total Frame"]
    assert np.array_equal(ours, theirs) and np.array_equal(ours, frames12)
    assert np.array_equal(blocks, ours)


@pytest.mark.parametrize("xml", [False, True])
def test_save_step_gives_the_saved_frame_times(tmp_path, frames12, xml):
    """A header reading 60 000 fps with a save step of 36: frames 600 µs apart."""
    header = write_mraw(tmp_path, frames12, rate=60000, step=36, start=-72, xml=xml)
    with open_recording(header) as rec:
        assert rec.frame_rate == pytest.approx(60000 / 36)
        assert np.allclose(np.diff(rec.times), 600e-6)
        assert rec.trigger_frame == 2.0
        assert np.allclose(rec.time_since_trigger, (np.arange(5) - 2) * 600e-6)
        facts = rec.header_facts
        assert facts["record_rate_hz"] == 60000 and facts["save_step"] == 36


@pytest.mark.parametrize(
    ("change", "words"),
    [
        (("Total Frame : 5", "Total Frame : 9"), ["truncated", "frame 5", "run.mraw"]),
        (("Total Frame : 5", "Total Frame : 99999999"), ["claims 99999999 frames", "Total Frame"]),
        (
            ("Record Rate(fps) : 60000\n", "Record Rate(fps) : fast\n"),
            ["Record Rate(fps)", "not a number"],
        ),
        (("Image Width : 12\n", ""), ["Image Width", "missing"]),
        (("Save Step : 1", "Save Step : 0"), ["Save Step", "positive"]),
        (("File Format : MRaw", "File Format : Tiff"), ["File Format", "another format"]),
        (("Color Bit : 12", "Color Bit : 24"), ["Color Bit", "gray"]),
    ],
)
def test_damaged_header_is_one_clear_line(tmp_path, frames12, change, words):
    header = write_mraw(tmp_path, frames12)
    header.write_text(header.read_text().replace(*change))
    with pytest.raises(RecordingError) as caught:
        open_recording(header)
    message = str(caught.value)
    assert "\n" not in message and "run." in message
    for word in words:
        assert word in message


def test_missing_partner_file(tmp_path, frames12):
    header = write_mraw(tmp_path, frames12)
    (tmp_path / "run.mraw").unlink()
    with pytest.raises(RecordingError, match="no .mraw file"):
        open_recording(header)
    (tmp_path / "alone.mraw").write_bytes(b"\x00" * 12)
    with pytest.raises(RecordingError, match="no header beside it"):
        open_recording(tmp_path / "alone.mraw")


def test_broken_cihx(tmp_path, frames12):
    header = write_mraw(tmp_path, frames12, xml=True)
    header.write_bytes(header.read_bytes().replace(b"</frameInfo>", b""))
    with pytest.raises(RecordingError, match="not well-formed XML"):
        open_recording(header)
