"""A straightforward scipy implementation of the `simulate` job, as the benchmark's reference.

Same physics and the same outputs as `checker`: every seat's specific force (Gx, Gy, Gz) in
rider axes at 200 Hz, for a train of cars at fixed spacing on an interpolated centerline, with
gravity at every car, rolling resistance on each car's wheel load |k v^2 - g_perp| and drag
0.5 rho CdA v^2. How it is done (the textbook route, no project code):

- centerline: interpolating quintic B-spline through the samples on the chord-length
  parameter (scipy.interpolate.make_interp_spline, k = 5);
- arc length: Gauss-Legendre quadrature of |c'(u)| (``gauss`` nodes on sub-intervals of at
  most ``piece_m``), inverted as a cubic Hermite spline u(s) with du/ds = 1/|c'|;
- train speed: the equations of motion in time, d(s, v)/dt = (v, a(s, v)), integrated by
  scipy.integrate.solve_ivp with DOP853 at relative tolerance ``rtol`` (absolute 1e-3 rtol),
  stopped by an event when the lead car reaches the end; dense output gives s(t), v(t) at the
  output times and a(s, v) the tangential acceleration there;
- rider frame: tangent T, level up N = unit(z - T_z T), left L = N x T (the project's roll-0
  level reference where the track is not near vertical, as on the benchmark layout);
- each seat's path R(s) = c(s) + d_x T + d_y L + d_z N is an interpolating quintic spline on
  a grid of step ``seat_step_m`` (the path is linear in the seat offsets, so one spline of
  (c, T, L, N) serves every seat exactly), differentiated twice; a = R'' v^2 + R' dv/dt and
  f = a + g0 z, projected on (T, L, N).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.polynomial.legendre import leggauss
from scipy.integrate import solve_ivp
from scipy.interpolate import CubicHermiteSpline, make_interp_spline

G0 = 9.80665  # standard gravity [m/s^2] (3rd CGPM, 1901)


@dataclass(frozen=True)
class ReferenceRide:
    t: np.ndarray  # output times [s]
    s: np.ndarray  # lead car station [m]
    v: np.ndarray  # speed [m/s]
    g: np.ndarray  # (seats, n, 3) specific force in rider axes [g0]
    seats: list[str]
    steps: int  # accepted solver steps


def _centerline(points: np.ndarray, gauss: int, piece_m: float):
    chords = np.linalg.norm(np.diff(points, axis=0), axis=1)
    u = np.concatenate([[0.0], np.cumsum(chords)])
    curve = make_interp_spline(u, points, k=5, axis=0)
    pieces = np.maximum(1, np.ceil(chords / piece_m).astype(int))
    u_fine = np.concatenate([np.linspace(a, b, p, endpoint=False)
                             for a, b, p in zip(u[:-1], u[1:], pieces)] + [[u[-1]]])
    x, w = leggauss(gauss)
    h = np.diff(u_fine)
    mid = 0.5 * (u_fine[1:] + u_fine[:-1])
    nodes = (mid[:, None] + 0.5 * h[:, None] * x[None, :]).ravel()
    speed = np.linalg.norm(curve(nodes, 1), axis=1).reshape(len(h), gauss)
    s_fine = np.concatenate([[0.0], np.cumsum(0.5 * h * (speed @ w))])
    u_of_s = CubicHermiteSpline(s_fine, u_fine, 1.0 / np.linalg.norm(curve(u_fine, 1), axis=1))
    return curve, u_of_s, float(s_fine[-1])


def _frame(curve, u_of_s, s: np.ndarray):
    """Position, tangent, left, up and curvature vector at stations s (any shape + (3,))."""
    u = u_of_s(s)
    d1, d2 = curve(u, 1), curve(u, 2)
    speed = np.linalg.norm(d1, axis=-1, keepdims=True)
    tangent = d1 / speed
    k = (d2 - np.sum(d2 * tangent, axis=-1, keepdims=True) * tangent) / speed**2
    up = np.array([0.0, 0.0, 1.0]) - tangent[..., 2:3] * tangent
    up /= np.linalg.norm(up, axis=-1, keepdims=True)
    left = np.cross(up, tangent)
    return curve(u), tangent, left, up, k


def reference_ride(points: np.ndarray, train, v0: float, *, rtol: float = 1e-7,
                   seat_step_m: float = 0.1, gauss: int = 5, piece_m: float = 0.5,
                   rate_hz: float = 200.0) -> ReferenceRide:
    """Every seat's specific force at ``rate_hz`` for ``train`` started at ``v0`` [m/s]
    with its last car at station 0 (as :func:`checker.dynamics.simulate_motion`)."""
    points = np.asarray(points, dtype=float)
    curve, u_of_s, length = _centerline(points, gauss, piece_m)
    masses = train.car_masses()
    total = float(masses.sum())
    offsets = train.spacing_m * np.arange(train.car_count)
    mu = train.rolling_coefficient
    drag = 0.5 * train.air_density_kg_m3 * train.drag_area_m2 / total
    gravity = np.array([0.0, 0.0, -G0])

    def accel(s: np.ndarray, v: np.ndarray) -> np.ndarray:
        """Tangential acceleration [m/s^2] for lead stations s and speeds v (same shape)."""
        cars = np.clip(np.asarray(s)[..., None] - offsets, 0.0, length)
        _, tangent, _, _, k = _frame(curve, u_of_s, cars)
        g_t = tangent @ gravity
        g_perp = gravity - g_t[..., None] * tangent
        vv = np.asarray(v)[..., None, None]
        load = np.linalg.norm(k * vv**2 - g_perp, axis=-1)
        return ((g_t - mu * load) @ masses) / total - drag * np.asarray(v) * np.abs(v)

    def rhs(_t, y):
        return [y[1], float(accel(np.array(y[0]), np.array(y[1])))]

    def at_end(_t, y):
        return y[0] - length

    at_end.terminal = True
    at_end.direction = 1

    def stalled(_t, y):
        return y[1]

    stalled.terminal = True
    start = float(offsets[-1])
    horizon = 100.0 * length / max(v0, 1.0) + 1e3
    sol = solve_ivp(rhs, (0.0, horizon), [start, v0], method="DOP853", rtol=rtol,
                    atol=[1e-3 * rtol * length, 1e-3 * rtol * max(v0, 1.0)],
                    events=(at_end, stalled), dense_output=True)
    t_end = float(sol.t[-1])
    t = np.arange(int(np.floor(t_end * rate_hz + 1e-9)) + 1) / rate_hz
    s, v = sol.sol(t)
    s = np.minimum(s, length)
    a_t = accel(s, v)

    grid = np.linspace(0.0, length, int(np.ceil(length / seat_step_m)) + 1)
    pos, tan, left, up, _ = _frame(curve, u_of_s, grid)
    path = make_interp_spline(grid, np.hstack([pos, tan, left, up]), k=5, axis=0)
    g_all, names = [], []
    for j, off in enumerate(offsets):
        s_car = np.clip(s - off, 0.0, length)
        p0, p1, p2 = path(s_car), path(s_car, 1), path(s_car, 2)
        frame_t, frame_l, frame_u = p0[:, 3:6], p0[:, 6:9], p0[:, 9:12]
        for seat in train.seats:
            d = np.array([seat.forward_m, seat.left_m, seat.up_m])
            r1 = p1[:, 0:3] + d[0] * p1[:, 3:6] + d[1] * p1[:, 6:9] + d[2] * p1[:, 9:12]
            r2 = p2[:, 0:3] + d[0] * p2[:, 3:6] + d[1] * p2[:, 6:9] + d[2] * p2[:, 9:12]
            f = r2 * (v * v)[:, None] + r1 * a_t[:, None] - gravity
            g_all.append(np.column_stack([np.sum(f * frame_t, axis=1),
                                          np.sum(f * frame_l, axis=1),
                                          np.sum(f * frame_u, axis=1)]) / G0)
            names.append(f"car{j + 1}-{seat.name}")
    return ReferenceRide(t, s, v, np.asarray(g_all), names, int(sol.nfev))
