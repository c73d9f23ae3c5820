"""Weight checking and covariate design columns."""

import numpy as np
import pandas as pd
import pytest

from tui.engine.covariates import CovariateError, build_covariates
from tui.engine.forms import make_recoding
from tui.intake.weights import check_weights
from tui.problems import InputProblem


def test_frequency_weights_kept_as_given_and_zero_rows_dropped():
    frame = pd.DataFrame({"w": [1.0, 0.0, 2.5, 3.0]})
    w = check_weights(frame["w"], "w", "frequency")
    np.testing.assert_array_equal(w.values, [1.0, 2.5, 3.0])
    np.testing.assert_array_equal(w.keep, [True, False, True, True])
    assert w.dropped_zero == 1


def test_survey_weights_rescaled_to_mean_one():
    w = check_weights(pd.Series([2.0, 4.0, 6.0]), "w", "survey")
    np.testing.assert_allclose(w.values, [0.5, 1.0, 1.5])


@pytest.mark.parametrize(
    "values, words",
    [
        ([1.0, -1.0], "negative"),
        ([1.0, np.inf], "non-finite"),
        ([1.0, None], "missing"),
        ([0.0, 0.0], "zero on every row"),
        (["a", "b"], "not numeric"),
    ],
)
def test_bad_weights_are_refused(values, words):
    with pytest.raises(InputProblem, match=words):
        check_weights(pd.Series(values), "w")


def test_unknown_weight_kind():
    with pytest.raises(InputProblem, match="weight kind"):
        check_weights(pd.Series([1.0]), "w", "sampling")


def test_covariates_linear_recoded_and_text():
    age = np.array([50.0, 60.0, np.nan, 70.0])
    bmi = np.array([20.0, 25.0, 30.0, 35.0])
    ward = np.array(["a", "b", "c", None], dtype=object)
    design = build_covariates(
        ["age", "bmi", "ward"],
        {"age": age, "bmi": bmi},
        {"ward": ward},
        {"bmi": make_recoding("quadratic", {})},
    )
    assert design.labels == ("age", "bmi__lin", "bmi__sq", "ward=b", "ward=c")
    np.testing.assert_array_equal(design.complete, [True, True, False, False])
    np.testing.assert_allclose(design.matrix[1], [60.0, 25.0, 625.0, 1.0, 0.0])
    assert "reference 'a'" in design.described[2]
    smaller = design.without("bmi")
    assert smaller.labels == ("age", "ward=b", "ward=c")


def test_text_covariate_with_too_many_levels():
    ward = np.array([f"w{i}" for i in range(30)], dtype=object)
    with pytest.raises(CovariateError, match="30 levels"):
        build_covariates(["ward"], {}, {"ward": ward})


def test_unknown_covariate():
    with pytest.raises(CovariateError, match="not a column"):
        build_covariates(["nope"], {"age": np.ones(3)}, {})
