"""Restraint zones: dwell, nesting and outside time on traces worked by hand; the
point-in-polygon test checked against shapely (reference library)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shapely.geometry import Point, Polygon

from checker.errors import InputError
from checker.limits import Zone, load_limits
from checker.zones import overall_highest, seat_zones


def box(gx: float, lo: float, hi: float) -> np.ndarray:
    return np.array([[-gx, lo], [gx, lo], [gx, hi], [-gx, hi]])


ZONES = (Zone("calm", 1, box(0.5, 0.0, 2.0), 0.2), Zone("firm", 2, box(1.0, -0.5, 3.5), 0.2),
         Zone("full", 3, box(2.0, -1.5, 5.0), 0.2))


def trace(parts):
    """(gx, gz, seconds) pieces at 100 Hz."""
    gx = np.concatenate([np.full(int(round(d * 100)), a) for a, _, d in parts])
    gz = np.concatenate([np.full(int(round(d * 100)), b) for _, b, d in parts])
    return gx, gz, np.arange(len(gx)) / 100.0


def test_nested_zones_dwell_and_outside_worked_by_hand():
    # rest 1 s (calm), 0.3 s at Gz 3 (firm: counts), 1 s rest, 0.1 s at Gz 4.5 (full, too
    # short), 0.05 s at Gz 6 (outside every zone), rest
    gx, gz, t = trace([(0, 1, 1.0), (0, 3, 0.3), (0, 1, 1.0), (0, 4.5, 0.1), (0, 6, 0.05),
                       (0, 1, 1.0)])
    s = seat_zones(gx, gz, t, ZONES, station=t * 10.0)
    assert [v.zone for v in s.reached] == ["calm", "firm"]
    firm = s.highest
    assert (firm.t_start, firm.duration_s) == pytest.approx((1.0, 0.3))
    assert firm.s_start_m == pytest.approx(10.0)
    # "full" is held 0.1 s plus the 0.05 s beyond it: 0.15 s < 0.2 s dwell
    assert s.outside_s == pytest.approx(0.05) and s.outside_t_start == pytest.approx(2.4)
    longer = seat_zones(*trace([(0, 1, 1.0), (0, 4.5, 0.1), (0, 6, 0.1), (0, 1, 1.0)]),
                        ZONES)
    assert longer.highest.zone == "full"  # 0.1 s in it and 0.1 s beyond: the dwell is met
    best = overall_highest({"a": s, "b": longer})
    assert best[0] == "b"


def test_rest_reaches_only_the_first_zone_and_empty_diagram_reaches_none():
    gx, gz, t = trace([(0, 1, 2.0)])
    assert [v.zone for v in seat_zones(gx, gz, t, ZONES).reached] == ["calm"]
    assert seat_zones(gx, gz, t, ()).highest is None


@settings(max_examples=30, deadline=None)
@given(st.lists(st.tuples(st.floats(-3, 3), st.floats(-3, 6)), min_size=5, max_size=60))
def test_zone_of_each_sample_matches_shapely(points):
    pts = np.array(points)
    t = np.arange(len(pts)) * 0.01
    zones = tuple(Zone(z.name, z.order, z.vertices, 0.0) for z in ZONES)
    s = seat_zones(pts[:, 0], pts[:, 1], t, zones)
    polys = [Polygon(z.vertices) for z in zones]
    # the boundary counts as inside, within the same 1e-9 as checker.limits.contains
    level = [min([k for k, p in enumerate(polys) if p.distance(Point(x, y)) <= 1e-9],
                 default=3)
             for x, y in pts]
    assert [v.zone for v in s.reached] == [z.name for k, z in enumerate(zones)
                                           if max(level) >= k]


def test_zones_in_a_limits_file_and_their_errors(tmp_path):
    head = '[meta]\ntitle = "t"\n'
    zone = '[[zones]]\nname = "{n}"\norder = {o}\ndwell_s = 0.2\nvertices = {v}\n'
    ok = zone.format(n="a", o=2, v="[[-1, 0], [1, 0], [1, 2], [-1, 2]]")
    path = tmp_path / "l.toml"
    path.write_text(head + ok + zone.format(n="b", o=1, v="[[-2, -1], [2, -1], [0, 4]]"))
    loaded = load_limits(path)
    assert [z.name for z in loaded.zones] == ["b", "a"]  # by order
    path.write_text(head + ok + zone.format(n="c", o=2, v="[[-2, -1], [2, -1], [0, 4]]"))
    with pytest.raises(InputError, match="order 2 is used"):
        load_limits(path)
    path.write_text(head + zone.format(n="x", o=1, v="[[0, 0], [1, 1], [1, 0], [0, 1]]"))
    with pytest.raises(InputError, match="self-intersecting"):
        load_limits(path)
    # 1e200 g squared overflows the boundary distance: zone vertices share the envelopes' bound
    path.write_text(head + zone.format(n="y", o=1, v="[[-1e200, -1], [1, -1], [0, 4]]"))
    with pytest.raises(InputError, match="beyond 20 g"):
        load_limits(path)


def test_ellipse_screen_classifies_as_the_polygon_test():
    # Points inside the inscribed ellipse are taken as inside without the polygon test; the
    # answer must equal checker.limits.contains (itself checked against shapely) everywhere.
    from checker.limits import contains
    from checker.zones import _inside

    rng = np.random.default_rng(3)
    theta = np.linspace(0, 2 * np.pi, 9, endpoint=False)
    for _ in range(30):
        radius = rng.uniform(0.4, 2.5, 9)
        poly = np.column_stack([radius * np.cos(theta), 1.0 + radius * np.sin(theta)])
        pts = rng.normal([0.0, 1.0], rng.uniform(0.2, 2.0), (2000, 2))
        np.testing.assert_array_equal(_inside(poly, pts), contains(poly, pts))


def test_zone_figure_draws_the_seats_its_table_lists():
    # every seat of the demo's revision B reaches the same zone: the figure must still draw
    # the three seats the table ranks first (highest zone, then earliest), not the first
    # three seats in train order
    from checker.application import check_layout
    from checker.report.aids_figures import aids_section
    from checker.resources import demo_folder

    demo = demo_folder()
    result = check_layout(demo / "thistle_comet_revB.csv",
                          train=demo / "thistle_comet_train.toml",
                          operation=demo / "thistle_comet_revB.operation.toml")
    drawn = []

    def record(function, *args):
        drawn.append((function.__name__, args))
        return ""

    section = aids_section(result.evaluation, draw=record)
    rows = section["zones"]["rows"]
    (traces,) = [args[1] for name, args in drawn if name == "zones_figure"]
    # one load case: the legend names the seats only (the case in brackets with several)
    assert [label for label, _, _ in traces] == [r["seat"] for r in rows]
    assert len({r["seat"] for r in rows}) == 3
