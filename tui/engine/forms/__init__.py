"""Candidate forms: each learns its numbers once and applies them from those numbers alone."""

from tui.engine.forms.base import Candidate, Kind, Learned, MissingFill, Recoding, RecodingError
from tui.engine.forms.registry import KINDS, default_candidates, make_recoding

__all__ = [
    "KINDS",
    "Candidate",
    "Kind",
    "Learned",
    "MissingFill",
    "Recoding",
    "RecodingError",
    "default_candidates",
    "make_recoding",
]
