"""The theorems a proof document names, and the target of each obligation, as text.

``THEOREMS`` maps a certificate's theorem name to (its name in words, the
statement a reader checks); ``OBLIGATIONS`` maps a theorem to the LaTeX target
of each named obligation. Data only: may import nothing but the standard
library; must never hold anything the audit did not define.
"""

from __future__ import annotations

__all__ = ["OBLIGATIONS", "THEOREMS"]

_ROUTH = (
    " Routh's theorem: when no first-column entry of the Routh array is zero, the number of "
    "sign changes in the first column equals the number of roots in the open right half plane."
)
_SOS = " Each obligation equals z'Gz with G positive semidefinite, so it is nonnegative everywhere."
THEOREMS: dict[str, tuple[str, str]] = {
    "indirect-method-stability": (
        "Lyapunov's indirect method (linearization), with the Routh–Hurwitz criterion",
        "If every eigenvalue of the Jacobian at an equilibrium has negative real part, the "
        "equilibrium of the nonlinear system is locally exponentially stable." + _ROUTH,
    ),
    "indirect-method-instability": (
        "Lyapunov's indirect method (instability), with Routh's count of right-half-plane roots",
        "If some eigenvalue of the Jacobian at an equilibrium has positive real part, the "
        "equilibrium of the nonlinear system is unstable." + _ROUTH,
    ),
    "sum-of-squares": (
        "sum-of-squares decomposition with a positive semidefinite Gram matrix",
        "If p = z'Gz with G positive semidefinite, then p = sum of d_k (l_k' z)^2 with "
        "d_k >= 0 (LDL'), so p >= 0 at every real point.",
    ),
    "lyapunov-global": (
        "Lyapunov's theorem with a radially unbounded Lyapunov function",
        "If V(y) >= eps |y|^2 and dV/dt <= -eps (|y|^2)^m along the shifted field, the "
        "equilibrium is globally asymptotically stable." + _SOS,
    ),
    "lyapunov-local": (
        "Lyapunov's theorem on a sublevel set (S-procedure)",
        "If V >= eps |y|^2 and dV/dt <= -eps (|y|^2)^m wherever V <= level (S-procedure with "
        "the multiplier s0 >= 0), the equilibrium is locally asymptotically stable." + _SOS,
    ),
    "region-of-attraction": (
        "a forward-invariant sublevel set of a Lyapunov function (S-procedure)",
        "If V is positive definite, decreases on {V <= level} and the claim's set lies inside "
        "{V <= level}, every trajectory from the set converges to the equilibrium." + _SOS,
    ),
    "lyapunov-global-in-domain": (
        "Lyapunov's theorem on a forward-invariant domain (Nagumo's condition, S-procedure)",
        "If lie(h_j) > 0 wherever the domain condition h_j = 0 (the others >= 0), the domain is "
        "forward invariant; if moreover V >= eps |y|^2 and dV/dt <= -eps (|y|^2)^m on the "
        "domain, every trajectory starting in the domain tends to the equilibrium." + _SOS,
    ),
    "lyapunov-global-in-domain-rational-field": (
        "Lyapunov's theorem on a forward-invariant domain, for the field times its denominators",
        "If the domain is forward invariant for G = f Q, V decreases along G on it, and Q > 0 "
        "on the domain, the same holds for f = G/Q (the same orbits at positive speed): every "
        "trajectory starting in the domain tends to the equilibrium." + _SOS,
    ),
    "index-no-equilibrium": (
        "index theory: a closed orbit in the plane encloses an equilibrium",
        "A convex set free of equilibria (|f|^2 > 0 on it) contains no closed orbit, since the "
        "orbit and its inside would lie in the set." + _SOS,
    ),
    "bendixson-dulac": (
        "the Bendixson–Dulac criterion",
        "If div(B f) > 0 on a simply connected (here convex) set, no closed orbit lies in it."
        + _SOS,
    ),
    "poincare-bendixson": (
        "the Poincaré–Bendixson theorem on a trapping annulus",
        "A compact annulus that trajectories enter and never leave and that holds no "
        "equilibrium contains a closed orbit." + _SOS,
    ),
    "range-indirect-method-stability": (
        "Lyapunov's indirect method over parameter boxes, with the Routh–Hurwitz conditions",
        "If the Hurwitz conditions of det(sI - J(k)) are positive on every box of a cover of "
        "the parameter ranges, every eigenvalue has negative real part for every parameter "
        "value, and the equilibrium is locally exponentially stable for each of them.",
    ),
    "range-indirect-method-instability": (
        "Lyapunov's indirect method (instability) over parameter boxes",
        "If on every box of a cover of the parameter ranges some Routh condition is negative, "
        "the Jacobian has an eigenvalue with positive real part for every parameter value.",
    ),
    "indirect-method-stability-at-a-value": (
        "Lyapunov's indirect method at one parameter value",
        "At the parameter value shown every eigenvalue has negative real part." + _ROUTH,
    ),
    "indirect-method-instability-at-a-value": (
        "Lyapunov's indirect method (instability) at one parameter value",
        "At the parameter value shown some eigenvalue has positive real part, so a claim "
        "for every value in the range is false." + _ROUTH,
    ),
    "lyapunov-global-over-range": (
        "Lyapunov's theorem over parameter boxes (one V for every parameter value)",
        "The obligations of the global Lyapunov theorem hold for every parameter value in its "
        "box, with multipliers for the box constraints." + _SOS,
    ),
    "lyapunov-local-over-range": (
        "Lyapunov's theorem on a sublevel set over parameter boxes",
        "The obligations of the local Lyapunov theorem hold for every parameter value in its "
        "box, with multipliers for the box constraints." + _SOS,
    ),
    "region-of-attraction-over-range": (
        "a forward-invariant sublevel set over parameter boxes",
        "The region-of-attraction obligations hold for every parameter value in its box, with "
        "multipliers for the box constraints." + _SOS,
    ),
    "indirect-method-stability-by-enclosure": (
        "Lyapunov's indirect method with a verified interval enclosure (Krawczyk)",
        "If a box holds exactly one equilibrium (Krawczyk's test) and for every matrix in an "
        "enclosure of the Jacobian over the box the Routh first column is positive, that "
        "equilibrium is locally exponentially stable." + _ROUTH,
    ),
    "indirect-method-instability-by-enclosure": (
        "Lyapunov's indirect method (instability) with a verified interval enclosure (Krawczyk)",
        "If a box holds exactly one equilibrium (Krawczyk's test) and for every matrix in an "
        "enclosure of the Jacobian over the box the Routh first column has a sign change, that "
        "equilibrium has an eigenvalue with positive real part and is unstable." + _ROUTH,
    ),
    "region-of-attraction-rational-field": (
        "a forward-invariant sublevel set for the field multiplied through by its denominators",
        "If {V <= level} is a certified region of attraction of G = f Q and Q > 0 on it, the "
        "trajectories of f there are those of G at the positive speed 1/Q, so every trajectory "
        "of f from the claim's set converges to the equilibrium." + _SOS,
    ),
    "index-no-equilibrium-rational-field": (
        "index theory for the field multiplied through by its denominators",
        "If G = f Q has no zero on a convex set where Q > 0, neither has f, and a closed orbit "
        "of f in the set would enclose an equilibrium." + _SOS,
    ),
    "bendixson-dulac-rational-field": (
        "the Bendixson–Dulac criterion for the field multiplied through by its denominators",
        "If div(B G) > 0 on a convex set where Q > 0, then B Q is a Dulac function for "
        "f = G/Q there, and no closed orbit of f lies in the set." + _SOS,
    ),
    "poincare-bendixson-rational-field": (
        "the Poincaré–Bendixson theorem on a trapping annulus of the field times its denominators",
        "A compact annulus that traps the orbits of G = f Q, holds no zero of G and on which "
        "Q > 0 traps the orbits of f too and contains a closed orbit of f." + _SOS,
    ),
    "range-indirect-method-stability-by-enclosure": (
        "Lyapunov's indirect method over parameter boxes, with verified interval enclosures",
        "On every piece of a tiling of the parameter box, one equilibrium lies in the state box "
        "for every parameter value (parametric Krawczyk test) and the Routh first column over "
        "the Jacobian enclosure is positive: the equilibrium is locally exponentially stable "
        "for every parameter value in the ranges." + _ROUTH,
    ),
    "range-indirect-method-instability-by-enclosure": (
        "Lyapunov's indirect method (instability) over parameter boxes, with interval enclosures",
        "On every piece of a tiling of the parameter box the Routh first column over the "
        "Jacobian enclosure has a sign change: the equilibrium is unstable for every parameter "
        "value in the ranges." + _ROUTH,
    ),
    "taylor-model-lyapunov-local": (
        "Lyapunov's theorem on a sublevel set, with Taylor models of the field (S-procedure)",
        "If V(y) >= eps |y|^2 and grad V . F_v <= -eps |y|^2 where V <= level for every vertex "
        "field F_v of the Taylor models, the derivative along the true field (a convex "
        "combination of the vertex fields) is <= -eps |y|^2 there, and the equilibrium is "
        "locally asymptotically stable." + _SOS,
    ),
    "taylor-model-region-of-attraction": (
        "a forward-invariant sublevel set, with Taylor models of the field (S-procedure)",
        "As for the local theorem, and the claim's set lies in {V <= level}, which lies in the "
        "domain: every trajectory from the claim's set converges to the equilibrium." + _SOS,
    ),
    "indirect-method-instability-at-a-value-by-enclosure": (
        "Lyapunov's indirect method (instability) at one parameter value, by interval enclosure",
        "At the parameter value shown the box holds one equilibrium and the Routh first column "
        "over the Jacobian enclosure has a sign change: it is unstable there, so a claim of "
        "stability for every value in the range is false." + _ROUTH,
    ),
    "indirect-method-stability-at-a-value-by-enclosure": (
        "Lyapunov's indirect method at one parameter value, by interval enclosure",
        "At the parameter value shown the box holds one equilibrium and the Routh first column "
        "over the Jacobian enclosure is positive: it is stable there, so a claim of "
        "instability for every value in the range is false." + _ROUTH,
    ),
    "bendixson-dulac-recast": (
        "the Bendixson–Dulac criterion with a Dulac function in recast variables",
        "If b(x) = B(z(x)) gives div(b f) > 0 on a convex (so simply connected) set, no closed "
        "orbit lies in it; the divergence is a polynomial P in the recast variables, shown "
        "positive on the set cut out by the recast constraints." + _SOS,
    ),
    "another-equilibrium-in-the-set": (
        "a second equilibrium in the claim's set",
        "An equilibrium other than the claim's lies in the claim's set (and the domain); the "
        "trajectory starting there stays there, so it does not converge to the claim's "
        "equilibrium.",
    ),
    "recast-lyapunov-local": (
        "Lyapunov's theorem on a sublevel set of the recast system (recasting, S-procedure)",
        "If V(y, z) >= eps |y|^2 and its derivative along the recast field is <= -eps |y|^2 "
        "where V <= level, on the set cut out by the recast constraints, then W(x) = "
        "V(x - x*, recast(x)) is a strict Lyapunov function and the equilibrium is locally "
        "asymptotically stable." + _SOS,
    ),
    "recast-region-of-attraction": (
        "a forward-invariant sublevel set of the recast system (recasting, S-procedure)",
        "As for the local theorem, and the claim's set lies in {W <= level}, which lies in the "
        "domain: every trajectory from the claim's set converges to the equilibrium." + _SOS,
    ),
    "counterexample-by-simulation": (
        "a counterexample: a start point in the claim's set whose trajectory does not converge",
        "The start point is exact; the trajectory is simulated (numerical evidence shown for "
        "the reader) and the exact facts the audit re-checked are listed below.",
    ),
}

OBLIGATIONS: dict[str, dict[str, str]] = {  # target of each obligation, as LaTeX
    "lyapunov-global": {
        "positive": r"V - \varepsilon |y|^2",
        "decrease": r"-\dot V - \varepsilon (|y|^2)^m",
    },
    "lyapunov-local": {
        "positive": r"V - \varepsilon |y|^2",
        "decrease": r"-\dot V - \varepsilon (|y|^2)^m - s_0 (\mathrm{level} - V)",
    },
    "region-of-attraction": {
        "positive": r"V - \varepsilon |y|^2",
        "decrease": r"-\dot V - \varepsilon (|y|^2)^m - s_0 (\mathrm{level} - V)",
        "inside": r"\mathrm{level} - V - \sum_i s_i g_i(x^* + y)",
    },
    "lyapunov-global-in-domain": {
        "positive": r"V - \varepsilon |y|^2 - \sum_j p_j h_j(x^* + y)",
        "decrease": r"-\dot V - \varepsilon (|y|^2)^m - \sum_j q_j h_j(x^* + y)",
        "invariant j": r"\dot h_j - \varepsilon + u_j h_j - \sum_k r_{jk} h_k",
    },
    "index-no-equilibrium": {"apart": r"|f|^2 - \varepsilon - \sum_i s_i g_i"},
    "bendixson-dulac": {"divergence": r"\operatorname{div}(B f) - \varepsilon - \sum_i s_i g_i"},
    "poincare-bendixson": {
        "bounded": r"W - \varepsilon |x|^2 + \mathrm{offset}",
        "outer": r"-\dot W - \varepsilon + p_o (W - \mathrm{outer})",
        "inner": r"\dot W - \varepsilon + p_i (W - \mathrm{inner})",
        "apart": r"|f|^2 - \varepsilon - a_1 (W - \mathrm{inner}) - a_2 (\mathrm{outer} - W)",
    },
}
