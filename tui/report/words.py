"""A recoding's learned numbers, written out in words for model documentation."""

from __future__ import annotations

from tui.engine.forms.base import Recoding


def _n(value: float) -> str:
    return f"{value:.6g}"


def _list(values: list[float]) -> str:
    return ", ".join(_n(v) for v in values)


def _shift(params: dict) -> str:
    s = float(params.get("shift", 0.0))
    return "" if s == 0 else f" after adding {_n(s)} to every value"


def params_in_words(recoding: Recoding) -> str:
    """One sentence saying what the recoding computes from x."""
    p = dict(recoding.params)
    kind = recoding.kind
    if kind == "linear":
        text = "kept as a linear term in x"
    elif kind == "log":
        text = f"natural log of x{_shift(p)}"
    elif kind == "fp1":
        power = float(p["power"])
        what = "ln x" if power == 0 else f"x to the power {_n(power)}"
        text = f"fractional polynomial of degree 1: {what}{_shift(p)}"
    elif kind == "fp2":
        p1, p2 = (float(v) for v in p["powers"])
        if p1 == p2:
            base = "ln x" if p1 == 0 else f"x^{_n(p1)}"
            what = f"{base} and {base}·ln x (repeated power)"
        else:
            what = " and ".join("ln x" if q == 0 else f"x^{_n(q)}" for q in (p1, p2))
        text = f"fractional polynomial of degree 2: {what}{_shift(p)}"
    elif kind == "quadratic":
        text = "x and x squared"
    elif kind == "spline":
        knots = p["knots"]
        text = f"restricted cubic spline with {len(knots)} knots at {_list(knots)}"
    elif kind == "hinge":
        text = f"x and max(x − {_n(float(p['knot']))}, 0): the slope changes at {_n(p['knot'])}"
    elif kind == "indicator":
        text = f"indicator: 1 when x < {_n(float(p['cut']))}, else 0"
    elif kind == "bands":
        edges = p["edges"]
        text = f"{len(edges) + 1} bands cut at {_list(edges)}; the lowest band is the reference"
    else:
        text = recoding.describe()
    if recoding.clip is not None:
        text += f"; x first limited to [{_n(recoding.clip[0])}, {_n(recoding.clip[1])}]"
    return text
