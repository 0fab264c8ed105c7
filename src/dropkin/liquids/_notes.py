"""Notes on the values the liquid library filled in for an experiment.

:func:`~dropkin.liquids.resolve_fluids` fills the values an experiment leaves
out; :func:`fill_notes` says which, and where each came from, so that a
prediction can show what was assumed.
"""

from __future__ import annotations

from ._lookup import celsius_text, liquid_info

__all__ = ["fill_notes"]

_NOTED = ("temperature", "surface_tension", "viscosity", "density")


def fill_notes(before, after, *, user_library=None) -> list[str]:
    """One note per value the library filled in, naming the liquid and its source.

    Parameters
    ----------
    before : Experiment
        As given.
    after : Experiment
        ``resolve_fluids(before, user_library=user_library)``.
    user_library : LiquidLibrary or path, optional
        The user's library the values may have come from.

    Returns
    -------
    list of str
        Liquid first, then medium; e.g. ``"liquid.viscosity from the library
        (water): IAPWS 2008"`` or ``"liquid.temperature not given: 20 °C
        (assumed)"``.
    """
    notes = []
    for section in ("liquid", "medium"):
        old, new = getattr(before, section), getattr(after, section)
        filled = [f for f in _NOTED if getattr(old, f) is None and getattr(new, f)]
        if not filled:
            continue
        sources = liquid_info(new.name, user_library=user_library).sources
        for name in filled:
            if name == "temperature":
                given = section == "medium" and before.liquid.temperature is not None
                how = "the liquid's" if given else "assumed"
                celsius = celsius_text(new.temperature)
                notes.append(f"{section}.temperature not given: {celsius} ({how})")
            else:
                notes.append(
                    f"{section}.{name} from the library ({new.name}): {sources.get(name, '')}"
                )
    return notes
