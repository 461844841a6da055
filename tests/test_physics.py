"""The simulator against closed-form mechanics (sources named in each test)."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.special import fresnel
from shapes import (
    G0,
    asymmetric_crest,
    flat_circle_clockwise,
    free_fall_crest,
    helix,
    rolling_hills,
    straight,
    vertical_loop,
)

from checker.dynamics import simulate_motion
from checker.geometry import build_geometry
from checker.kinematics import seat_specific_force
from checker.operation import Lift, Operation
from checker.ride import RideOptions, run_ride
from checker.track import Centerline
from checker.train import Seat, Train, ideal_rider


def ride(points, train=None, start_speed=0.0, roll=None, sections=(), **opts):
    ops = Operation(start_speed_m_s=start_speed, sections=tuple(sections))
    return run_ride(Centerline(np.asarray(points), roll), train or ideal_rider(), ops,
                    RideOptions(**opts))


def interior(h, length, margin=2.0):
    return (h.s > margin) & (h.s < length - margin)


def test_loop_the_loop_6g_bottom_0g_top():
    # Halliday, Resnick and Walker, Fundamentals of Physics, work-energy chapter (from memory):
    # released from 5R/2 above the bottom, v^2 = 5 g R at the bottom; with a = v^2 / R the
    # normal specific force is v^2/R + g cos(theta) = g (6 - 3 z / R): 6 g bottom, 0 g top.
    radius = 10.0
    result = ride(vertical_loop(radius), start_speed=np.sqrt(5 * G0 * radius))
    h = result.histories[0]
    inside = interior(h, result.geometry.length)
    expected = 6.0 - 3.0 * h.position[:, 2] / radius
    assert np.max(np.abs(h.g[inside, 2] - expected[inside])) < 0.01 * 6.0
    bottom = inside & (h.position[:, 2] < 0.05)
    top = h.position[:, 2] > 2 * radius - 0.05
    assert bottom.any() and top.any()
    assert np.all(np.abs(h.g[bottom, 2] - 6.0) < 0.06)
    assert np.all(np.abs(h.g[top, 2]) < 0.02)
    assert np.max(np.abs(h.g[inside, 0])) < 0.01  # frictionless: no tangential specific force


def test_energy_conservation_frictionless():
    # Conservation of mechanical energy: v(s) = sqrt(v0^2 + 2 g0 (z0 - z(s))).
    geometry = build_geometry(rolling_hills(), step_m=0.1)  # Heun: error ~ step^2
    v0 = 20.0
    motion = simulate_motion(geometry, ideal_rider(), Operation(start_speed_m_s=v0))
    (pos,) = geometry.sample(motion.s, "position")
    expected = np.sqrt(v0**2 + 2 * G0 * (pos[0, 2] - pos[:, 2]))
    assert motion.stall is None
    assert np.max(np.abs(motion.v - expected)) < 1e-4


def test_banked_turn_at_design_speed():
    # Banked-curve design speed (Serway and Jewett, circular motion chapter, from memory):
    # tan(theta) = v^2 / (g R) gives Gy = 0 and Gz = 1 / cos(theta). A clockwise (right-hand)
    # turn is banked with positive roll in the ISO 8855 sign.
    radius, speed = 30.0, 15.0
    theta = np.arctan(speed**2 / (G0 * radius))
    points = flat_circle_clockwise(radius)
    roll = np.full(len(points), np.degrees(theta))
    result = ride(points, start_speed=speed, roll=roll)
    h = result.histories[0]
    inside = interior(h, result.geometry.length, 3.0)
    assert np.max(np.abs(h.g[inside, 1])) < 2e-3
    assert np.max(np.abs(h.g[inside, 2] - 1 / np.cos(theta))) < 2e-3


def test_unbanked_right_turn_pushes_rider_left():
    # Circular motion: on a flat right-hand turn the seat pushes the rider toward the centre
    # (the right), so the specific force points right: Gy = -v^2 / (g R) (y is to the left).
    radius, speed = 30.0, 12.0
    result = ride(flat_circle_clockwise(radius), start_speed=speed)
    h = result.histories[0]
    inside = interior(h, result.geometry.length, 3.0)
    assert np.allclose(h.g[inside, 1], -speed**2 / (G0 * radius), atol=2e-3)


def test_free_fall_parabola_is_weightless():
    # Projectile motion: along z = x tan(a) - g x^2 / (2 v0^2 cos^2 a), a frictionless rider
    # entering at v0 is in free fall: Gx = Gy = Gz = 0.
    v0, angle = 18.0, np.radians(30.0)
    half = v0**2 * np.sin(angle) * np.cos(angle) / G0  # x of the apex
    result = ride(free_fall_crest(v0, angle, half), start_speed=v0)
    h = result.histories[0]
    inside = interior(h, result.geometry.length, 1.0)
    assert np.max(np.abs(h.g[inside])) < 5e-3


def test_rolling_resistance_deceleration_and_stopping_distance():
    # Coulomb friction model on a level straight: deceleration mu g0, distance v0^2/(2 mu g0).
    mu, v0 = 0.02, 10.0
    train = Train(rolling_coefficient=mu)
    result = ride(straight(400.0), train=train, start_speed=v0)
    stall = result.motion.stall
    assert stall is not None
    assert stall.station_m == pytest.approx(v0**2 / (2 * mu * G0), rel=1e-3)
    h = result.histories[0]
    moving = (h.t > 1.0) & (h.t < result.motion.duration_s - 1.0)
    assert np.allclose(h.g[moving, 0], -mu, atol=1e-6)  # eyes front: Gx = -mu


def test_quadratic_drag_speed_history():
    # Separable ODE m dv/dt = -0.5 rho CdA v^2: v(t) = v0 / (1 + k v0 t), k = rho CdA / (2 m).
    mass, cda, rho, v0 = 1000.0, 1.5, 1.225, 30.0
    train = Train(empty_mass_kg=mass, rider_mass_kg=1.0, occupancy=0.0, drag_area_m2=cda,
                  air_density_kg_m3=rho)
    motion = simulate_motion(build_geometry(straight(600.0)), train,
                             Operation(start_speed_m_s=v0))
    k = rho * cda / (2 * mass)
    expected = v0 / (1 + k * v0 * motion.t)
    assert np.max(np.abs(motion.v - expected)) < 1e-5 * v0


def test_head_wind_adds_to_air_speed():
    # Drag acts on the air speed v + w: a head wind equal to the speed doubles the air speed
    # and quadruples the initial deceleration (0.5 rho CdA (2 v)^2 / m).
    mass, cda, v0 = 1000.0, 1.5, 10.0
    train = Train(empty_mass_kg=mass, occupancy=0.0, drag_area_m2=cda)
    geo = build_geometry(straight(100.0))
    calm = simulate_motion(geo, train, Operation(start_speed_m_s=v0))
    windy = simulate_motion(geo, train, Operation(start_speed_m_s=v0), head_wind_m_s=v0)
    assert windy.a_t[1] / calm.a_t[1] == pytest.approx(4.0, rel=1e-2)


def test_clothoid_curvature_matches_fresnel():
    # Euler spiral: curvature s / A^2; points A sqrt(pi) (C(u), S(u)), u = s / (A sqrt(pi));
    # scipy.special.fresnel is the reference implementation.
    a_param = 20.0
    s = np.linspace(0.0, 40.0, 161)
    sin_part, cos_part = fresnel(s / (a_param * np.sqrt(np.pi)))
    points = np.column_stack([a_param * np.sqrt(np.pi) * cos_part,
                              a_param * np.sqrt(np.pi) * sin_part, np.zeros_like(s)])
    geo = build_geometry(points, step_m=0.05)
    assert geo.length == pytest.approx(40.0, rel=1e-6)
    inside = (geo.s > 1.0) & (geo.s < 39.0)
    assert np.allclose(geo.curvature[inside], geo.s[inside] / a_param**2, atol=2e-5)
    # turning left: the curvature is along +left, so the frame's yaw rate is positive
    assert np.all(geo.omega[inside, 2] > 0)


def test_helix_curvature_and_torsion():
    # do Carmo, Differential Geometry of Curves and Surfaces (from memory): for
    # (r cos t, r sin t, c t), curvature r / (r^2 + c^2) and torsion c / (r^2 + c^2).
    r, c = 12.0, 2.0
    geo = build_geometry(helix(r, c, 2.0))
    inside = (geo.s > 2.0) & (geo.s < geo.length - 2.0)
    assert np.allclose(geo.curvature[inside], r / (r**2 + c**2), rtol=1e-4)
    assert np.allclose(geo.torsion[inside], c / (r**2 + c**2), rtol=1e-3)
    assert geo.length == pytest.approx(2 * 2 * np.pi * np.hypot(r, c), rel=1e-6)


def test_seat_height_in_loop_uses_riders_own_radius():
    # Rigid-body kinematics: a rider at h above the rails of a loop of radius R moves on radius
    # R - h at the car's angular rate v / R: Gz = v^2 (R - h) / (g R^2) + cos(theta).
    radius, height = 10.0, 1.2
    train = Train(seats=(Seat("high", up_m=height),))
    result = ride(vertical_loop(radius, drift_per_turn=0.05), train=train,
                  start_speed=np.sqrt(5 * G0 * radius))
    h = result.histories[0]
    inside = interior(h, result.geometry.length)
    (center,) = result.geometry.sample(h.s, "position")
    cos_theta = 1.0 - center[:, 2] / radius
    v2 = h.v**2
    expected = v2 * (radius - height) / (G0 * radius**2) + cos_theta
    assert np.max(np.abs(h.g[inside, 2] - expected[inside])) < 0.01
    # and the rider's world position sits h above the rails, toward the loop's centre
    dist = np.hypot(h.position[:, 0], h.position[:, 2] - radius)
    assert np.allclose(dist[inside], radius - height, atol=1e-3)


def test_rider_at_rest_reads_one_g():
    # Definition of specific force: at rest in a level seat (0, 0, 1); banked right side down
    # by phi the seat pushes up and to the left: (0, sin phi, cos phi).
    geo = build_geometry(straight(20.0), roll_deg=np.full(21, 30.0))
    tan, left, up = geo.sample(np.array([10.0]), "tangent", "left", "up")
    frame_z = np.column_stack([tan[:, 2], left[:, 2], up[:, 2]])
    g = seat_specific_force(np.zeros((1, 3)), np.zeros((1, 3)), frame_z, np.zeros(1),
                            np.zeros(1), np.array([0.5, 0.3, 1.0]))
    assert np.allclose(g[0], [0.0, 0.5, np.sqrt(3) / 2], atol=1e-12)
    level = build_geometry(straight(20.0))
    tan, left, up = level.sample(np.array([10.0]), "tangent", "left", "up")
    frame_z = np.column_stack([tan[:, 2], left[:, 2], up[:, 2]])
    g = seat_specific_force(np.zeros((1, 3)), np.zeros((1, 3)), frame_z, np.zeros(1),
                            np.zeros(1), np.zeros(3))
    assert np.allclose(g[0], [0.0, 0.0, 1.0], atol=1e-12)


def test_constant_speed_lift_reads_one_g_on_level_track():
    # A lift holds the speed: no tangential acceleration, so a level seat reads (0, 0, 1).
    result = ride(straight(100.0), start_speed=3.0,
                  sections=[Lift(0.0, 100.0, speed_m_s=3.0)],
                  train=Train(rolling_coefficient=0.02))
    h = result.histories[0]
    inside = interior(h, result.geometry.length)
    assert np.allclose(h.g[inside], [0.0, 0.0, 1.0], atol=1e-9)


def test_rear_seats_see_stronger_airtime_over_a_crest():
    # Common practice: over a crest with a gentle climb and a steep drop, the rear of a long
    # train is pulled over while the train is already speeding up (its centre of mass is past
    # the crest), so its minimum Gz is lower than the front's.
    points = asymmetric_crest()
    train = Train(car_count=7, spacing_m=2.5, seats=(Seat("s", up_m=1.0),))
    result = ride(points, train=train, start_speed=15.0)
    assert result.motion.stall is None
    mins = [h.g[:, 2].min() for h in result.histories]
    assert mins[-1] < mins[0] - 0.1


def test_corkscrew_roll_through_360_keeps_frame_continuous():
    # Roll running through 360 deg on a straight: the up vector turns once about the tangent
    # and comes back; the frame stays orthonormal and continuous.
    pts = straight(60.0, 0.5)
    roll = np.degrees(np.interp(pts[:, 0], [10, 50], [0, 2 * np.pi]))
    geo = build_geometry(pts, roll_deg=roll)
    assert np.allclose(np.einsum("ij,ij->i", geo.up, geo.tangent), 0, atol=1e-9)
    assert np.allclose(np.linalg.norm(geo.left, axis=1), 1, atol=1e-9)
    assert np.max(np.linalg.norm(np.diff(geo.up, axis=0), axis=1)) < 0.05
    assert np.allclose(geo.up[-1], [0, 0, 1], atol=1e-6)


def test_up_vectors_give_the_same_frame_as_roll():
    # An explicit up vector per sample that equals the banked frame reproduces the roll.
    pts = flat_circle_clockwise(30.0, 0.5, 360)
    roll = np.full(len(pts), 25.0)
    geo_roll = build_geometry(pts, roll_deg=roll)
    ups = np.array([geo_roll.sample(np.array([s]), "up")[0][0]
                    for s in geo_roll.sample_stations])
    geo_up = build_geometry(pts, up=ups)
    assert np.allclose(geo_up.roll_deg, geo_roll.roll_deg, atol=1e-3)


def test_smoothing_tolerance_recovers_curvature_of_noisy_samples():
    # CAD noise in the second derivative: 3 mm of noise on a circle of radius 20 m sampled
    # every 0.5 m. With a smoothing tolerance near the noise level the curvature comes back
    # close to 1/R (circle), and the report says how much curvature was removed.
    rng = np.random.default_rng(7)
    radius = 20.0
    theta = np.linspace(0, np.pi, int(np.pi * radius / 0.5) + 1)
    pts = np.column_stack([radius * np.sin(theta), radius * (1 - np.cos(theta)),
                           np.zeros_like(theta)])
    pts[:, :2] += rng.normal(0, 0.003, (len(pts), 2))
    raw = build_geometry(pts)
    smooth = build_geometry(pts, smoothing_m=0.003)
    inside = (smooth.s > 3) & (smooth.s < smooth.length - 3)
    raw_err = np.max(np.abs(raw.curvature[inside] - 1 / radius))
    smooth_err = np.max(np.abs(smooth.curvature[inside] - 1 / radius))
    assert smooth_err < 0.2 * raw_err
    assert smooth_err < 0.1 / radius
    report = smooth.smoothing
    assert report is not None and report.max_deviation_m < 0.015
    assert report.max_curvature_removed > 0.5 * raw_err


def test_rotation_minimizing_normals_equal_the_stepwise_double_reflection():
    # The running sum of step angles against the double reflection applied step by step, as
    # published (Wang, Juettler, Zheng and Liu, ACM TOG 27(1), 2008, algorithm 1), on a
    # helix whose tangent turns in two planes at once.
    from checker.geometry import rotation_minimizing_up

    s = np.linspace(0.0, 60.0, 601)
    pts = np.column_stack([8 * np.cos(s / 10), 8 * np.sin(s / 10), 0.3 * s])
    tan = np.gradient(pts, s, axis=0)
    tan /= np.linalg.norm(tan, axis=1)[:, None]
    r = np.array([0.0, 0.0, 1.0]) - tan[0, 2] * tan[0]
    r /= np.linalg.norm(r)
    expected = [r]
    for i in range(len(s) - 1):
        v1 = pts[i + 1] - pts[i]
        c1 = v1 @ v1
        r_l = r - 2 / c1 * (v1 @ r) * v1
        t_l = tan[i] - 2 / c1 * (v1 @ tan[i]) * v1
        v2 = tan[i + 1] - t_l
        c2 = v2 @ v2
        r = r_l - 2 / c2 * (v2 @ r_l) * v2
        expected.append(r)
    got = rotation_minimizing_up(pts, tan, expected[0])
    np.testing.assert_allclose(got, np.array(expected), atol=1e-12)


@pytest.mark.parametrize("uniform", [True, False])
def test_interpolate_columns_equals_np_interp(uniform):
    # Reference: numpy.interp, column by column (the formula interpolate_columns copies).
    from checker.geometry import interpolate_columns

    rng = np.random.default_rng(7)
    s = (np.linspace(0.0, 2003.7, 10019) if uniform
         else np.cumsum(np.concatenate([[0.0], rng.uniform(0.01, 1.0, 999)])))
    columns = rng.normal(size=(5, len(s)))
    # random stations, every grid station (rounding of the uniform-grid guess) and both ends
    x = np.concatenate([rng.uniform(s[0], s[-1], 1200), s, [s[0], s[-1]]])
    got = interpolate_columns(s, columns, x[None, :])
    assert got.shape == (5, 1, len(x))
    for row, values in zip(got, columns):
        np.testing.assert_array_equal(row.ravel(), np.interp(x, s, values))


def test_rotation_minimizing_normals_through_a_step_whose_second_reflection_vanishes():
    # Where the chord's reflection already carries the tangent onto the next one, the second
    # reflection is the identity and the step is improper (it mirrors the normal plane);
    # reference: the double reflection step by step (Wang et al. 2008) with that reflection
    # left out, on random tangents with two such steps.
    from checker.geometry import rotation_minimizing_up

    rng = np.random.default_rng(3)
    pts = np.cumsum(rng.normal(size=(30, 3)), axis=0)
    tan = rng.normal(size=(30, 3))
    tan /= np.linalg.norm(tan, axis=1)[:, None]
    for i in (10, 20):
        v1 = pts[i + 1] - pts[i]
        tan[i + 1] = tan[i] - 2 * (v1 @ tan[i]) / (v1 @ v1) * v1
    r = np.cross(tan[0], [0.3, 0.5, 0.8])
    r /= np.linalg.norm(r)
    expected = [r]
    for i in range(len(pts) - 1):
        v1 = pts[i + 1] - pts[i]
        r_l = r - 2 * (v1 @ r) / (v1 @ v1) * v1
        t_l = tan[i] - 2 * (v1 @ tan[i]) / (v1 @ v1) * v1
        v2 = tan[i + 1] - t_l
        c2 = v2 @ v2
        r = r_l - 2 * (v2 @ r_l) / c2 * v2 if c2 > 1e-30 else r_l
        expected.append(r)
    got = rotation_minimizing_up(pts, tan, expected[0])
    np.testing.assert_allclose(got, np.array(expected), atol=1e-12)
