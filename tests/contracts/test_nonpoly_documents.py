"""Proof documents of the non-polynomial steps: what a reviewer reads, and that it is true.

The recast section must describe exactly the system the audit derives (its
variables, substitutions, derivative rules, circle equalities and Taylor
inequalities): it is compared with the audit's own derivation and with numpy.
The rational-field section must state Q and G = f Q correctly (checked against
the model's formula in numpy); the enclosure section shows the box, the
Krawczyk condition and Routh data containing the true values; a method no
section knows gets an honest listing. Check values carry their source.
"""

from __future__ import annotations

import json
import math
from fractions import Fraction
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest
import sympy as sp

import proofkit
from proofkit.audit import audit_text
from proofkit.certificate import model_section, read
from proofkit.proofs import prove_model
from proofkit.report import DocumentMeta, render_latex, render_markdown

ROOT = Path(__file__).resolve().parents[2]

# invented: a field with every recast atom kind; f(0) = -sin(pi/6) + 1/2 = 0
MIXED = """system mixed
state x, y
dx/dt = y
dy/dt = -sin(x + pi/6) + 1/2 - y*exp(x - y) + y*cos(x) - tanh(x + y)
equilibrium o at x = 0, y = 0
"""

# the chemostat of tests/nonpoly (Monod uptake s/(1 + s), D = 1/2, feed 4), with a basin claim
CHEMOSTAT = """system chemostat
parameter D = 1/2
parameter ks = 1
parameter s0 = 4
state s, b
let growth = s/(ks + s)
ds/dt = D*(s0 - s) - growth*b
db/dt = growth*b - D*b
equilibrium coexist at s = 1, b = 3
domain s >= 0 and b >= 0 and s <= 10 and b <= 10
claim coexist attracts (s - 1)^2 + (b - 3)^2 <= 1/4
"""


def _meta() -> DocumentMeta:
    return DocumentMeta(command="proofkit prove m.pk", certificate_sha256="0" * 64, version="t")


@pytest.fixture(scope="module")
def swing() -> tuple[dict, str]:
    text = (ROOT / "worked" / "swing_machine.certificate.json").read_text(encoding="utf-8")
    cert = json.loads(text)
    return cert, render_markdown(cert, audit_text(text, 300), _meta())


def test_recast_document_names_every_step(swing) -> None:
    _cert, md = swing
    part = md[md.index("## Claim 2") :]
    for shown in (
        "| $S_{1}$ | $\\sin \\delta_{1}$ | $\\delta_{1} = d$ |",
        "| $C_{1}$ | $\\cos \\delta_{1} - 1$ | $\\delta_{1} = d$ |",
        "\\sin\\left(d + \\frac{\\pi}{3}\\right) = \\sin(\\frac{\\pi}{3})",  # angle addition
        "\\dot S_{1} = (C_{1} + 1)\\, D_{1}",  # derivative rules
        "\\text{circle 1}:\\; C_{1}^{2} + 2 C_{1} + S_{1}^{2} = 0",
        "\\text{taylor 1.4}",
        "\\sqrt{3} \\in [",  # the enclosure, and why both ends suffice
        "checking both ends suffices",
        "| decrease lo |",
        "| decrease hi |",
        "W(x) = V(x - x*, recast(x))",
    ):
        assert shown in part, shown
    assert "u_{1}" not in md and "u1" not in md  # no anonymous variables any more
    assert len(md) < 1_000_000  # long LDL' squares are described, not printed


def _system(cert: dict, order: int):
    from proofkit.report._claims_recast import _System
    from proofkit.report._trees import recast_view

    comps = cert["model"]["expressions"]["components"]
    states = list(cert["model"]["states"])
    view = recast_view(comps, len(states), ["0"] * len(states))
    sys = _System(view, states, ["0"] * len(states), [])
    return sys, sys.field(comps), sys.constraints(order)


def test_recast_description_is_the_audits_derivation() -> None:
    from proofkit.audit._recast_field import derive
    from proofkit.audit.enclosures import read_expressions
    from proofkit.audit.numbers import Num

    model = proofkit.parse(MIXED, "mixed.pk")
    cert = {"model": model_section(model)}
    exprs = read_expressions(cert["model"]["expressions"], ["x", "y"], [])
    for order in (1, 2):
        audit = derive(
            exprs, [Num.of(0)] * 2, [], {"taylor_order": order, "enclosure": ["1", "2"]}, "e"
        )
        sys, field, (eqs, ineqs) = _system(cert, order)
        assert tuple(sys.names[2:]) == audit.names[2:] == ("S1", "C1", "E1", "T1")
        assert [h for h, _e in eqs] == [h for h, _p in audit.equalities]
        assert [g for g, _e in ineqs] == [g for g, _p in audit.inequalities]
        syms = sys.ys + sys.zs
        deltas = {sp.Symbol(f"delta_{k + 1}", real=True): d for k, d in enumerate(sys.deltas)}
        ours = [*field, *(e.subs(deltas) for _h, e in eqs), *(e.subs(deltas) for _g, e in ineqs)]
        theirs = [
            *audit.field,
            *(p for _h, p in audit.equalities),
            *(p for _g, p in audit.inequalities),
        ]
        for mine, poly in zip(ours, theirs, strict=True):
            assert _as_pairs(mine, syms) == {e: (c.a, c.b) for e, c in poly.items()}


def _as_pairs(expr: sp.Expr, syms: list[sp.Symbol]) -> dict:
    out = {}
    for exps, c in sp.Poly(sp.expand(expr), *syms).terms():
        b = sp.expand(c).coeff(sp.sqrt(3))
        a = sp.expand(c - b * sp.sqrt(3))
        out[tuple(exps)] = (Fraction(str(a)), Fraction(str(b)))
    return out


def test_recast_field_and_bounds_agree_with_numpy() -> None:
    model = proofkit.parse(MIXED, "mixed.pk")
    sys, field, (_eqs, ineqs) = _system({"model": model_section(model)}, 2)
    rng = np.random.default_rng(5)
    syms = sys.ys + sys.zs
    fns = [sp.lambdify(syms, f, "numpy") for f in field]
    for x, y in rng.uniform(-2.5, 2.5, size=(20, 2)):
        # computed (numpy): the model's formula, the recast variables at (x, y), chain rule
        z = [x, y, math.sin(x), math.cos(x) - 1, math.exp(x - y) - 1, math.tanh(x + y)]
        f2 = -math.sin(x + math.pi / 6) + 0.5 - y * math.exp(x - y) + y * math.cos(x)
        f2 -= math.tanh(x + y)
        dx, dy = y, f2
        expected = [dx, dy, math.cos(x) * dx, -math.sin(x) * dx]
        expected += [math.exp(x - y) * (dx - dy), (1 - math.tanh(x + y) ** 2) * (dx + dy)]
        assert [fn(*z) for fn in fns] == pytest.approx(expected, abs=1e-9)
    # computed (numpy): every stated inequality holds for every real argument
    d = np.linspace(-25.0, 25.0, 20001)
    for label, g in ineqs:
        (delta,) = [s for s in g.free_symbols if s.name.startswith("delta")]
        k = int(delta.name.split("_")[1]) - 1
        kind = sys.kind(k)[0]
        s, c = sys.variable(k)
        subs = {s: np.sin(d) if kind == "trig" else np.expm1(d) if kind == "exp" else np.tanh(d)}
        if c is not None:
            subs[c] = np.cos(d) - 1
        fn = sp.lambdify([delta, *subs], g, "numpy")
        with np.errstate(over="ignore", invalid="ignore"):
            vals = np.asarray(fn(d, *subs.values()), dtype=float)
        ok = np.isfinite(vals)
        assert np.all(vals[ok] >= -1e-9 * (1 + np.abs(d[ok]) ** 8)), label


def test_enclosure_document_shows_box_krawczyk_and_routh(swing) -> None:
    _cert, md = swing
    part = md[md.index("## Claim 1") : md.index("## Claim 2")]
    assert "| state | box X |" in part and "K(X) = m - Y f(m) + (I - Y J(X))(X - m)" in part
    assert "\\partial f_{2} / \\partial d" in part and "[+, +, +]" in part
    # computed by hand: J(0) = [[0, 1], [-cos(pi/3), -1/2]], so -(J11 + J22) = 1/2 and
    # J11 J22 - J12 J21 = cos(pi/3) = 1/2; the shown intervals must contain them
    lo, hi = _last_two_intervals(part)
    assert lo[0] <= Fraction(1, 2) <= lo[1] and hi[0] <= Fraction(1, 2) <= hi[1]


def _last_two_intervals(text: str) -> list[tuple[Fraction, Fraction]]:
    import re

    line = next(ln for ln in text.splitlines() if ln.startswith("For two states"))
    found = re.findall(r"\$\[(.*?)\] \\approx", line)
    return [tuple(_tex_fraction(x) for x in f.split(", ")) for f in found[-2:]]


def _tex_fraction(tex: str) -> Fraction:
    import re

    m = re.fullmatch(r"(-?)\\frac\{(\d+)\}\{(\d+)\}", tex.strip())
    if m:
        return Fraction(int(m.group(2)), int(m.group(3))) * (-1 if m.group(1) else 1)
    return Fraction(tex.strip())


@pytest.fixture(scope="module")
def chemostat():
    run = prove_model(proofkit.parse(CHEMOSTAT, "chemostat.pk"))
    assert run.outcomes[0].status == "proved" and run.outcomes[0].method == "sublevel-set-rational"
    return run


def test_rational_basin_document_states_q_g_and_the_positivity(chemostat) -> None:
    md = render_markdown(chemostat.certificate, chemostat.audit, _meta())
    part = md[md.index("## Claim 1") :]
    assert "Q = 2 s + 2" in part  # 2 (ks + s) with ks = 1, computed by hand from the model
    assert "reparametrised" in part and "d\\tau = dt / Q(x(t))" in part
    assert "Q(x^* + y) - \\varepsilon_Q - t\\,(\\mathrm{level} - V)" in part
    assert "\\dot V = \\nabla V \\cdot G(x^* + y)" in part
    assert "\\frac{-s^{2} - 2 s b + 3 s + 4}{2 s + 2}" in md  # the field as N/D
    tex = render_latex(chemostat.certificate, chemostat.audit, _meta())
    assert "Q = 2 s + 2" in tex


def test_rational_g_is_f_times_q_in_numpy(chemostat) -> None:
    from proofkit.report._claims_rational import _q_and_g

    view = read(chemostat.certificate)
    xs, q, g = _q_and_g(view.model, ["1", "3"])
    rng = np.random.default_rng(3)
    for s, b in rng.uniform(0.1, 9.0, size=(12, 2)):
        # computed (numpy): the model's formula with D = 1/2, ks = 1, s0 = 4
        f = (0.5 * (4 - s) - s / (1 + s) * b, s / (1 + s) * b - 0.5 * b)
        qv = float(q.subs({xs[0]: s, xs[1]: b}))
        assert qv > 0
        got = [float(gi.subs({xs[0]: s, xs[1]: b})) for gi in g]
        assert got == pytest.approx([qv * fi for fi in f], rel=1e-12)


def test_an_unknown_method_is_listed_honestly() -> None:
    from proofkit.report._claims import claim_blocks
    from proofkit.report.writers import to_markdown

    entry = {
        "claim": {"kind": "stable", "equilibrium": {"name": "o", "point": ["0", "0"]},
                  "set": None, "scope": "nominal"},
        "statement": "o stable", "status": "proved", "method": "mystery-method",
        "theorem": "mystery-theorem",
        "evidence": {"V": [[[2, 0], "1"]], "parts": {"squares": {"inner": {}}},
                     "squares": {"positive": {"basis": [[1, 0]], "gram": [["1"]]}}},
    }  # fmt: skip
    view = read({"proofkit_certificate": 2, "model": None, "claims": [entry]})
    verdict = SimpleNamespace(status="proved", checked=("the audit's hypothesis",))
    md = to_markdown(claim_blocks(view.claims[0], verdict, None, []))
    assert "Method mystery-method, theorem mystery-theorem" in md
    assert "no line-by-line section" in md and "parts: inner, positive" in md
    assert "- [x] the audit's hypothesis" in md


# van der Pol (mu = 1) slowed by 1/(1 + x^2), as in tests/nonpoly_cycles (where the sources
# of its cycle's amplitude are named): the same orbits, so the cycle lies in the disc
SLOW_VDP = """system van_der_pol_slowed
state x, y
dx/dt = y/(1 + x^2)
dy/dt = ((1 - x^2)*y - x)/(1 + x^2)
claim cycle in x^2 + y^2 <= 16
"""


def test_rational_cycle_document_states_q_g_and_the_annulus() -> None:
    from proofkit.report._claims_rational import _q_and_g

    run = prove_model(proofkit.parse(SLOW_VDP, "vdp.pk"))
    assert run.outcomes[0].status == "proved" and run.outcomes[0].method == "annulus-rational"
    md = render_markdown(run.certificate, run.audit, _meta())
    assert "Q = x^{2} + 1" in md  # computed by hand: the common denominator
    assert "G_{2} &= -x^{2} y - x + y" in md  # the van der Pol field itself
    assert "Q - \\varepsilon_Q - t_1 (W - \\mathrm{inner}) - t_2 (\\mathrm{outer} - W)" in md
    assert "traversed at another (positive) speed" in md
    assert "the Poincaré–Bendixson theorem on a trapping annulus of the field" in md
    view = read(run.certificate)
    sign = run.certificate["claims"][0]["evidence"]["denominator"]["sign"]
    xs, q, g = _q_and_g(view.model, None, sign)
    for x, y in np.random.default_rng(2).uniform(-4.0, 4.0, size=(10, 2)):
        # computed (numpy): the model's formula times Q
        f = (y / (1 + x * x), ((1 - x * x) * y - x) / (1 + x * x))
        qv = float(q.subs({xs[0]: x, xs[1]: y}))
        got = [float(gi.subs({xs[0]: x, xs[1]: y})) for gi in g]
        assert got == pytest.approx([qv * fi for fi in f], rel=1e-12)


# the damped swing equation with the damping over a range (as in tests/ranges)
SWING_RANGE = """system swing_range
parameter damping = 1/2 in [1/5, 1]
state d, w
dd/dt = w
dw/dt = -damping*w - (sin(d + pi/3) - sin(pi/3))
equilibrium saddle at d = pi/3, w = 0
claim saddle unstable
"""


def test_range_enclosure_document_lists_the_pieces() -> None:
    run = prove_model(proofkit.parse(SWING_RANGE, "swing_range.pk"))
    assert run.outcomes[0].method == "range-enclosure"
    md = render_markdown(run.certificate, run.audit, _meta())
    assert "Equilibrium saddle: $d = \\frac{\\pi}{3}, w = 0$" in md  # the exact point
    assert "| piece | parameters P | state box X | Routh signs |" in md
    pieces = run.certificate["claims"][0]["evidence"]["pieces"]
    rows = [ln for ln in md.splitlines() if ln.startswith("| ") and "\\times" in ln]
    assert len(rows) == len(pieces) >= 1
    # computed by hand: at d = pi/3, J = [[0, 1], [1/2, -c]], det(sI - J) = s^2 + c s - 1/2,
    # Routh first column 1, c, -1/2: one sign change for every damping c > 0
    assert all(row.rstrip(" |").endswith("+, +, -") for row in rows)


def test_taylor_model_section_states_the_models_and_the_field() -> None:
    """Rendering only (the audit's verdict is given): the models and F(y, u) as stated."""
    from proofkit.report._claims import claim_blocks
    from proofkit.report.writers import to_markdown

    model = proofkit.parse(MIXED.replace("- y*exp(x - y) + y*cos(x) - tanh(x + y)", ""), "p.pk")
    section = model_section(model)
    sin_model = {
        "function": "sin",
        "argument": [[[1, 0], "1"]],
        "order": 3,
        "polynomial": ["0", "1", "0", "-1/6"],
        "remainder": "1/24",
    }
    cos_model = {
        "function": "cos",
        "argument": [[[1, 0], "1"]],
        "order": 2,
        "polynomial": ["1", "0", "-1/2"],
        "remainder": "1/6",
    }
    entry = {
        "claim": {"kind": "stable", "equilibrium": {"name": "o", "point": ["0", "0"]},
                  "set": None, "scope": "nominal"},
        "statement": "o stable", "status": "proved", "method": "taylor-model",
        "theorem": "taylor-model-lyapunov-local",
        "evidence": {"taylor_model": {"atoms": [sin_model, cos_model], "enclosure": ["1", "2"]},
                     "V": [[[2, 0], "1"], [[0, 2], "1"]],
                     "numbers": {"eps": "1/1000", "level": "1"},
                     "multipliers": {"decrease lo (+1, +1) * level": [[[0, 0], "1"]]},
                     "squares": {"positive": {"basis": [[1, 0]], "gram": [["1"]]},
                                 "decrease lo (+1, +1)": {"basis": [[1, 0]], "gram": [["1"]]},
                                 "decrease lo (+1, +1) * level": {"basis": [[0, 0]],
                                                                  "gram": [["1"]]}}},
    }  # fmt: skip
    view = read({"proofkit_certificate": 2, "model": section, "claims": [entry]})
    verdict = SimpleNamespace(status="proved", checked=("checked",))
    raw = {"expressions": section["expressions"]}
    md = to_markdown(claim_blocks(view.claims[0], verdict, view.model, [], raw))
    assert "| $\\sin \\delta_{1}$ | $\\delta_{1} = x$ |" in md
    assert "\\frac{1}{24}\\, \\delta_{1}^{4} u_{1}" in md
    # computed by hand: -sin(x + pi/6) + 1/2 = -(sqrt3/2) sin x - (1/2)(cos x - 1), with
    # sin x = x - x^3/6 + x^4 u1/24 and cos x - 1 = -x^2/2 + x^3 u2/6
    assert "\\dot{y} &= \\left(-\\frac{1}{48}\\sqrt{3}\\right) x^{4} u_{1}" in md
    assert "u_{1} - \\frac{1}{12} x^{3} u_{2} + \\left(\\frac{1}{12}\\sqrt{3}\\right) x^{3}" in md
    assert "| decrease lo (+1, +1) | $-\\nabla V \\cdot F_{\\mathrm{lo (+1, +1)}}(y)" in md
    assert "Why the vertex fields suffice" in md and "plain sublevel set in the states" in md


def test_rational_basin_picture_draws_the_reparametrized_sublevel_set(chemostat) -> None:
    from proofkit.report.figures import certificate_portrait_data

    data = certificate_portrait_data(chemostat.certificate)
    assert data is not None
    [region] = data.regions
    [outline] = data.outlines
    assert region.label == "certified region of attraction of coexist"
    angle = np.linspace(0.0, 2 * math.pi, 48, endpoint=False)
    disc = (1 + 0.5 * np.cos(angle), 3 + 0.5 * np.sin(angle))  # the claim's circle
    assert float(np.max(region.func(*disc))) <= region.level  # the claim's set is inside
    assert float(np.max(outline.func(*disc))) == pytest.approx(0.0, abs=1e-12)
    # computed by hand: the washout point (s, b) = (4, 0) is another equilibrium of the
    # chemostat, so no certified region of coexist may hold it
    assert region.func(4.0, 0.0) > region.level


def test_a_description_that_cannot_be_rebuilt_falls_back_to_the_listing(swing) -> None:
    import copy

    from proofkit.report._claims import claim_blocks
    from proofkit.report.writers import to_markdown

    cert, _md = swing
    bad = copy.deepcopy(cert)
    ev = bad["claims"][1]["evidence"]
    ev["V"] = [[[2, 0, 0, 0, 1], "1"]]  # one variable more than the recast system has
    view = read(bad)
    verdict = SimpleNamespace(status="proved", checked=("checked",))
    raw = {"expressions": bad["model"]["expressions"]}
    md = to_markdown(claim_blocks(view.claims[1], verdict, view.model, [], raw))
    assert "could not be rebuilt" in md and "Method recast, theorem recast-region" in md


# the damped swing equation of the non-polynomial issue (saddle at d = pi/3), a disc claim
SWING_DISC = """system swing_disc
state d, w
dd/dt = w
dw/dt = -w/2 - (sin(d + pi/3) - sin(pi/3))
equilibrium o at d = 0, w = 0
claim o attracts d^2 + w^2 <= 1/4
"""


def test_taylor_model_document_and_picture_of_an_audited_swing_proof() -> None:
    from proofkit.certificate import dumps, new_certificate
    from proofkit.proofs.taylor_model import attempt
    from proofkit.report.figures import certificate_portrait_data

    model = proofkit.parse(SWING_DISC, "swing_disc.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["method"] == "taylor-model"
    cert_text = dumps(new_certificate(model_section(model), [found.entry]))
    report = audit_text(cert_text, 60)
    assert report.claims[0].status == "proved", report.claims[0].message
    md = render_markdown(json.loads(cert_text), report, _meta())
    assert "| $\\sin \\delta_{1}$ | $\\delta_{1} = d$ |" in md
    assert "The field in the deviation y with the models, F(y, u):" in md
    assert "Why the vertex fields suffice" in md and "| decrease lo (+1, +1) |" in md
    data = certificate_portrait_data(json.loads(cert_text))
    assert data is not None
    [region] = data.regions
    angle = np.linspace(0.0, 2 * math.pi, 48, endpoint=False)
    assert float(np.max(region.func(0.5 * np.cos(angle), 0.5 * np.sin(angle)))) <= region.level
    # computed (sin(d + pi/3) = sin(pi/3) at d = pi/3): the saddle is outside the certified set
    assert region.func(math.pi / 3, 0.0) > region.level


# invented (as in tests/nonpoly): Q = 2 - x >= 1 on the box, the field points inward on its faces
RATIONAL_BOX = """state x, y
dx/dt = -x/(2 - x)
dy/dt = -y + x^2/(2 - x)
domain x >= -1 and x <= 1 and y >= -2 and y <= 2
equilibrium o at x = 0, y = 0
claim o globally stable
"""


def test_rational_global_stability_in_a_domain_is_explained() -> None:
    run = prove_model(proofkit.parse(RATIONAL_BOX, "rational_box.pk"))
    assert run.outcomes[0].method == "lyapunov-domain-rational"
    md = render_markdown(run.certificate, run.audit, _meta())
    assert "Q = -x + 2" in md  # computed by hand: the one denominator, positive at 0
    assert "Q(x^* + y) - \\varepsilon_Q - \\sum_j w_j\\, h_j(x^* + y)" in md
    assert "Obligation invariant 1: $\\dot h_j - \\varepsilon + u_j h_j" in md
    assert "Lyapunov's theorem on a forward-invariant domain, for the field times" in md
    assert "could not be rebuilt" not in md and "no line-by-line section" not in md


def test_recast_divergence_is_the_divergence_of_b_f_in_numpy() -> None:
    from proofkit.report._claims_recast_cycles import divergence

    model = proofkit.parse(MIXED, "mixed.pk")
    sys, field, _constraints = _system({"model": model_section(model)}, 1)
    x, y = sys.ys
    s1, c1, e1, t1 = sys.zs
    b = 1 + x * s1 + y * c1 * e1 + t1**2 * x  # an arbitrary Dulac function over z
    p = sp.lambdify(sys.ys + sys.zs, divergence(sys, field[:2], b), "numpy")

    def b_times_f(u: float, v: float) -> tuple[float, float]:
        z = (u, v, math.sin(u), math.cos(u) - 1, math.exp(u - v) - 1, math.tanh(u + v))
        bz = float(sp.lambdify(sys.ys + sys.zs, b)(*z))
        f2 = -math.sin(u + math.pi / 6) + 0.5 - v * math.exp(u - v) + v * math.cos(u)
        return bz * v, bz * (f2 - math.tanh(u + v))

    h = 1e-6
    for u, v in np.random.default_rng(7).uniform(-1.5, 1.5, size=(8, 2)):
        # computed (numpy central differences): div(b f) at (u, v)
        div = (b_times_f(u + h, v)[0] - b_times_f(u - h, v)[0]) / (2 * h)
        div += (b_times_f(u, v + h)[1] - b_times_f(u, v - h)[1]) / (2 * h)
        z = (u, v, math.sin(u), math.cos(u) - 1, math.exp(u - v) - 1, math.tanh(u + v))
        assert p(*z) == pytest.approx(div, rel=1e-6, abs=1e-6)


# the damped pendulum (invented numbers): div f = -1/2 < 0, so no periodic orbit anywhere
PENDULUM_DISC = """system pend
state x, v
dx/dt = v
dv/dt = -sin(x) - v/2
claim no cycle in x^2 + v^2 <= 4
"""


def test_recast_dulac_document() -> None:
    run = prove_model(proofkit.parse(PENDULUM_DISC, "pend.pk"))
    assert run.outcomes[0].method == "dulac-recast"
    md = render_markdown(run.certificate, run.audit, _meta())
    assert "The recast system is built around the zero $x = 0, v = 0$." in md
    assert "| divergence" in md and "$P(z) - \\varepsilon$" in md
    assert "Divergence P of b f" in md and "Bendixson–Dulac criterion (Green's theorem)" in md


# exp(x1) - 1 restoring force (as in tests/taylor): the energy x2^2/2 + exp(x1) - 1 - x1
# decreases along the field (computed by hand), so the origin attracts a small disc
EXP_WELL = """state x1, x2
dx1/dt = x2
dx2/dt = -x2 - (exp(x1) - 1)
equilibrium O at x1 = 0, x2 = 0
claim O attracts x1^2 + x2^2 <= 1/4
"""


def test_taylor_model_with_an_exp_atom_shows_its_bound() -> None:
    from proofkit.certificate import dumps, new_certificate
    from proofkit.proofs.taylor_model import attempt

    model = proofkit.parse(EXP_WELL, "well.pk")
    found = attempt(model, model.claims[0], lambda _m: None)
    assert found is not None and found.entry["method"] == "taylor-model"
    cert_text = dumps(new_certificate(model_section(model), [found.entry]))
    report = audit_text(cert_text, 60)
    assert report.claims[0].status == "proved", report.claims[0].message
    md = render_markdown(json.loads(cert_text), report, _meta())
    assert "| $\\exp \\delta_{1}$ | $\\delta_{1} = x_{1}$ |" in md
    assert "0 \\le u_{1} \\le 1" in md and "\\text{where } \\delta_{1} \\le D =" in md
    assert "| bound 1 | $D - \\delta(y)\\; (\\text{exp atom 1})$ | level |" in md
    # computed by hand: exp(x1) - 1 = x1 + x1^2/2 + ... + r x1^(k+1) u1, so F's second row
    # holds the remainder term, -x1^2/2, -x1 and -x2
    k = found.entry["evidence"]["taylor_model"]["atoms"][0]["order"]
    row = next(ln for ln in md.splitlines() if f"x_{{1}}^{{{k + 1}}} u_{{1}}" in ln)
    assert "\\frac{1}{2} x_{1}^{2} - x_{1} - x_{2}" in row
