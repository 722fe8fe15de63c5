"""Regions of attraction over a parameter range: the trailer sway model (worked/trailer_sway.pk).

``ds/dt = w, dw/dt = -k s - w + s^2`` with ``k`` in ``[1/2, 2]``: the origin is a stable
focus or node for every ``k > 0`` and ``(k, 0)`` a saddle (computed by hand: Jacobian
eigenvalues ``(-1 +- sqrt(1 - 4k))/2`` and ``(-1 +- sqrt(1 + 4k))/2``). By simulation
(computed, scipy ``solve_ivp``, stated in the model file) the smallest region-of-attraction
radius over the range is about 0.397, at ``k = 1/2``: the disc ``s^2 + w^2 <= 1/16`` is
attracted for every ``k``; a disc of radius 3/5 holds the saddle ``(1/2, 0)`` at ``k = 1/2``
(computed by hand), so it is attracted for no ``k`` near 1/2 and never proved.

The certified sublevel set is checked outside the project: numpy evaluates ``V`` and
scipy integrates trajectories from its boundary at several values of ``k``.
"""

from __future__ import annotations

import json
import time
from dataclasses import replace
from fractions import Fraction
from pathlib import Path
from typing import Any

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import proofkit
from proofkit.model import Model
from proofkit.proofs._ranges_basin import search_range_basin

from .helpers import certify, reaudit

WORKED = Path(__file__).resolve().parents[2] / "worked" / "trailer_sway.pk"
K_VALUES = (0.5, 0.8, 1.25, 2.0)  # the range's ends and two inside


def _attracts_only(text: str) -> Model:
    model = proofkit.parse(text)
    claims = tuple(c for c in model.claims if c.kind == "attracts")
    return replace(model, claims=claims)


@pytest.fixture(scope="module")
def trailer() -> tuple[str, Any, float]:
    """(certificate text, audit verdict, seconds) for the worked model's attracts claim."""
    model = _attracts_only(WORKED.read_text())
    t0 = time.perf_counter()
    text, _attempts, verdicts = certify(model)
    return text, verdicts[0], time.perf_counter() - t0


def test_trailer_attracts_claim_proved_over_the_range(trailer) -> None:
    text, verdict, seconds = trailer
    assert verdict.status == "proved", verdict
    assert verdict.scope == "range"
    assert verdict.theorem == "region-of-attraction-over-range"
    assert "k in [1/2, 2]" in verdict.sentence
    assert seconds < 120  # target about 60 s (measured about 10 s); a bound, not a benchmark
    ev = json.loads(text)["claims"][0]["evidence"]
    assert any(e[2] for e, _c in ev["V"]), "the V that works here depends on k"


def _terms(ev: dict) -> tuple[list, float]:
    """``V`` as (exponents, float coefficient) pairs over (s, w, k), and the level."""
    terms = [(tuple(e), float(Fraction(c))) for e, c in ev["V"]]
    return terms, float(Fraction(ev["numbers"]["level"]))


def _value(terms: list, s: np.ndarray, w: np.ndarray, k: float) -> np.ndarray:
    return sum(c * s ** e[0] * w ** e[1] * k ** e[2] for e, c in terms)


def _boundary(terms: list, level: float, k: float, count: int = 36) -> list[np.ndarray]:
    """Points where ``V(., k) = level`` on rays from the origin (bisection in numpy)."""
    out = []
    for th in np.linspace(0, 2 * np.pi, count, endpoint=False):
        u = np.array([np.cos(th), np.sin(th)])
        lo, hi = 0.0, 4.0
        assert _value(terms, *(hi * u), k) > level  # the sublevel set is bounded
        for _ in range(60):
            mid = (lo + hi) / 2
            lo, hi = (mid, hi) if _value(terms, *(mid * u), k) <= level else (lo, mid)
        out.append(lo * u)
    return out


def test_certified_sublevel_sets_are_attracted_in_simulation(trailer) -> None:
    text, verdict, _ = trailer
    assert verdict.status == "proved"
    ev = json.loads(text)["claims"][0]["evidence"]
    terms, level = _terms(ev)
    for k in K_VALUES:
        # computed (numpy): the saddle lies outside, the claim's disc inside {V <= level}
        assert _value(terms, k, 0.0, k) > level
        th = np.linspace(0, 2 * np.pi, 72, endpoint=False)
        assert np.all(_value(terms, np.cos(th) / 4, np.sin(th) / 4, k) <= level)
        for x0 in _boundary(terms, level, k):

            def rhs(_t, x, k=k):
                return [x[1], -k * x[0] - x[1] + x[0] ** 2]

            sol = solve_ivp(rhs, (0, 40), x0, rtol=1e-9, atol=1e-12)
            assert sol.success
            assert np.hypot(*sol.y[:, -1]) < 1e-5, (k, x0)  # computed: scipy solve_ivp


def test_trailer_certificate_mutations_rejected(trailer) -> None:
    text, verdict, _ = trailer
    assert verdict.status == "proved"

    def mutated(change) -> str:
        cert = json.loads(text)
        change(cert, cert["claims"][0]["evidence"])
        return reaudit(cert)[0].status

    def wider_box(c, _e):
        c["model"]["parameters"][0]["range"] = ["1/4", "2"]

    def higher_level(_c, e):
        e["numbers"]["level"] = "1/2"

    def dropped_multiplier(_c, e):
        e["multipliers"]["c1"] = []

    def changed_v(_c, e):
        e["V"][0][1] = str(-Fraction(e["V"][0][1]))

    def larger_set(c, _e):
        c["claims"][0]["claim"]["set"][0]["g"] = [[[0, 0], "9/25"], [[2, 0], "-1"], [[0, 2], "-1"]]

    for change in (wider_box, higher_level, dropped_multiplier, changed_v, larger_set):
        assert mutated(change) == "rejected", change.__name__


def test_disc_past_the_saddle_never_proved() -> None:
    # computed by hand: at k = 1/2 the saddle (1/2, 0) lies in s^2 + w^2 <= 9/25
    model = _attracts_only(WORKED.read_text().replace("<= 1/16", "<= 9/25"))
    evidence, why = search_range_basin(model, model.claims[0], lambda _m: None, budget=8.0)
    assert evidence is None
    assert why


@pytest.mark.slow
def test_disc_past_the_saddle_not_proved_by_the_whole_prover() -> None:
    model = _attracts_only(WORKED.read_text().replace("<= 1/16", "<= 9/25"))
    _text, _attempts, verdicts = certify(model)
    assert verdicts[0].status != "proved"
