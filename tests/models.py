"""Model texts used by several test folders, each with where its check values come from.

One home for a model that more than one suite needs (the interface tests, the
certificate tests and the start-up benchmark); a folder's own models stay in
that folder.
"""

from __future__ import annotations

__all__ = ["DUFFING"]

# A planar system with a stable origin and two saddles at x = +-1 (computed by hand:
# J(0) = [[0, 1], [-1, -1]], a stable focus; J(+-1) = [[0, 1], [2, -1]], det -2 < 0, saddles).
DUFFING = """\
system duffing_like
state x, y
dx/dt = y
dy/dt = -x + x^3 - y
equilibrium origin at x = 0, y = 0
equilibrium right at x = 1, y = 0
claim origin stable
claim right unstable
"""
