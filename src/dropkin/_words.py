"""Counted nouns in messages: ``1 recording``, ``2 recordings``."""

from __future__ import annotations

__all__ = ["count"]


def count(n: int, singular: str, plural: str | None = None) -> str:
    """``n`` and the noun in the number it takes.

    Examples
    --------
    >>> count(1, "recording"), count(3, "recording"), count(0, "frame")
    ('1 recording', '3 recordings', '0 frames')
    >>> count(2, "frame was", "frames were")
    '2 frames were'
    """
    word = singular if n == 1 else (plural if plural is not None else singular + "s")
    return f"{n} {word}"
