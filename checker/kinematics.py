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
from scipy.interpolate import CubicHermiteSpline

from .constants import G0
from .dynamics import RideMotion
from .geometry import TrackGeometry
from .train import Seat


@dataclass(frozen=True)
class SeatHistory:
    """Unfiltered history of one rider position, sampled uniformly in time."""

    seat: str
    car: int  # 1-based car number
    t: np.ndarray  # [s]
    s: np.ndarray  # station of the car reference point [m]
    v: np.ndarray  # [m/s]
    g: np.ndarray  # (n, 3) specific force (Gx, Gy, Gz) [g0]
    position: np.ndarray  # (n, 3) rider's world position [m]


def sample_times(motion: RideMotion, rate_hz: float) -> np.ndarray:
    """Uniform output times [s] from 0 to the end of the ride."""
    count = int(np.floor(motion.duration_s * rate_hz + 1e-9)) + 1
    return np.arange(count) / rate_hz


def lead_station_at(motion: RideMotion, times: np.ndarray) -> np.ndarray:
    """Lead car station [m] at the given times: cubic Hermite through (t, s, v)."""
    return CubicHermiteSpline(motion.t, motion.s, motion.v)(times)


def seat_specific_force(omega: np.ndarray, domega: np.ndarray, frame_z: np.ndarray,
                        v: np.ndarray, a_t: np.ndarray, offset: np.ndarray) -> np.ndarray:
    """Specific force [g0] in rider axes for one seat offset.

    omega, domega : (n, 3) frame angular velocity per metre and its derivative [rad/m, rad/m^2]
    frame_z : (n, 3) world-z component of (tangent, left, up)
    v, a_t : (n,) speed [m/s] and tangential acceleration [m/s^2]
    offset : (3,) seat offset (forward, left, up) [m]
    """
    d = np.broadcast_to(offset, omega.shape)
    ds1 = np.cross(omega, d)
    ds1[:, 0] += 1.0
    k = np.column_stack([np.zeros(len(v)), omega[:, 2], -omega[:, 1]])
    ds2 = k + np.cross(domega, d) + np.cross(omega, np.cross(omega, d))
    accel = ds2 * (v * v)[:, None] + ds1 * a_t[:, None]
    return (accel + G0 * frame_z) / G0


def rider_histories(geometry: TrackGeometry, motion: RideMotion, seats: tuple[Seat, ...],
                    rate_hz: float = 200.0) -> list[SeatHistory]:
    """Histories of every seat of every car, sampled at ``rate_hz``."""
    times = sample_times(motion, rate_hz)
    lead = np.clip(lead_station_at(motion, times), motion.s[0], motion.s[-1])
    # speed from the energy variable e = v^2/2, which the integrator carries and which is
    # smooth in s (v grows like sqrt(s) from rest, so v itself interpolates badly there)
    v = np.sqrt(np.interp(lead, motion.s, 0.5 * motion.v**2) * 2.0)
    a_t = np.interp(lead, motion.s, motion.a_t)
    out = []
    for car in range(motion.car_count):
        s_car = lead - car * motion.car_spacing_m
        omega, domega, pos, tan, left, up = geometry.sample(
            s_car, "omega", "domega", "position", "tangent", "left", "up")
        frame_z = np.column_stack([tan[:, 2], left[:, 2], up[:, 2]])
        for seat in seats:
            g = seat_specific_force(omega, domega, frame_z, v, a_t, seat.offset)
            where = (pos + seat.forward_m * tan + seat.left_m * left + seat.up_m * up)
            out.append(SeatHistory(f"car{car + 1}-{seat.name}", car + 1, times, s_car, v, g,
                                   where))
    return out
