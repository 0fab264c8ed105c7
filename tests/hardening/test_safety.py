"""Safety audit: no code execution from input, and the HTML report escapes what it shows.

1. The source of ``src/dropkin`` (its code tokens: comments and strings left
   out, with the standard library's ``tokenize``) must not call ``eval``,
   ``exec``, ``compile``, ``__import__``, ``pickle``/``marshal`` loads,
   ``yaml.load``, ``os.system``/``os.popen``, nor pass ``shell=True`` or
   ``allow_pickle=True``: each would run or unpickle whatever a user's file
   holds (Python docs, "pickle" module warning and "eval" built-in; PyYAML's
   ``load`` warning; subprocess "Security Considerations"). Legitimate uses
   would be listed in :data:`ALLOWED` with a reason.
2. Every free text an experiment or a path can carry (the liquid's and the
   medium's names, the recording's folders, the experiment file's name, the
   output folder) holds ``<script>alert(1)</script>`` or
   ``"><img src=x onerror=alert(2)>``; ``dropkin analyze`` writes the report,
   which is parsed with ``html.parser``: no script element, no event-handler
   attribute, no image but inlined data, and the texts shown as text.
"""

from __future__ import annotations

import io
import re
import tokenize
from html.parser import HTMLParser
from pathlib import Path

import pytest
from click.testing import CliRunner

from dropkin.cli import main

SRC = Path(__file__).resolve().parents[2] / "src" / "dropkin"

#: Patterns in code tokens that run or unpickle data.
DANGEROUS = {
    "eval": r"(?<![\w.])eval\s*\(",
    "exec": r"(?<![\w.])exec\s*\(",
    "compile": r"(?<![\w.])compile\s*\(",
    "__import__": r"__import__\s*\(",
    "pickle load": r"\b(?:c?[Pp]ickle|marshal|dill|shelve)\s*\.\s*(?:load|loads|open)\s*\(",
    "yaml load": r"\byaml\s*\.\s*(?:load|unsafe_load|full_load|load_all)\s*\(",
    "shell=True": r"\bshell\s*=\s*True\b",
    "allow_pickle=True": r"\ballow_pickle\s*=\s*True\b",
    "os.system": r"\bos\s*\.\s*(?:system|popen)\s*\(",
}
#: (file relative to src/dropkin, pattern name) -> why it is safe.
ALLOWED: dict[tuple[str, str], str] = {
    ("measure/_stream.py", "pickle load"): "a --jobs worker unpickles the bytes its own parent "
    "process pickled for it (recording handle, preparation, options); nothing read from "
    "a user's file is ever unpickled",
}


def code_only(text: str) -> str:
    """`text` with its comments and string literals blanked out (lines kept)."""
    rows = [list(line) for line in text.splitlines(keepends=True)]
    skip = {tokenize.COMMENT, tokenize.STRING}
    if hasattr(tokenize, "FSTRING_MIDDLE"):  # Python 3.12 tokenizes f-string parts
        skip.add(tokenize.FSTRING_MIDDLE)
    for tok in tokenize.generate_tokens(io.StringIO(text).readline):
        if tok.type not in skip:
            continue
        (r0, c0), (r1, c1) = tok.start, tok.end
        for r in range(r0, r1 + 1):
            row = rows[r - 1]
            stop = c1 if r == r1 else len(row)
            for c in range(c0 if r == r0 else 0, stop):
                if row[c] != "\n":
                    row[c] = " "
    return "".join("".join(row) for row in rows)


def findings(text: str, name: str) -> list[tuple[str, int, str]]:
    code = code_only(text)
    hits = []
    for label, pattern in DANGEROUS.items():
        for match in re.finditer(pattern, code):
            line = code.count("\n", 0, match.start()) + 1
            if (name, label) not in ALLOWED:
                hits.append((name, line, label))
    return hits


def test_the_scanner_finds_what_it_looks_for():
    snippet = (
        "x = eval(text)\nexec (code)\nobj = pickle.loads(blob)\nyaml.load(f)\n"
        "subprocess.run(cmd, shell=True)\nnp.load(p, allow_pickle=True)\n"
        "m = __import__(name)\nos.system(cmd)\n"
    )
    assert {label for _, _, label in findings(snippet, "x.py")} == {
        "eval",
        "exec",
        "pickle load",
        "yaml load",
        "shell=True",
        "allow_pickle=True",
        "__import__",
        "os.system",
    }
    harmless = '# eval(x) in a comment\ns = "pickle.loads(b)"\nliteral_eval(x)\nself.exec(x)\n'
    assert findings(harmless, "x.py") == []


def test_no_code_runs_or_unpickles_input():
    files = sorted(SRC.rglob("*.py"))
    assert len(files) > 30  # the whole package was read
    hits = []
    for path in files:
        hits += findings(path.read_text(encoding="utf-8"), path.relative_to(SRC).as_posix())
    assert not hits, f"unsafe calls (allow-list them with a reason if legitimate): {hits}"
    for (name, label), reason in ALLOWED.items():
        assert (SRC / name).is_file() and label in DANGEROUS and reason


SCRIPT = "<script>alert(1)</script>"
IMAGE = '"><img src=x onerror=alert(2)>'


class _Audit(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags: list[tuple[str, list]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append((tag, attrs))

    handle_startendtag = handle_starttag

    def handle_data(self, data):
        self.text.append(data)


@pytest.fixture(scope="module")
def hostile(tmp_path_factory):
    """A recording whose every free text carries HTML, analysed."""
    root = tmp_path_factory.mktemp("hostile")
    # A path component cannot hold "/", so "</script>" spans two folders.
    recording = root / "<script>alert(1)<" / "script>" / IMAGE
    args = ["--frames", "48", "--size", "120x192", "--pixel-size", "25 um"]
    args += ["--frame-rate", "50 kHz", "--contact-frame", "3.5", "--liquid-name", SCRIPT]
    result = CliRunner().invoke(main, ["synth", str(recording), *args])
    assert result.exit_code == 0, result.output
    written = (recording / "experiment.toml").read_text(encoding="utf-8")
    assert SCRIPT in written  # synth wrote the name (as a TOML string)
    experiment = root / "<script>alert(1)<" / "script>" / f"{IMAGE}.toml"
    text = written.replace("[medium]\n", f'[medium]\nname = "{IMAGE.replace(chr(34), "")}"\n', 1)
    experiment.write_text(text, encoding="utf-8")
    out = root / IMAGE
    result = CliRunner().invoke(
        main,
        ["analyze", str(recording), "-o", str(out), "--experiment", str(experiment)]
        + ["--bootstrap", "10", "--overlays", "3"],
    )
    assert result.exit_code == 0, result.output
    return out


def test_the_report_shows_input_texts_as_text_only(hostile):
    html = (hostile / "report.html").read_text(encoding="utf-8")
    audit = _Audit()
    audit.feed(html)
    audit.close()
    # the only scripts are the report's own: the overlay frames' data (JSON,
    # with "<" escaped) and the few lines that step them; none from the input
    scripts = [dict(attrs) for tag, attrs in audit.tags if tag == "script"]
    assert scripts == [
        {"type": "application/json", "id": "overlay-frames"},
        {"id": "overlay-stepper"},
    ]
    data = html.split('id="overlay-frames">', 1)[1].split("</script>", 1)[0]
    assert "<" not in data and ">" not in data
    for tag, attrs in audit.tags:
        for name, value in attrs:
            assert not name.lower().startswith("on"), (tag, name, value)
            if tag == "img" and name == "src":
                assert value.startswith("data:image/"), value[:40]
    shown = "".join(audit.text)
    for payload in (SCRIPT, IMAGE, "onerror=alert(2)>"):
        assert payload in shown  # shown, as text (escaped in the file)
    assert SCRIPT not in html and "<img src=x" not in html


def test_the_plots_carry_no_markup_from_input(hostile):
    for svg in sorted((hostile / "plots").glob("*.svg")):
        text = svg.read_text(encoding="utf-8")
        assert "<script" not in text and "onerror" not in text, svg.name
