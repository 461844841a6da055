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
from .geometry import TrackGeometry
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
    R'' v^2 + R' dv/dt, minus gravity, in frame components, divided by g0.

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
    lead = d.shape[:-1]
    # broadcast seats in front of the station axes: d -> (seats, 1, ..., 1, 3)
    d = d.reshape(lead + (1,) * (omega.ndim - 1) + (3,))
    dx, dy, dz = d[..., 0], d[..., 1], d[..., 2]
    wx, wy, wz = omega[..., 0], omega[..., 1], omega[..., 2]
    ax, ay, az = domega[..., 0], domega[..., 1], domega[..., 2]
    w_dot_d = wx * dx + wy * dy + wz * dz
    w_sq = wx * wx + wy * wy + wz * wz
    v2 = v * v
    # R' = t + omega x d ; R'' = k + omega' x d + omega (omega . d) - d |omega|^2,
    # k = (0, yaw, -pitch) in frame components
    r1 = (1.0 + wy * dz - wz * dy, wz * dx - wx * dz, wx * dy - wy * dx)
    r2 = (ay * dz - az * dy + wx * w_dot_d - dx * w_sq,
          wz + az * dx - ax * dz + wy * w_dot_d - dy * w_sq,
          -wy + ax * dy - ay * dx + wz * w_dot_d - dz * w_sq)
    out = np.stack([(r2[i] * v2 + r1[i] * a_t + G0 * frame_z[..., i]) / G0 for i in range(3)],
                   axis=-1)
    return out


def rider_histories(geometry: TrackGeometry, motion: RideMotion, seats: tuple[Seat, ...],
                    rate_hz: float = 200.0) -> list[SeatHistory]:
    """Histories of every seat of every car, sampled uniformly in time.

    The track quantities of every car are taken in one interpolation, then all the seats of a
    car in one vectorized pass (car by car: the arrays stay in cache). Speed is interpolated
    through the energy v^2/2, which is smooth in s.

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
    omega, domega, pos, tan, left, up = (a.reshape(len(cars), len(lead), 3) for a in
                                         geometry.sample(s_car.ravel(), "omega", "domega",
                                                         "position", "tangent", "left", "up"))
    offsets = np.array([[seat.forward_m, seat.left_m, seat.up_m] for seat in seats])
    out = []
    for car in cars:
        frame_z = np.column_stack([tan[car, :, 2], left[car, :, 2], up[car, :, 2]])
        g = seat_specific_force(omega[car], domega[car], frame_z, v, a_t, offsets)
        for k, seat in enumerate(seats):
            where = (pos[car] + seat.forward_m * tan[car] + seat.left_m * left[car]
                     + seat.up_m * up[car])
            out.append(SeatHistory(f"car{car + 1}-{seat.name}", int(car) + 1, times,
                                   s_car[car], v, g[k], where))
    return out
