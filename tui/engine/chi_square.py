"""Upper tail of the chi-square distribution without importing scipy at start-up.

For a whole number of degrees of freedom the tail has a closed form (a finite sum of
positive terms after an exponential, plus an erfc for odd df), exact to a few units in the
last digit; scans only ever ask for small whole df. Anything else goes to scipy's chdtrc,
imported on first use (it costs a few tenths of a second at every command's start).
"""

from __future__ import annotations

import math

_SERIES_DF = 400
"""Beyond this many df the sum takes longer than scipy's import is worth avoiding."""


def chi2_upper(df: float, x: float) -> float:
    """P(X > x) for X chi-square on ``df`` degrees of freedom (scipy's chdtrc(df, x))."""
    if math.isnan(x) or math.isnan(df) or df != int(df) or not 1 <= df <= _SERIES_DF:
        from scipy import special  # rare: keep scipy out of every command's start

        return float(special.chdtrc(df, x))
    if x <= 0.0:
        return 1.0
    if math.isinf(x):
        return 0.0
    k = int(df)
    half = 0.5 * x
    # Q(x; k + 2) = Q(x; k) + (x/2)^(k/2) e^(-x/2) / Gamma(k/2 + 1), from Q(x; 1) = erfc
    # (sqrt(x/2)) or Q(x; 2) = e^(-x/2); terms are formed in logs so none underflows early.
    if k % 2:
        total, order = math.erfc(math.sqrt(half)), 0.5
    else:
        total, order = math.exp(-half), 1.0
    log_half = math.log(half)
    while order < 0.5 * k:
        total += math.exp(order * log_half - half - math.lgamma(order + 1.0))
        order += 1.0
    return min(total, 1.0)
