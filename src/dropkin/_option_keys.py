"""The options that override an experiment file, by name, and the key each sets.

The names are the command line's options with underscores (``--frame-rate``
→ ``frame_rate``), which are also the Python API's keywords
(``dropkin.analyze(path, frame_rate="20 kfps")``): one table for both, so
that the two cannot drift apart. Plain data, imported by the command line at
start-up: it imports nothing.
"""

__all__ = ["RECORDING_OPTION_KEYS", "SAMPLE_OPTION_KEYS"]

#: The options (the command line's names, with underscores: also the Python
#: API's keywords) that override a recording's experiment key, and that key.
RECORDING_OPTION_KEYS = {
    "frame_rate": "recording.frame_rate",
    "pixel_size": "recording.pixel_size",
    "contrast": "recording.contrast",
    "geometry": "setup.geometry",
    "view": "setup.view",
}

#: The options that describe the sample, and the experiment key each sets.
SAMPLE_OPTION_KEYS = {
    "liquid": "liquid.name",
    "temperature": "liquid.temperature",
    "glycerol_mass_fraction": "liquid.glycerol_mass_fraction",
    "medium": "medium.name",
    "drop_radius": "drops.radius",
}
