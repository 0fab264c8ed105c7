"""The HTML report in a real browser: headless Chromium, driven by playwright.

One `dropkin analyze` run on the shipped sample ``fast_pair.tif`` writes
``report.html``; the system's Chromium opens it through a ``file://`` URL. The
page must render (title and main heading), log no console error and raise no
page error, load every image, send no request to the network, and keep its
layout within the window at a desktop and at two narrow widths. A full-page
screenshot goes to the test's tmp folder, and to ``$DROPKIN_SCREENSHOT_DIR``
when that is set.

The browser is the Debian package ``chromium`` (``/usr/bin/chromium`` or
``chromium`` on PATH); playwright only drives it and never downloads one.
Without it the tests are skipped, unless ``DROPKIN_REQUIRE_BROWSER`` is set
(to anything but empty or ``0``): then they fail, which is what CI wants.
"""

from __future__ import annotations

import os
import shutil
import struct
import zlib
from pathlib import Path

import pytest
from click.testing import CliRunner

import dropkin.cli

SAMPLES = Path(__file__).resolve().parents[2] / "sample_frames"
SAMPLE = "fast_pair.tif"

#: The flags the project runs Chromium with. Without the background-networking
#: ones Chromium keeps trying to reach its update and sync services.
CHROMIUM_ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]
VIEWPORT = {"width": 1280, "height": 900}
#: Narrow windows the layout must fit without a horizontal scroll bar: a
#: half-screen window and a phone held upright (common practice in web layout).
NARROW_WIDTHS = (600, 390)
#: Generous bound for one navigation or launch on a loaded 2-core machine.
TIMEOUT_MS = 30_000

# PNG file signature and IHDR layout: W3C PNG specification, 3rd edition,
# sections 5.2 (signature) and 11.2.1 (IHDR: width, height as 4-byte
# big-endian integers, then bit depth, colour type, ...).
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"

#: URL schemes that stay on the machine; a request with any other is a failure.
_LOCAL_SCHEMES = ("file:", "data:")


def _require_browser() -> bool:
    return os.environ.get("DROPKIN_REQUIRE_BROWSER", "") not in ("", "0")


def _missing(reason: str):
    if _require_browser():
        pytest.fail(f"{reason}, and DROPKIN_REQUIRE_BROWSER is set", pytrace=False)
    pytest.skip(f"{reason}; set DROPKIN_REQUIRE_BROWSER=1 to make this a failure")


def _find_chromium() -> str | None:
    if os.access("/usr/bin/chromium", os.X_OK):
        return "/usr/bin/chromium"
    return shutil.which("chromium")


@pytest.fixture(scope="module")
def chromium():
    """A headless system Chromium under playwright, in a fresh empty profile."""
    path = _find_chromium()
    if path is None:
        _missing("headless Chromium not found (/usr/bin/chromium or chromium on PATH)")
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        _missing("the playwright package is not installed (pip install -e '.[test]')")
    return path, sync_playwright


class _Visit:
    """What one page load did, gathered from the browser's events.

    Console messages of type error, uncaught page errors, every request and
    every failed one; requests whose scheme is neither file: nor data: are
    recorded and aborted, so none leaves the machine.
    """

    def __init__(self):
        self.console_errors: list[str] = []
        self.page_errors: list[str] = []
        self.requests: list[str] = []
        self.failed: list[str] = []
        self.blocked: list[str] = []
        self.title = ""
        self.h1: list[str] = []
        self.images: list[dict] = []
        self.page_size: list[int] = []
        self.overflow: dict[int, int] = {}
        self.frames: list[dict] = []
        self.steps: list[dict] = []

    def attach(self, context, page):
        def on_console(message):
            if message.type == "error":
                self.console_errors.append(f"{message.text} ({message.location})")

        def on_route(route):
            url = route.request.url
            if url.startswith(_LOCAL_SCHEMES):
                route.continue_()
            else:
                self.blocked.append(url)
                route.abort()

        def on_failed(request):
            self.failed.append(f"{request.url}: {request.failure}")

        page.on("console", on_console)
        page.on("pageerror", lambda error: self.page_errors.append(str(error)))
        context.on("request", lambda request: self.requests.append(request.url))
        context.on("requestfailed", on_failed)
        context.route("**/*", on_route)

    @property
    def network(self) -> list[str]:
        """Every requested URL that is not local, whether blocked or not."""
        seen = [u for u in self.requests if not u.startswith(_LOCAL_SCHEMES)]
        return sorted(set(seen) | set(self.blocked))


def _open(chromium, user_data_dir: Path, url: str, screenshot: Path):
    """Load `url`, record the visit, measure the layout, take a full-page screenshot."""
    path, sync_playwright = chromium
    visit = _Visit()
    with sync_playwright() as pw:
        context = pw.chromium.launch_persistent_context(
            str(user_data_dir),
            executable_path=path,
            headless=True,
            args=CHROMIUM_ARGS,
            viewport=VIEWPORT,
            device_scale_factor=1,
            timeout=TIMEOUT_MS,
        )
        try:
            page = context.new_page()
            page.set_default_timeout(TIMEOUT_MS)
            visit.attach(context, page)
            page.goto(url, wait_until="load")
            visit.title = page.title()
            visit.h1 = [h.inner_text() for h in page.locator("h1").all()]
            visit.images = page.evaluate(
                """() => Array.from(document.images, (img) => ({
                    src: img.currentSrc.slice(0, 40), complete: img.complete,
                    naturalWidth: img.naturalWidth, shownWidth: img.getBoundingClientRect().width,
                }))"""
            )
            visit.page_size = page.evaluate(
                "() => [document.documentElement.scrollWidth,"
                " document.documentElement.scrollHeight]"
            )
            page.screenshot(path=str(screenshot), full_page=True)
            _step_overlays(page, visit)
            for width in NARROW_WIDTHS:
                page.set_viewport_size({"width": width, "height": VIEWPORT["height"]})
                visit.overflow[width] = page.evaluate(
                    "() => document.documentElement.scrollWidth"
                    " - document.documentElement.clientWidth"
                )
        finally:
            context.close()
    return visit


#: The state of the overlay stepper as a reader sees it.
_STEPPER_STATE = """() => {
    const img = document.getElementById("overlay-image");
    const frames = JSON.parse(document.getElementById("overlay-frames").textContent);
    const i = Number(document.getElementById("overlay-slider").value);
    return {value: i, complete: img.complete, naturalWidth: img.naturalWidth,
            src_is_frame: img.src === frames[i].uri, alt: img.alt,
            caption: document.getElementById("overlay-caption").textContent,
            position: document.getElementById("overlay-position").textContent};
}"""


def _step_overlays(page, visit):
    """Step the overlay slider with the keyboard to its end, then back with a button."""
    if page.locator("#overlay-slider").count() == 0:
        return
    visit.frames = page.evaluate(
        """() => JSON.parse(document.getElementById("overlay-frames").textContent)
                 .map((f) => ({name: f.name, caption: f.caption}))"""
    )
    loaded = "() => document.getElementById('overlay-image').complete"
    page.focus("#overlay-slider")
    for _ in range(len(visit.frames) + 1):  # one press past the end: it must stay there
        page.wait_for_function(loaded)
        visit.steps.append(page.evaluate(_STEPPER_STATE))
        page.keyboard.press("ArrowRight")
    page.click("#overlay-previous")
    page.wait_for_function(loaded)
    visit.steps.append(page.evaluate(_STEPPER_STATE))


def _png_size(path: Path) -> tuple[int, int]:
    """Width and height from a PNG's IHDR chunk, its CRC checked (PNG spec 5.3, 11.2.1)."""
    data = path.read_bytes()
    assert data[:8] == PNG_SIGNATURE, f"{path} is not a PNG"
    length, kind = struct.unpack(">I4s", data[8:16])
    assert kind == b"IHDR" and length == 13, f"{path}: first chunk is {kind!r}"
    body = data[16:29]
    (crc,) = struct.unpack(">I", data[29:33])
    assert zlib.crc32(kind + body) == crc, f"{path}: IHDR checksum does not match"
    width, height = struct.unpack(">II", body[:8])
    return width, height


@pytest.fixture(scope="module")
def report_visit(chromium, tmp_path_factory):
    """One `analyze` run, its report opened once in Chromium."""
    work = tmp_path_factory.mktemp("browser")
    out = work / "out"
    result = CliRunner().invoke(
        dropkin.cli.main, ["analyze", str(SAMPLES / SAMPLE), "-o", str(out), "--bootstrap", "20"]
    )
    assert result.exit_code == 0, result.output
    report = out / "report.html"
    assert report.is_file()
    screenshot = work / "report.png"
    visit = _open(chromium, work / "profile", report.as_uri(), screenshot)
    visit.screenshot = screenshot
    visit.n_overlays = len(list((out / "overlays").glob("*.png")))
    target = os.environ.get("DROPKIN_SCREENSHOT_DIR")
    if target:
        Path(target).mkdir(parents=True, exist_ok=True)
        shutil.copyfile(screenshot, Path(target) / f"report_{Path(SAMPLE).stem}.png")
    return visit


def test_page_renders_title_and_heading(report_visit):
    # the report names its input in the title and the one h1 (src/dropkin/report/_html.py)
    assert report_visit.title == f"dropkin report: {SAMPLE}"
    assert report_visit.h1 == [f"dropkin report: {SAMPLE}"]


def test_no_console_or_page_errors(report_visit):
    assert report_visit.console_errors == []
    assert report_visit.page_errors == []
    assert report_visit.failed == []


def test_every_image_loaded(report_visit):
    # HTML Living Standard, the img element: `complete` is true once the
    # image is fully available or broken; a broken one has naturalWidth 0.
    images = report_visit.images
    # three plots (radius, local exponent, residuals) and the one overlay frame
    # the slider steps (the montage is in plots/, not shown twice)
    assert len(images) == 3 + 1
    bad = [i for i in images if not (i["complete"] and i["naturalWidth"] > 0)]
    assert bad == []
    assert all(i["src"].startswith("data:image/") for i in images)
    assert all(i["shownWidth"] > 50 for i in images), images


def test_the_slider_steps_through_every_overlay_frame(report_visit):
    """One overlay section; the slider (arrow keys) and the buttons step the frames."""
    frames, steps = report_visit.frames, report_visit.steps
    n = report_visit.n_overlays
    assert n >= 3 and len(frames) == n
    assert [f["name"] for f in frames] == sorted(f["name"] for f in frames)
    # one state per frame in order, then one press past the end stays at the end
    assert [s["value"] for s in steps[:n]] == list(range(n))
    assert steps[n]["value"] == n - 1
    for i, step in enumerate(steps[:n]):
        assert step["src_is_frame"] and step["complete"] and step["naturalWidth"] > 0, step
        assert step["alt"] == frames[i]["name"]
        assert step["caption"] == frames[i]["caption"]
        assert step["position"] == f"{i + 1} / {n}"
    # each frame has its own caption (frame number, status, τ, radius)
    assert len({s["caption"] for s in steps[:n]}) == n
    assert all(s["caption"].startswith("frame ") for s in steps[:n])
    # the "previous" button goes back one
    assert steps[-1]["value"] == n - 2 and steps[-1]["src_is_frame"]


def test_no_request_left_the_machine(report_visit):
    assert report_visit.network == []
    # the page itself was fetched, so the request log is live
    assert any(u.startswith("file:") and u.endswith("report.html") for u in report_visit.requests)


def test_layout_fits_narrow_windows(report_visit):
    # no horizontal scroll bar: wide tables scroll inside their own box
    assert report_visit.overflow == dict.fromkeys(NARROW_WIDTHS, 0)


def test_screenshot_is_a_full_page_png(report_visit):
    import matplotlib.image as mpimg
    import numpy as np

    width, height = _png_size(report_visit.screenshot)
    # full page at device scale 1: the viewport's width, the document's height
    assert (width, height) == tuple(report_visit.page_size)
    assert width == VIEWPORT["width"] and height > VIEWPORT["height"]
    # decoded by matplotlib (reference PNG reader): the right shape, and not blank
    pixels = mpimg.imread(report_visit.screenshot)
    assert pixels.shape[:2] == (height, width)
    assert np.ptp(pixels[..., :3]) > 0.5


_BAD_PAGE = """<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8"><title>bad page</title></head>
<body><h1>bad page</h1>
<img src="http://192.0.2.1/remote.png" alt="remote">
<img src="missing.png" alt="missing">
<script>console.error("logged error"); throw new Error("thrown error");</script>
</body></html>
"""


def test_the_checks_catch_a_bad_page(chromium, tmp_path):
    """The same harness on a page that does everything the report must not do."""
    page = tmp_path / "bad.html"
    page.write_text(_BAD_PAGE, encoding="utf-8")
    visit = _open(chromium, tmp_path / "profile", page.as_uri(), tmp_path / "bad.png")
    # 192.0.2.1 is in TEST-NET-1, reserved for documentation (RFC 5737); it is
    # aborted before it leaves, and must still be reported
    assert visit.network == ["http://192.0.2.1/remote.png"]
    assert any("logged error" in m for m in visit.console_errors)
    assert any("thrown error" in m for m in visit.page_errors)
    broken = [i for i in visit.images if not (i["complete"] and i["naturalWidth"] > 0)]
    assert len(broken) == 2
    assert _png_size(tmp_path / "bad.png")[0] == VIEWPORT["width"]
