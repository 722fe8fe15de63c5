"""Exact equilibria, linearization, Routh–Hurwitz and Lyapunov equations."""
