"""Property test: verdicts and planar types at the origin agree with numpy's eigenvalues."""

from __future__ import annotations

import numpy as np
from hypothesis import assume, given
from hypothesis import strategies as st

from proofkit.analysis import survey

from .helpers import model, sym

x, y = sym("x", "y")


def _numpy_type(ev: np.ndarray) -> str:
    # common practice: the phase-portrait classification of a hyperbolic planar linear part
    re_, im = ev.real, ev.imag
    if np.all(np.abs(im) > 1e-9):
        return ("stable" if re_[0] < 0 else "unstable") + " focus"
    if re_[0] * re_[1] < 0:
        return "saddle"
    return ("stable" if re_[0] < 0 else "unstable") + " node"


@given(
    st.lists(st.integers(-4, 4), min_size=4, max_size=4),
    st.lists(st.integers(-2, 2), min_size=6, max_size=6),
)
def test_origin_verdict_and_type_match_numpy(a: list[int], q: list[int]) -> None:
    # computed: numpy.linalg.eigvals of the linear part; unstable points are never "stable"
    A = np.array(a, dtype=float).reshape(2, 2)
    ev = np.linalg.eigvals(A)
    assume(np.min(np.abs(ev.real)) > 1e-6)  # hyperbolic only; axis cases are tested exactly
    assume(abs(ev[0] - ev[1]) > 1e-6)  # distinct eigenvalues: node/focus is clear-cut
    f1 = a[0] * x + a[1] * y + q[0] * x**2 + q[1] * x * y + q[2] * y**2
    f2 = a[2] * x + a[3] * y + q[3] * x**2 + q[4] * x * y + q[5] * y**2
    s = survey(model("x y", [f1, f2], equilibria={"o": {"x": 0, "y": 0}}))
    e = s.by_name("o")
    rhp = int(np.sum(ev.real > 0))
    assert e.routh.rhp_count == rhp and e.routh.imag_count == 0
    assert e.verdict == ("stable" if rhp == 0 else "unstable")
    assert e.type == _numpy_type(ev)
