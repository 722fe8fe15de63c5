"""The portrait's axes show a certified set whole, and ignore unbounded ones."""

from __future__ import annotations

from proofkit.report.figures import PortraitPoint, PortraitRegion, _box, region_extents


def _disc(radius: float) -> PortraitRegion:
    return PortraitRegion("disc", lambda x, y: x**2 + y**2, radius**2)


def test_axes_take_in_a_large_certified_set() -> None:
    points = [PortraitPoint("origin", (0.0, 0.0), "stable focus")]
    box = _box(points, None, region_extents([_disc(5.0)], points))
    x0, x1, y0, y1 = box
    # the disc of radius 5 (common practice: it spans [-5, 5] on both axes) lies inside
    assert x0 <= -5 and x1 >= 5 and y0 <= -5 and y1 >= 5
    # and the axes do not run far beyond it
    assert x1 - x0 < 40


def test_an_unbounded_set_does_not_stretch_the_axes() -> None:
    points = [PortraitPoint("origin", (0.0, 0.0), "stable focus")]
    half_plane = PortraitRegion("half plane", lambda x, y: -x + 0 * y, 0.0)
    assert region_extents([half_plane], points) == []
    assert _box(points, None, region_extents([half_plane], points)) == _box(points, None)
