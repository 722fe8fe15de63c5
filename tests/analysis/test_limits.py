"""Guards on the symbolic work: a limit that is hit is reported, never silently ignored."""

from __future__ import annotations

import pytest

from proofkit.analysis import Limits, survey
from proofkit.analysis.equilibria import LimitHit, solve_polynomial_system

from .helpers import model, sym

x, y = sym("x", "y")


def test_bezout_limit_falls_back_to_an_incomplete_box_search() -> None:
    # common practice: past the limit the exact solver is not run; the box search still
    # certifies the roots it finds but cannot speak for the whole plane
    m = model("x y", [x**2 - 2, -y])
    s = survey(m, Limits(max_bezout=1))
    assert not s.complete
    assert "Bezout bound 2 exceeds the limit 1" in s.complete_reason
    assert "outside the box are not excluded" in s.complete_reason
    assert len(s.equilibria) == 2
    assert all(e.verdict in ("stable", "unstable") for e in s.equilibria)


def test_quotient_dimension_limit_is_reported() -> None:
    # computed by hand: x^3 = 2, y^3 = 3 (both irreducible) has a quotient of dimension 9 > 4
    with pytest.raises(LimitHit, match="dimension 9"):
        solve_polynomial_system(
            [x**3 - 2, y**3 - 3], [x, y], ["x", "y"], Limits(max_quotient_dim=4)
        )


def test_groebner_time_limit_is_reported() -> None:
    # common practice: a Groebner computation that runs past its time budget is stopped
    rhs = [x**7 * y**5 - 3 * x**2 + y - 1, y**7 * x**4 + 5 * x**3 - 2 * y**2 + 7]
    with pytest.raises(LimitHit, match=r"exceeded 0\.001 s"):
        solve_polynomial_system(rhs, [x, y], ["x", "y"], Limits(groebner_seconds=1e-3))
