"""Numerical location of periodic orbits (``proofkit.analysis.orbits``, ``proofkit orbit``).

Reference values and their labels (see ../shared/REFERENCES.md):
- van der Pol, mu = 1: period and amplitude published (Hairer & Wanner, Solving
  Ordinary Differential Equations, reference values);
- van der Pol, mu = 2: computed by shooting: scipy ``solve_ivp`` (DOP853, rtol
  and atol 1e-13) from (2, 0), period between successive downward crossings of
  the section y = 0, amplitude the x value at the crossing (recomputed below
  by the same route, independently of proofkit);
- orbital stability: the nontrivial Floquet multiplier in (0, 1) (common
  practice), cross-checked against Liouville's formula exp(int div f dt)
  (computed with scipy's quad over the orbit).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from proofkit import parse
from proofkit.analysis.orbits import find_cycles, numeric_field
from proofkit.cli import main

VDP = """system van_der_pol
parameter mu = {mu}
state x, y
dx/dt = y
dy/dt = mu*(1 - x^2)*y - x
equilibrium rest at x = 0, y = 0
"""

# Invented demo: dr/dt = r (r^2 - 1)(4 - r^2)/4, dtheta/dt = 1 in polar form.
RINGS = """system two_rings
state x, y
let r2 = x^2 + y^2
dx/dt = -y + x*(r2 - 1)*(4 - r2)/4
dy/dt = x + y*(r2 - 1)*(4 - r2)/4
"""

# Unforced damped Duffing oscillator: div f = -1 everywhere, so no periodic orbit
# anywhere (Bendixson's criterion; common practice).
DUFFING = """system damped_duffing
state x, y
dx/dt = y
dy/dt = x - x^3 - y
"""


def _vdp(mu: str) -> object:
    return parse(VDP.format(mu=mu), "vdp.pk")


def _liouville(model: object, cycle: object) -> float:
    """exp of the integral of div f over one period (the product of the multipliers)."""
    from scipy.integrate import solve_ivp

    nf = numeric_field(model)
    sol = solve_ivp(
        lambda t, z: np.concatenate([nf.f(z[:2]), [np.trace(nf.jac(z[:2]))]]),
        (0.0, cycle.period),
        [*cycle.point, 0.0],
        method="DOP853",
        rtol=1e-12,
        atol=1e-12,
    )
    return math.exp(sol.y[2, -1])


def test_van_der_pol_mu_1_published_period_and_amplitude() -> None:
    model = _vdp("1")
    search = find_cycles(model)
    assert len(search.cycles) == 1
    c = search.cycles[0]
    assert c.period == pytest.approx(6.663286859323130, abs=1e-8)  # published (Hairer & Wanner)
    assert c.amplitude[0] == pytest.approx(2.008619860874843, abs=1e-8)  # published (same)
    assert abs(c.multipliers[0] - 1) < 1e-8  # the trivial multiplier (common practice)
    assert 0 < c.multipliers[1].real < 1 and c.stable  # orbitally stable (common practice)
    # computed: Liouville's formula, det M = exp(int div f dt), integrated independently
    assert c.multipliers[1].real == pytest.approx(_liouville(model, c), rel=1e-6)


def _shooting_reference(mu: float) -> tuple[float, float]:
    """Computed: scipy solve_ivp, rtol = atol = 1e-13, crossings of y = 0 downward."""
    from scipy.integrate import solve_ivp

    def event(_t: float, z: np.ndarray) -> float:
        return z[1]

    event.direction = -1
    sol = solve_ivp(
        lambda t, z: [z[1], mu * (1 - z[0] ** 2) * z[1] - z[0]],
        (0, 120),
        [2.0, 0.0],
        method="DOP853",
        rtol=1e-13,
        atol=1e-13,
        events=event,
    )
    times, states = sol.t_events[0], sol.y_events[0]
    return float(times[-1] - times[-2]), float(states[-1, 0])


def test_van_der_pol_mu_2_computed_by_shooting() -> None:
    c = find_cycles(_vdp("2")).cycles[0]
    assert c.period == pytest.approx(7.629874479674822, abs=1e-8)  # computed (shooting, above)
    assert c.amplitude[0] == pytest.approx(2.019891384667130, abs=1e-8)  # computed (same)
    period, amplitude = _shooting_reference(2.0)  # the same route, rerun here
    assert c.period == pytest.approx(period, abs=1e-8)
    assert c.amplitude[0] == pytest.approx(amplitude, abs=1e-8)
    assert c.stable and 0 < c.multipliers[1].real < 1


def test_two_rings_both_found_with_their_stability() -> None:
    search = find_cycles(parse(RINGS, "rings.pk"))
    assert len(search.cycles) == 2
    inner, outer = search.cycles
    # computed by hand: dtheta/dt = 1 gives T = 2 pi; r = 1 and r = 2 are the circles;
    # the nontrivial multiplier is exp(T g'(r)) with g(r) = r (r^2 - 1)(4 - r^2)/4:
    # g'(1) = 3/2 (repelling), g'(2) = -6 (attracting).
    for c, radius in ((inner, 1.0), (outer, 2.0)):
        assert c.period == pytest.approx(2 * math.pi, abs=1e-9)
        assert c.amplitude == pytest.approx((radius, radius), abs=1e-9)
    assert not inner.stable and outer.stable
    assert inner.multipliers[1].real == pytest.approx(math.exp(3 * math.pi), rel=1e-5)
    assert abs(outer.multipliers[1]) < 1e-10  # exp(-12 pi) = 4e-17


def test_no_periodic_orbit_anywhere() -> None:
    search = find_cycles(parse(DUFFING, "duffing.pk"))
    assert search.cycles == ()


def test_orbit_command_json_and_figures(tmp_path, capsys) -> None:
    path = tmp_path / "rings.pk"
    path.write_text(RINGS)
    rc = main(["orbit", str(path), "--json", "--quiet", "--out", str(tmp_path / "fig")])
    assert rc == 0
    data = json.loads(capsys.readouterr().out)
    assert "not proofs" in data["numerical"]
    periods = sorted(c["period"] for c in data["cycles"])
    assert periods == pytest.approx([2 * math.pi] * 2, abs=1e-9)
    stable = {round(max(c["amplitude"].values())): c["stable"] for c in data["cycles"]}
    assert stable == {1: False, 2: True}
    assert set(data["cycles"][0]) >= {"period", "amplitude", "multipliers", "stable", "point"}
    assert (tmp_path / "fig" / "orbits.png").stat().st_size > 1000
    assert (tmp_path / "fig" / "period.png").stat().st_size > 1000


def test_orbit_command_text_and_bad_input(tmp_path, capsys) -> None:
    path = tmp_path / "duffing.pk"
    path.write_text(DUFFING)
    assert main(["orbit", str(path), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "not proofs" in out and "none found" in out
    assert main(["orbit", str(tmp_path / "missing.pk")]) == 2
    assert main(["orbit", str(path), "--box", "0"]) == 2
    assert "no such file" in capsys.readouterr().err


def test_orbit_help_has_an_example(capsys) -> None:
    with pytest.raises(SystemExit) as stop:
        main(["orbit", "--help"])
    assert stop.value.code == 0
    assert "example:" in capsys.readouterr().out
