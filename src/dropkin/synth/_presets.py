"""Presets of ``dropkin synth``: the default law of a geometry, a sensor per noise level."""

from __future__ import annotations

from ._optics import Sensor

__all__ = ["default_law_name", "noise_sensor"]


def default_law_name(geometry: str) -> str:
    """The regime law a recording of `geometry` follows unless told otherwise.

    Examples
    --------
    >>> default_law_name("coalescence"), default_law_name("spreading")
    ('inertial', 'inertial-spreading')
    """
    return "inertial-spreading" if geometry == "spreading" else "inertial"


def noise_sensor(level: float, *, bit_depth: int = 8) -> Sensor:
    """A sensor whose noise is `level` times that of a 20000-electron well with 10 e- read noise.

    Shot noise scales as 1/sqrt(full well), so the well shrinks as 1/level^2;
    level 0 turns all noise off.

    Examples
    --------
    >>> noise_sensor(2.0)
    Sensor(bit_depth=8, full_well=5000.0, read_noise=20.0)
    >>> noise_sensor(0.0).full_well is None
    True
    """
    return Sensor(
        bit_depth=bit_depth,
        full_well=20000.0 / level**2 if level > 0 else None,
        read_noise=10.0 * level,
    )
