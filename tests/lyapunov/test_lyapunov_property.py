"""Property tests of Lyapunov proofs against numpy's eigenvalues (an outside judge)."""

from __future__ import annotations

from fractions import Fraction

import numpy as np
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from proofkit import parse
from proofkit.audit import audit_certificate
from proofkit.certificate import model_section, new_certificate
from proofkit.proofs.lyapunov import attempt

NAMES = ("x", "y", "z")
# a tenth of the profile's examples (the ci profile: 4; HYPOTHESIS_PROFILE=deep: 200), at least 12
FEW = max(12, settings.default.max_examples // 10)
small = st.integers(-3, 3).map(lambda k: Fraction(k, 2))


def _text(a: list[list[Fraction]], extra: list[str]) -> str:
    n = len(a)
    xs = NAMES[:n]
    lines = [f"state {', '.join(xs)}"]
    for i in range(n):
        terms = [f"({a[i][j]})*{xs[j]}" for j in range(n) if a[i][j] != 0]
        rhs = " + ".join([*terms, extra[i]] if extra[i] else terms) or "0"
        lines.append(f"d{xs[i]}/dt = {rhs}")
    lines.append("equilibrium O at " + ", ".join(f"{x} = 0" for x in xs))
    lines.append("claim O stable")
    return "\n".join(lines) + "\n"


@st.composite
def hurwitz_with_small_terms(draw):
    """A = -(M M' + I/2) + (S - S'): A + A' is negative definite, so A is Hurwitz."""
    n = draw(st.integers(1, 3))
    m = np.array([[draw(small) for _ in range(n)] for _ in range(n)], dtype=object)
    s = np.array([[draw(small) for _ in range(n)] for _ in range(n)], dtype=object)
    a = -(m @ m.T) - np.eye(n, dtype=int) * Fraction(1, 2) + (s - s.T)
    xs = NAMES[:n]
    extra = []
    for _i in range(n):
        c = draw(st.integers(-2, 2))
        j, k, h = draw(st.integers(0, n - 1)), draw(st.integers(0, n - 1)), draw(st.integers(2, 3))
        mono = f"{xs[j]}*{xs[k]}" if h == 2 else f"{xs[j]}*{xs[k]}^2"
        extra.append(f"({Fraction(c, 8)})*{mono}" if c else "")
    return [[Fraction(v) for v in row] for row in a.tolist()], extra


@settings(max_examples=FEW)
@given(hurwitz_with_small_terms())
def test_stable_linearization_with_small_terms_is_proved_locally(case) -> None:
    a, extra = case
    # outside judge (numpy): every eigenvalue of the linearization has negative real part
    assert np.linalg.eigvals(np.array(a, dtype=float)).real.max() < 0
    model = parse(_text(a, extra))
    res = attempt(model, model.claims[0])
    assert res is not None and res.entry["status"] == "proved", res.entry.get("reason")
    report = audit_certificate(new_certificate(model_section(model), [res.entry]))
    assert report.claims[0].status == "proved", report.claims[0].message


@settings(max_examples=max(20, FEW))
@given(
    st.integers(1, 3).flatmap(
        lambda n: st.lists(st.lists(small, min_size=n, max_size=n), min_size=n, max_size=n)
    ),
    st.integers(-2, 2),
)
def test_unstable_linearization_is_never_proved(a, c) -> None:
    # outside judge (numpy): an eigenvalue with positive real part means unstable
    assume(np.linalg.eigvals(np.array(a, dtype=float)).real.max() > 1e-6)
    n = len(a)
    extra = [f"({Fraction(c, 4)})*{NAMES[i]}^3" if c else "" for i in range(n)]
    model = parse(_text(a, extra))
    res = attempt(model, model.claims[0])
    assert res is not None and res.entry["status"] == "not proved"
