"""The statistic behind a score, in words: one wording for the scan table, the app, the
report and the evidence (the app only shows these; it computes none of them)."""

from __future__ import annotations

from collections.abc import Iterable

from tui.engine.robust_wald import LR, LR_APPROXIMATE, WALD_ROBUST

STATISTIC_LINE = {
    False: (
        "score = likelihood-ratio chi-square against linear of a restricted cubic spline "
        "(test spline) or, where tied values leave no knots, of one indicator per distinct "
        "value (test values); q = Benjamini-Hochberg."
    ),
    True: (
        "survey weights: score = Wald chi-square of the restricted cubic spline's non-linear "
        "terms with a robust (sandwich, HC0) covariance (statistic Wald (robust); Binder 1983, "
        "White 1980); where tied values leave no knots, the likelihood-ratio test of one "
        "indicator per distinct value, which ignores the sampling design (statistic LR "
        "(approximate)); q = Benjamini-Hochberg. Under survey weights ΔAIC and best forms come "
        "from the weighted pseudo-likelihood, which is not a true likelihood: a guide only."
    ),
}
"""The scan table's line under the scores: ``True`` when some score is not a plain LR."""

SURVEY_LR_NOTE = "LR p and ΔAIC approximate: survey weights, sampling design ignored"
"""Under a candidate table fitted with survey weights: its LR p column is a pseudo-likelihood
ratio read against chi-square, and its AIC a pseudo-likelihood's (no design-based AIC is
computed), so both are a guide only."""

MEANING = {
    LR: "likelihood-ratio chi-square",
    WALD_ROBUST: "Wald chi-square, sandwich covariance (survey weights)",
    LR_APPROXIMATE: "likelihood-ratio chi-square, approximate (survey weights, design ignored)",
}
"""Each statistic's name written out."""


def score_label(statistic: str | None) -> str:
    """``(Wald (robust))`` after a score; ``(LR)`` for a likelihood ratio; empty unscored."""
    return f"({statistic})" if statistic else ""


_ORDER = (WALD_ROBUST, LR_APPROXIMATE, LR)


def statistics_word(statistics: Iterable[str | None]) -> str:
    """The statistics behind a list of scores, e.g. ``Wald (robust), LR (approximate)``;
    ``none`` when nothing is scored."""
    present = set(statistics)
    named = [s for s in _ORDER if s in present]
    return ", ".join(named) if named else "none"
