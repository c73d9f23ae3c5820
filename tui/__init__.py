"""bendwise: triage of non-linear predictors for logistic regression (import package ``tui``)."""

__version__ = "0.1.0"
