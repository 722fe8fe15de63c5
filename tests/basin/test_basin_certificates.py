"""Basin certificates: every one audits, every mutation is rejected (audit and own check)."""

from __future__ import annotations

import copy
import json
from fractions import Fraction

import pytest

import proofkit
from proofkit.audit import audit_text
from proofkit.proofs import basin


def _mutants(cert: dict):
    """(name, mutated certificate) pairs; each breaks one fact the theorem needs."""
    ev_path = ("claims", -1, "evidence")

    def ev(c):
        return c["claims"][-1]["evidence"]

    def level_up(c):
        lv = Fraction(ev(c)["numbers"]["level"])
        ev(c)["numbers"]["level"] = str(lv * Fraction(101, 100))

    def v_coeff(c):
        term = ev(c)["V"][0]
        term[1] = str(Fraction(term[1]) * Fraction(9, 10))

    def gram_entry(c):
        g = ev(c)["squares"]["decrease"]["gram"]
        g[0][0] = str(Fraction(g[0][0]) + Fraction(1, 10**6))

    def drop(c):
        del ev(c)["squares"]["positive"]

    def swap(c):
        sq = ev(c)["squares"]
        sq["positive"], sq["s0"] = sq["s0"], sq["positive"]

    def eps_zero(c):
        ev(c)["numbers"]["eps"] = "0"

    def s0_coeff(c):
        term = ev(c)["multipliers"]["s0"][0]
        term[1] = str(Fraction(term[1]) * 2)

    def semidefinite_v(c):  # V = x1^2 + x2^2: lie(V) only semidefinite
        ev(c)["V"] = [[[2, 0], "1"], [[0, 2], "1"]]

    del ev_path
    for f in (level_up, v_coeff, gram_entry, drop, swap, eps_zero, s0_coeff, semidefinite_v):
        m = copy.deepcopy(cert)
        f(m)
        yield f.__name__, m


def test_certificate_audits(oscillator_run):
    report = audit_text(oscillator_run.text)
    assert report.claims[-1].status == "proved"
    assert report.claims[-1].theorem == "region-of-attraction"


@pytest.mark.parametrize("which", range(8))
def test_mutated_certificates_are_rejected(oscillator_run, which):
    name, mutant = list(_mutants(oscillator_run.certificate))[which]
    verdict = audit_text(json.dumps(mutant)).claims[-1]
    assert verdict.status != "proved", name


SEATS = [
    ("open", (1, Fraction(1, 2))),
    pytest.param("closed", (-1, Fraction(-1, 2)), marks=pytest.mark.slow),
]


@pytest.mark.parametrize("name, point", SEATS)
def test_bistable_model_each_seat_separately(name, point):
    text = """\
system latch
state x, y
dx/dt = 3*x/2 - x^3 - y
dy/dt = x - 2*y
equilibrium open at x = 1, y = 1/2
equilibrium closed at x = -1, y = -1/2
equilibrium middle at x = 0, y = 0
"""
    model = proofkit.parse(text, "latch.pk")
    px, py = point
    run = basin.estimate_basin(model, name, degree=2, seconds_per_degree=3)
    assert run.status == "proved", run.reason
    ev = run.certificate["claims"][-1]["evidence"]
    level = Fraction(ev["numbers"]["level"])
    v_mid = sum(Fraction(c) * (-px) ** e[0] * (-py) ** e[1] for e, c in ev["V"])
    assert v_mid > level  # the saddle (deviation -x* from this seat) is outside, exactly


def test_unstable_equilibrium_is_not_proved():
    text = "state x, y\ndx/dt = x + y^2\ndy/dt = -y\nequilibrium origin at x = 0, y = 0\n"
    run = basin.estimate_basin(proofkit.parse(text, "u.pk"), "origin", degree=2)
    assert run.status == "not proved"
    assert run.reason
