"""Damage for fuzz tests: one cut, one deleted line or one replaced byte (common practice)."""

from __future__ import annotations

from collections.abc import Sequence

from hypothesis import strategies as st


def damage(draw, text: bytes, replacements: Sequence[bytes]) -> bytes:
    """``text`` with one kind of damage drawn by hypothesis's ``draw``."""
    how = draw(st.sampled_from(["cut", "delete-line", "replace"]))
    if how == "cut":
        return text[: draw(st.integers(0, len(text)))]
    if how == "delete-line":
        lines = text.split(b"\n")
        i = draw(st.integers(0, len(lines) - 1))
        return b"\n".join(lines[:i] + lines[i + 1:])
    at = draw(st.integers(0, len(text) - 1))
    return text[:at] + draw(st.sampled_from(list(replacements))) + text[at + 1:]
