"""Specific force at each rider position, in rider axes.

A seat sits at a fixed offset d = (forward, left, up) [m] from its car's reference point, in
the car's frame (rigid car body oriented by the track frame at the reference point). With the
frame's angular velocity per unit length omega (see :mod:`checker.geometry`), the seat path
R(s) = c(s) + d_i e_i(s) has

    R'  = t + omega x d
    R'' = k + omega' x d + omega x (omega x d)

and the rider's acceleration is R'' v^2 + R' dv/dt (rigid-body kinematics). The reported
quantity is specific force f = a - g_vec with g_vec = (0, 0, -g0), in rider axes, in units of
g0: a rider at rest in a level seat reads (Gx, Gy, Gz) = (0, 0, 1).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .constants import G0
from .dynamics import RideMotion
from .geometry import TrackGeometry, interpolate_columns
from .train import Seat


@dataclass(frozen=True)
class SeatHistory:
    """Unfiltered history of one rider position, sampled uniformly in time.

    Attributes
    ----------
    seat : str
        Rider position label ``"car<k>-<seat name>"``, e.g. ``"car1-1L"``.
    car : int
        1-based car number, lead car 1 [-].
    t : (n,) ndarray
        Time, uniform from 0 [s].
    s : (n,) ndarray
        Station of the car's reference point [m].
    v : (n,) ndarray
        Speed of the train [m/s].
    g : (n, 3) ndarray
        Specific force (Gx, Gy, Gz) in rider axes (ISO 8855: forward, left, up) [g0].
    position : (n, 3) ndarray
        Rider's position in world axes [m].
    """

    seat: str
    car: int  # 1-based car number
    t: np.ndarray  # [s]
    s: np.ndarray  # station of the car reference point [m]
    v: np.ndarray  # [m/s]
    g: np.ndarray  # (n, 3) specific force (Gx, Gy, Gz) [g0]
    position: np.ndarray  # (n, 3) rider's world position [m]


def sample_times(motion: RideMotion, rate_hz: float) -> np.ndarray:
    """Uniform output times from 0 to the end of the ride.

    Parameters
    ----------
    motion : RideMotion
        The train's motion; its ``duration_s`` bounds the times.
    rate_hz : float
        Sampling rate [Hz].

    Returns
    -------
    times : (m,) ndarray
        k / rate_hz for k = 0 .. floor(duration * rate_hz) [s].
    """
    count = int(np.floor(motion.duration_s * rate_hz + 1e-9)) + 1
    return np.arange(count) / rate_hz


def lead_station_at(motion: RideMotion, times: np.ndarray) -> np.ndarray:
    """Lead car station at the given times: cubic Hermite through (t, s, v).

    Parameters
    ----------
    motion : RideMotion
        The train's motion (times, stations and speeds are the Hermite data).
    times : (m,) ndarray
        Times [s].

    Returns
    -------
    stations : (m,) ndarray
        Lead car station (not clipped; times outside the motion extrapolate) [m].
    """
    from scipy.interpolate import CubicHermiteSpline  # imported on use (start-up)

    return CubicHermiteSpline(motion.t, motion.s, motion.v)(times)


def seat_specific_force(omega: np.ndarray, domega: np.ndarray, frame_z: np.ndarray,
                        v: np.ndarray, a_t: np.ndarray, offset: np.ndarray) -> np.ndarray:
    """Specific force in rider axes for seat offsets.

    Rigid-body kinematics of the seat path R = c + d_i e_i (module docstring): acceleration
    R'' v^2 + R' dv/dt, minus gravity, in frame components, divided by g0. The force is
    affine in the offset, f = c + B d, so the 3 x 3 matrix B and the vector c are formed once
    per sample and serve every seat.

    Parameters
    ----------
    omega : (..., n, 3) ndarray
        Frame angular velocity per metre (twist, pitch, yaw) [rad/m].
    domega : (..., n, 3) ndarray
        Its derivative along the track [rad/m^2].
    frame_z : (..., n, 3) ndarray
        World-z component of (tangent, left, up) [-].
    v : (n,) ndarray
        Speed [m/s].
    a_t : (n,) ndarray
        Tangential acceleration dv/dt [m/s^2].
    offset : (3,) or (seats, 3) array_like
        Seat offset (forward, left, up) from the car reference point [m].

    Returns
    -------
    g : (..., n, 3) or (seats, ..., n, 3) ndarray
        Specific force (Gx, Gy, Gz) [g0]; a rider at rest in a level seat reads (0, 0, 1).
    """
    d = np.asarray(offset, dtype=float)
    wx, wy, wz = (omega[..., i] for i in range(3))
    ax, ay, az = (domega[..., i] for i in range(3))
    v2 = v * v / G0
    at = a_t / G0
    w_sq = wx * wx + wy * wy + wz * wz
    # B = (v^2 ([omega']x + omega omega^T - |omega|^2 I) + dv/dt [omega]x) / g0 and
    # c = (v^2 k + dv/dt e_x) / g0 + frame_z, from R' = t + omega x d and
    # R'' = k + omega' x d + omega (omega . d) - d |omega|^2, k = (0, yaw, -pitch)
    matrix = ((v2 * (wx * wx - w_sq), v2 * (wx * wy - az) - at * wz,
               v2 * (wx * wz + ay) + at * wy),
              (v2 * (wy * wx + az) + at * wz, v2 * (wy * wy - w_sq),
               v2 * (wy * wz - ax) - at * wx),
              (v2 * (wz * wx - ay) - at * wy, v2 * (wz * wy + ax) + at * wx,
               v2 * (wz * wz - w_sq)))
    base = (at + frame_z[..., 0], v2 * wz + frame_z[..., 1], frame_z[..., 2] - v2 * wy)
    out = _affine_in_offsets(base, matrix, d.reshape(-1, 3))
    return out[0] if d.ndim == 1 else out


def _affine_in_offsets(base, matrix, offsets: np.ndarray) -> np.ndarray:
    """out[k, ..., i] = base[i] + sum_m matrix[i][m] * offsets[k, m], for every seat k.

    ``base`` is three arrays and ``matrix`` three rows of three, all of one shape (...);
    element-wise passes over arrays of one car stay in cache (no BLAS: its threads compete
    with the rest of the process on a shared machine). Returns shape (seats, ..., 3).
    """
    shape = np.broadcast_shapes(*(np.shape(x) for x in base),
                                *(np.shape(x) for row in matrix for x in row))
    out = np.empty((len(offsets),) + shape + (3,))
    acc, term = np.empty(shape), np.empty(shape)
    for k, d in enumerate(offsets.tolist()):
        for i in range(3):
            np.multiply(matrix[i][0], d[0], out=acc)
            for m in (1, 2):
                acc += np.multiply(matrix[i][m], d[m], out=term)
            acc += base[i]
            out[k, ..., i] = acc
    return out


def rider_histories(geometry: TrackGeometry, motion: RideMotion, seats: tuple[Seat, ...],
                    rate_hz: float = 200.0) -> list[SeatHistory]:
    """Histories of every seat of every car, sampled uniformly in time.

    The track quantities of every car, and every seat's world position placed on the grid,
    come from one interpolation of all their columns; then, car by car, the force at every
    seat (affine in the seat offset). Speed is interpolated through the energy v^2/2, which is
    smooth in s.

    Parameters
    ----------
    geometry : TrackGeometry
        Track geometry and rider frame.
    motion : RideMotion
        The train's motion.
    seats : tuple of Seat
        The seats of one car (every car alike).
    rate_hz : float
        Sampling rate [Hz].

    Returns
    -------
    histories : list of SeatHistory
        Car by car (lead car first), seat by seat in the given order.
    """
    times = sample_times(motion, rate_hz)
    lead = np.clip(lead_station_at(motion, times), motion.s[0], motion.s[-1])
    # speed from the energy variable e = v^2/2, which the integrator carries and which is
    # smooth in s (v grows like sqrt(s) from rest, so v itself interpolates badly there)
    v = np.sqrt(np.interp(lead, motion.s, 0.5 * motion.v**2) * 2.0)
    a_t = np.interp(lead, motion.s, motion.a_t)
    cars = np.arange(motion.car_count)
    s_car = lead[None, :] - cars[:, None] * motion.car_spacing_m  # (cars, n)
    offsets = np.array([[seat.forward_m, seat.left_m, seat.up_m] for seat in seats])
    # every seat's world position on the grid (centerline + d_x tangent + d_y left + d_z up;
    # linear, so interpolating it equals placing the seat on the interpolated frame)
    axes = (geometry.tangent, geometry.left, geometry.up)
    placed = _affine_in_offsets(geometry.position.T,
                               [[axis[:, i] for axis in axes] for i in range(3)], offsets)
    columns = np.vstack([geometry.omega.T, geometry.domega.T, [a[:, 2] for a in axes],
                         *(seat.T for seat in placed)])
    values = interpolate_columns(geometry.s, columns, np.clip(s_car, 0.0, geometry.length))
    out = []
    for car in cars:  # car by car: the arrays of one car stay in cache
        omega, domega, frame_z = (values[i:i + 3, car].T for i in (0, 3, 6))
        g = seat_specific_force(omega, domega, frame_z, v, a_t, offsets)
        out.extend(SeatHistory(f"car{car + 1}-{seat.name}", int(car) + 1, times, s_car[car], v,
                               g[k], values[9 + 3 * k:12 + 3 * k, car].T)
                   for k, seat in enumerate(seats))
    return out
