# %% [markdown]
# # dropkin in a notebook: one shipped sample, from frames to figures
#
# A walk-through of the Python API on `sample_frames/fast_pair.tif` (a
# synthetic recording of two water drops merging, invented for the samples).
# Each `# %%` starts a cell: open this file as a notebook (Jupyter with
# jupytext, VS Code, Spyder) or run it as a script:
#
#     python examples/notebook_walkthrough.py [OUT]
#
# It writes into OUT (default `out/walkthrough`). The keywords are the
# command line's options with underscores, with the same values: the analysis
# below is `dropkin analyze sample_frames/fast_pair.tif -o OUT/fast_pair
# --frame-rate "60 kHz" --pixel-size "20 µm/px" --liquid water --temperature
# "20 degC"`, number for number.

# %%
import sys
from pathlib import Path

import numpy as np
import pandas as pd

import dropkin

HERE = Path(__file__).resolve().parent if "__file__" in globals() else Path.cwd() / "examples"
SAMPLE = HERE.parent / "sample_frames" / "fast_pair.tif"
# As a script, OUT comes from the command line; a notebook's argv is its kernel's.
ARGS = [] if "ipykernel" in sys.modules else sys.argv[1:]
OUT = Path(ARGS[0]) if ARGS else Path("out/walkthrough")
OPTIONS = {
    "frame_rate": "60 kHz",
    "pixel_size": "20 µm/px",
    "liquid": "water",
    "temperature": "20 degC",
}

# %% [markdown]
# ## The recording
#
# `dropkin.open` reads the experiment file beside the recording
# (`fast_pair.toml`) and lets keywords override it. The recording is lazy
# and array-like: frames are read when indexed.

# %%
rec = dropkin.open(SAMPLE, frame_rate=OPTIONS["frame_rate"], pixel_size=OPTIONS["pixel_size"])
print(rec)
print("shape", rec.shape, "dtype", rec.dtype, "pixel", rec.pixel_size, "m")
print("frame 30, rows 100-104 of column 72:", rec[30, 100:105, 72])

# %% [markdown]
# The dask view reads the frames chunk by chunk: the per-pixel mean over the
# recording never holds more than a chunk of frames in memory.

# %%
mean_frame = rec.to_dask(chunk_size=16).mean(axis=0).compute()
assert np.allclose(mean_frame, np.asarray(rec).mean(axis=0))
print("mean grey level", float(mean_frame.mean()))

# %% [markdown]
# ## The analysis, in memory
#
# Nothing is written yet: the result holds the radius series, the contact
# instant, the verdict and its warnings.

# %%
result = dropkin.analyze(SAMPLE, **OPTIONS)
print(result)
print(result.summary())
print("contact:", result.contact.time, "s ±", result.contact.err, "s;", result.contact.method)
for warning in result.warnings:
    print("warning:", warning)

# %% [markdown]
# The series as a table (the columns of `radius.csv`), and the dominant
# regime's numbers.

# %%
table = result.to_pandas()
print(table[table["status"] == "ok"].head())
dominant = result.verdict.dominant
print(dominant.key, "n =", dominant.exponent_fit, "95 % interval", dominant.exponent_ci)

# %% [markdown]
# The figures of `plots/`, as matplotlib figures: a notebook shows one when it
# is a cell's value; here they are saved.

# %%
OUT.mkdir(parents=True, exist_ok=True)
figures = result.figures()
for name, figure in figures.items():
    figure.savefig(OUT / f"{name}.png", dpi=150)
print("figures:", ", ".join(figures))

# %% [markdown]
# ## The files, and reading them back
#
# `write` writes what `dropkin analyze` writes; `read_results` reads the
# series back as a DataFrame, with `measure.json` and `fit.json` in `attrs`.

# %%
folder = result.write(OUT / "fast_pair")
back = dropkin.read_results(folder)
pd.testing.assert_frame_equal(back, table)  # the files hold the numbers in memory
print("wrote", folder, "with", ", ".join(sorted(p.name for p in folder.iterdir())))
print("fit.json's time origin:", back.attrs["fit"]["time_origin"])
