"""How every candidate table counts and reads, stated once for the app, report, log and
``bendwise forms``."""

from __future__ import annotations

DF_RULE = (
    "df counts every number the form estimates beyond the intercept, and every cut point, "
    "knot or power searched on these data (a searched number costs one df more); a number "
    "typed by hand, or fixed in the log and checked on new data, is not searched and costs "
    "nothing."
)
"""The one degrees-of-freedom rule, used by AIC, BIC, ΔAIC and the log's ``df``."""

LR_DASH = "LR p '-': not nested in linear (no likelihood-ratio test; compare by AIC)"
"""What a dash in the LR p column means."""

BEST_MARGIN = 2.0
"""A form is named best only when its AIC beats linear by at least this much (a common
rule of thumb, Burnham & Anderson 2002); otherwise linear is adequate."""

ADEQUATE = "linear adequate"
"""Said in place of a best form when none beats linear by ``BEST_MARGIN``."""


def names_best(delta_aic: float | None) -> bool:
    """Whether a row with this ΔAIC (against linear) may be named the best form."""
    return delta_aic is not None and delta_aic == delta_aic and delta_aic <= -BEST_MARGIN


def best_words(best_form: str | None, delta_aic: float | None) -> str:
    """The lowest-AIC form as a table names it: the form when it beats linear by
    ``BEST_MARGIN``, ``linear adequate`` otherwise, a dash when nothing was fitted."""
    if best_form is None:
        return "-"
    return best_form if names_best(delta_aic) else ADEQUATE


BEST_RULE = (
    f"best: the lowest-AIC form, named only when it beats linear by {BEST_MARGIN:g} AIC or "
    "more (a rule of thumb, Burnham & Anderson 2002); otherwise linear adequate"
)
"""The naming rule in words, under the tables that name a best form."""
