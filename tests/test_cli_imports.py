"""``dropkin --help`` imports only what it needs (issue 16, point 8; issue 18).

The time is measured in ``benchmarks/whole_job.py`` (as a ratio to importing
click), not here; this test checks the cause instead: a help page, a
``--version`` or a command's own help never imports the numerical stack.
"""

import json
import subprocess
import sys

import pytest

HEAVY = ("numpy", "scipy", "matplotlib", "skimage", "pint", "cv2", "tifffile", "dask")

PROBE = """
import json, sys
from dropkin.cli import main
try:
    main(sys.argv[1:], prog_name="dropkin")
except SystemExit:
    pass
print(json.dumps(sorted(m for m in sys.modules if m.split(".")[0] in {heavy})))
"""


@pytest.mark.parametrize(
    "args", [["--help"], ["--version"], ["measure", "--help"], ["batch", "--help"]]
)
def test_help_imports_no_numerical_library(args):
    code = PROBE.format(heavy=repr(set(HEAVY)))
    done = subprocess.run(
        [sys.executable, "-c", code, *args], capture_output=True, text=True, check=True
    )
    loaded = json.loads(done.stdout.strip().splitlines()[-1])
    assert loaded == []


def test_lazy_package_attributes_are_the_public_objects():
    import dropkin
    import dropkin.measure._measure  # the subpackage of the same name as the function
    from dropkin.measure._measure import measure
    from dropkin.recording import open_recording

    assert dropkin.measure is measure
    assert dropkin.open_recording is open_recording
    assert set(dropkin.__all__) <= set(dir(dropkin))
    with pytest.raises(AttributeError):
        dropkin.no_such_name  # noqa: B018
