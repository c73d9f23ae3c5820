"""A recoding's learned numbers, written out in words for model documentation."""

from __future__ import annotations

from tui.engine.forms.base import Recoding


def params_in_words(recoding: Recoding) -> str:
    """One sentence saying what the recoding computes from x (each kind words its own)."""
    return recoding.words()
