"""Speed and time along the track for the whole train.

All cars share one speed. The tangential equation of the train, written for the specific
kinetic energy e = v^2 / 2 [J/kg] against the lead car's station s [m], is

    de/ds = -g0 * sum_j m_j t_z(s_j) / M                        (gravity at each car's station)
            - mu / M * sum_j m_j |k(s_j) v^2 - g_perp(s_j)|     (rolling resistance ~ wheel load)
            - rho CdA / (2 M) * (v + w) |v + w|                 (aerodynamic drag, head wind w)
            + F / M                                             (launch force)

with s_j = s - (j - 1) * spacing (Coulomb friction model; drag as 0.5 rho CdA v^2). It is
integrated in space with Heun's method (the explicit trapezoidal rule, second order; Suli and
Mayers, An Introduction to Numerical Analysis, 2003) on the geometry's station grid; powered
sections clamp e (lift: not below the chain speed; brake: down to a target at a bounded
deceleration; launch: force or a controlled exit speed). Time follows from dt = 2 ds / (v_k +
v_{k+1}), exact for constant acceleration over a step and finite from rest. The space-marching
kernel is one sequential loop in plain Python.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .constants import G0
from .errors import TrainStalled
from .geometry import TrackGeometry, interpolate_columns
from .operation import Launch, Lift, Operation
from .train import Train

# what acts at a station of the marching grid (0: nothing, the train rolls freely)
UNPOWERED, LIFT, LAUNCH_FORCE, LAUNCH_SPEED, BRAKE = 0, 1, 2, 3, 4  # section code per step
RAN_TO_END, STOPPED_BY_BRAKE, STALLED = 0, 1, 2
# v^2 / 2 below which the train is at rest [m^2/s^2] (1 mm/s): a train started from rest on
# a track level to the last bit of its coordinates otherwise crept along at 1e-22 m/s and
# "arrived" after 5e14 s (a memory error instead of the stall at the start)
REST_ENERGY = 0.5 * 1e-3**2


@dataclass(frozen=True)
class RideMotion:
    """The train's motion on the station grid of its lead car.

    Attributes
    ----------
    s : (n,) ndarray
        Lead car station, from the train's length onward [m]; when the train came to rest the
        last entry is the (interpolated) station of rest.
    t : (n,) ndarray
        Time since the start [s].
    v : (n,) ndarray
        Speed of the train (all cars alike) [m/s].
    a_t : (n,) ndarray
        Tangential acceleration dv/dt = d(v^2/2)/ds [m/s^2].
    car_spacing_m : float
        Distance between successive car reference points [m].
    car_count : int
        Number of cars [-].
    end_reason : str
        How the run ended, in words (end of track, stopped by a brake, stalled).
    stall : TrainStalled or None
        Set when the train came to rest outside a stopping brake (a record, not raised).
    unsettled_e : float
        0 when the speed march settled; else how much the specific energy v^2/2 still moved
        in its last pass [m^2/s^2] (the speeds are then uncertain by about that much).
    """

    s: np.ndarray  # lead car station [m]
    t: np.ndarray  # time [s]
    v: np.ndarray  # speed [m/s]
    a_t: np.ndarray  # tangential acceleration dv/dt [m/s^2]
    car_spacing_m: float
    car_count: int
    end_reason: str
    stall: TrainStalled | None = None  # set when the train came to rest outside a stop brake
    unsettled_e: float = 0.0  # v^2/2 change in the march's last pass when it did not settle

    @property
    def duration_s(self) -> float:
        """Time of the last sample [s]."""
        return float(self.t[-1])


def _wheel_loads(e: np.ndarray, slope_part: np.ndarray,
                 rest_part: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Sum over cars of m_j |k v^2 - g_perp| at specific energies e (one per station), and
    its derivative in e, for every station at once: |2e a + b| with a = m (p - i r),
    b = m (q + i w) (complex numbers hold the two normal components)."""
    z = 2.0 * e[:, None] * slope_part + rest_part
    size = np.abs(z)
    with np.errstate(invalid="ignore", divide="ignore"):
        slope = np.where(size > 0, (z.conj() * 2.0 * slope_part).real / size, 0.0)
    return size.sum(axis=1), slope.sum(axis=1)


# Newton passes of the speed march over the whole path (it settles in about three; a wheel
# load changing sign exactly at a station can keep it oscillating, which is then reported).
MARCH_PASSES = 40


def _march(ds, gravity, p, q, r, w, masses, mu_over_m, drag_over_m, wind, code, remaining,
           target_e, accel, force_over_m, cap_e, e0):
    """Space-marching kernel; returns (e, last index, reason, fraction of the last step,
    change of e in the last pass [m^2/s^2]: 0 once settled, else the march did not settle
    in MARCH_PASSES passes).

    Heun's method with the rolling-resistance load of every car. The load sum over the cars
    is a smooth function of e at each station; it is evaluated for all stations and cars at
    once (numpy) around a guess of e(s) and linearized there, and the scalar march is
    repeated with the new e(s) as guess until it no longer changes (a Newton iteration on
    the whole path: about three passes). At the fixed point the march equals Heun's method
    with the exact loads up to the linearization error of the predictor stage, O(ds^4).
    """
    m = np.asarray(masses, dtype=float)
    slope_part = (p - 1j * r) * m
    rest_part = (q + 1j * w) * m
    # first guess: energy with gravity only, kept positive
    guess = np.maximum(e0 + np.concatenate([[0.0], np.cumsum(0.5 * ds * (gravity[1:]
                                                                          + gravity[:-1]))]),
                       0.05 * max(e0, 1.0))
    lists = (gravity.tolist(), code.tolist(), remaining.tolist(), target_e.tolist(),
             accel.tolist(), force_over_m.tolist(), cap_e.tolist())
    scale = max(float(np.max(np.abs(guess))), 1.0)
    # stretches without a powered section: with the loads linear in e (and still air, where
    # drag is 2e rho CdA / 2M) every Heun step there is e' = P e + Q, solved in one pass
    runs = _free_runs(code) if wind == 0.0 else {}
    result = None
    for _ in range(MARCH_PASSES):
        load, dload = _wheel_loads(guess, slope_part, rest_part)
        base = load - dload * guess  # load(e) ~ base + dload * e near the guess
        linear = (gravity - mu_over_m * base, -mu_over_m * dload - 2.0 * drag_over_m)
        e, last, reason, frac = _march_linear(ds, base.tolist(), dload.tolist(), mu_over_m,
                                              drag_over_m, wind, e0, *lists, runs=runs,
                                              linear=linear)
        change = float(np.max(np.abs(e[: last + 1] - guess[: last + 1])))
        guess = np.concatenate([e[: last + 1], guess[last + 1:]])
        if change <= 1e-7 * scale:  # quadratic convergence: what is left is ~1e-14 relative
            change = 0.0
        result = (e, last, reason, frac, change)
        if change == 0.0:
            break
    return result


def _free_runs(code: np.ndarray) -> dict[int, int]:
    """{first step: end step} of the runs of steps k (from station k to k + 1) without a
    powered section."""
    free = np.concatenate([[0], (code[:-1] == UNPOWERED).astype(np.int8), [0]])
    edges = np.flatnonzero(np.diff(free))
    return {int(a): int(b) for a, b in zip(edges[::2], edges[1::2]) if b - a > 1}


def _linear_steps(e_start: float, ds: float, alpha: np.ndarray,
                  beta: np.ndarray) -> tuple[np.ndarray, int]:
    """Heun's steps for de/ds = alpha_k + beta_k e over a stretch (alpha, beta at its
    stations): the energies after each step, and how many steps are valid (energy and
    predictor positive; the rest is left to the step-by-step march)."""
    a0, a1, b0, b1 = alpha[:-1], alpha[1:], beta[:-1], beta[1:]
    gain = 1.0 + 0.5 * ds * (b0 + b1 * (1.0 + ds * b0))  # e_{k+1} = gain e_k + add
    add = 0.5 * ds * (a0 + a1 + ds * b1 * a0)
    if np.any(gain <= 0.0):
        return np.zeros(0), 0
    growth = np.cumprod(gain)  # product of the gains up to and including step k
    e = growth * (e_start + np.cumsum(add / growth))
    before = np.concatenate([[e_start], e[:-1]])
    pred = before * (1.0 + ds * b0) + ds * a0
    bad = np.flatnonzero((e <= REST_ENERGY) | (pred < 0.0))
    valid = int(bad[0]) if bad.size else len(e)
    return e, valid


def _march_linear(ds, base, dload, mu_over_m, drag_over_m, wind, e0, gravity, code,
                  remaining, target_e, accel, force_over_m, cap_e, runs=None, linear=None):
    """The scalar march with the wheel loads given as base + dload * e at each station.

    Plain Python on lists (the loop is sequential; for one ride this is faster than loading
    a compiled kernel), except over ``runs`` of free steps, where the steps are linear in e
    (``linear`` = (alpha, beta) per station) and are solved in one vectorized pass.
    """
    n = len(gravity)
    sqrt = math.sqrt
    e = [0.0] * n
    e[0] = e0
    half = 0.5 * ds
    runs = runs or {}
    k = -1
    while k < n - 2:
        k += 1
        end = runs.get(k)
        if end is not None:
            stretch, valid = _linear_steps(e[k], ds, linear[0][k:end + 1],
                                           linear[1][k:end + 1])
            if valid:
                e[k + 1:k + 1 + valid] = stretch[:valid].tolist()
                k += valid - 1
                continue
        ek = e[k]
        c = code[k]
        air = sqrt(2.0 * ek) + wind
        f1 = (gravity[k] - mu_over_m * (base[k] + dload[k] * ek)
              - drag_over_m * air * abs(air))
        if c == LAUNCH_FORCE and (cap_e[k] <= 0.0 or ek < cap_e[k]):
            f1 += force_over_m[k]
        pred = ek + ds * f1
        if pred < 0.0:
            pred = 0.0
        air = sqrt(2.0 * pred) + wind
        f2 = (gravity[k + 1] - mu_over_m * (base[k + 1] + dload[k + 1] * pred)
              - drag_over_m * air * abs(air))
        if c == LAUNCH_FORCE and (cap_e[k] <= 0.0 or pred < cap_e[k]):
            f2 += force_over_m[k]
        ef = ek + half * (f1 + f2)
        if c == LIFT:
            chain = min(ek + accel[k] * ds, target_e[k])
            en = ef if ef > chain else chain
        elif c == LAUNCH_SPEED:
            en = ek + (target_e[k] - ek) / remaining[k]
        elif c == BRAKE and ef > target_e[k]:
            en = max(ef - accel[k] * ds, target_e[k])
        else:
            en = ef
        if en <= REST_ENERGY:  # at rest (or creeping too slowly to ever arrive)
            frac = min(ek / (ek - en), 1.0) if ek - en > 0.0 and en <= 0.0 else 0.0
            reason = STOPPED_BY_BRAKE if (c == BRAKE and target_e[k] <= 0.0) else STALLED
            return np.asarray(e), k, reason, frac
        e[k + 1] = en
    return np.asarray(e), n - 1, RAN_TO_END, 0.0


def _section_arrays(stations: np.ndarray, operation: Operation, track_length: float,
                    train_length: float, ds: float):
    n = len(stations)
    code = np.zeros(n, dtype=np.int64)
    remaining = np.ones(n)
    target_e = np.zeros(n)
    accel = np.zeros(n)
    force = np.zeros(n)
    cap_e = np.zeros(n)
    spans = sorted(((sec.resolved(track_length), sec) for sec in operation.sections),
                   key=lambda item: item[0][0])
    for (a, b), sec in spans:  # later sections override where the train straddles two
        active = (stations >= a) & (stations <= b + train_length)
        idx = np.flatnonzero(active)
        if idx.size == 0:
            continue
        if isinstance(sec, Lift):
            code[idx] = LIFT
            target_e[idx] = 0.5 * sec.speed_m_s**2
            accel[idx] = sec.engage_accel_m_s2
        elif isinstance(sec, Launch) and sec.exit_speed_m_s is not None:
            code[idx] = LAUNCH_SPEED
            target_e[idx] = 0.5 * sec.exit_speed_m_s**2
            remaining[idx] = np.maximum(1.0, idx[-1] + 1 - idx)
        elif isinstance(sec, Launch):
            code[idx] = LAUNCH_FORCE
            force[idx] = sec.force_n
            cap_e[idx] = np.inf if sec.max_speed_m_s is None else 0.5 * sec.max_speed_m_s**2
        else:
            code[idx] = BRAKE
            target_e[idx] = 0.5 * sec.speed_m_s**2
            accel[idx] = sec.max_decel_m_s2
    return code, remaining, target_e, accel, force, cap_e


def attitude(up_z: float, left_z: float = 0.0) -> str:
    """Riders' attitude from the world-up components of the rider's up and left axes.

    Pitch alone (a steep climb, the riders on their backs) leaves them upright in this sense:
    a train that stops there rolls back down, it does not hang.

    Parameters
    ----------
    up_z : float
        World-up (z) component of the unit rider up axis [-].
    left_z : float, optional
        World-up (z) component of the unit rider left axis [-] (0: not rolled).

    Returns
    -------
    attitude : {"upright", "on its side", "inverted"}
        ``"inverted"`` with the up axis beyond 135 degrees from world up; ``"on its side"``
        with the left axis within 45 degrees of vertical (rolled onto one side); else
        ``"upright"``.
    """
    if up_z <= -math.cos(math.radians(45.0)):
        return "inverted"
    if abs(left_z) >= math.cos(math.radians(45.0)):
        return "on its side"
    return "upright"


ATTITUDE_ORDER = ("upright", "on its side", "inverted")
START_DISTANCE_M = 1.0  # a train that comes to rest within this of its start never got going


def _stall(geometry: TrackGeometry, train: Train, station: float, time: float,
           travelled: float) -> TrainStalled:
    """The stall at lead-car ``station`` [m]: why (start, crest, inverted, on its side)
    and the riders' worst attitude over the cars there."""
    cars = station - train.spacing_m * np.arange(train.car_count)
    up, left = geometry.sample(cars, "up", "left")
    worst = max((attitude(float(u), float(v)) for u, v in zip(up[:, 2], left[:, 2])),
                key=ATTITUDE_ORDER.index)
    if travelled < START_DISTANCE_M:
        cause = "start"
    elif worst != "upright":
        cause = worst
    else:
        cause = "crest"
    return TrainStalled(station, time, 0.0, cause=cause, attitude=worst)


def simulate_motion(
    geometry: TrackGeometry,
    train: Train,
    operation: Operation,
    *,
    head_wind_m_s: float = 0.0,
) -> RideMotion:
    """Integrate the train's speed along the track.

    The train starts with its last car at station 0 and the lead car at ``train.length_m``,
    at ``operation.start_speed_m_s``, and runs until the lead car reaches the track's end or a
    stopping brake brings it to rest. Where it comes to rest anywhere else, the motion up to
    that point is returned with ``stall`` set (a :class:`TrainStalled` record, not raised).

    The energy equation of the module docstring is integrated in space with Heun's method
    (explicit trapezoidal rule) on the geometry's station grid; the rolling-resistance load,
    which depends on the energy, is linearized about a guess of the whole path and the march
    repeated until it no longer changes (a Newton iteration on the path). Time follows from
    dt = 2 ds / (v_k + v_{k+1}).

    Parameters
    ----------
    geometry : TrackGeometry
        Track geometry; its station step is the marching step [m].
    train : Train
        Cars, masses and resistances.
    operation : Operation
        Start speed and powered sections.
    head_wind_m_s : float
        Wind against the direction of travel, added to the speed in the drag term [m/s].

    Returns
    -------
    motion : RideMotion
        Station, time, speed and tangential acceleration of the lead car; ``stall`` set when
        the train came to rest outside a stopping brake.

    Raises
    ------
    InputError
        A powered section lies outside the track or overlaps another
        (:meth:`Operation.check_against`).
    ValueError
        The train is at least as long as the track.

    References
    ----------
    E. Suli and D. F. Mayers, An Introduction to Numerical Analysis, Cambridge University
    Press, 2003 (Heun's method, the improved Euler method).
    J. C. Butcher, Numerical Methods for Ordinary Differential Equations, 2nd ed., Wiley, 2008.
    """
    operation.check_against(geometry.length)
    if train.length_m >= geometry.length:  # run_ride refuses this first, naming the track file
        raise ValueError(f"the train ({train.length_m:.1f} m) is longer than the track "
                         f"({geometry.length:.1f} m)")
    ds = geometry.step
    start = train.length_m
    count = int(np.floor((geometry.length - start) / ds + 1e-9))
    stations = start + ds * np.arange(count + 1)
    masses = train.car_masses()
    masses_list = masses.tolist()
    total = float(masses.sum())
    cars = stations[:, None] - train.spacing_m * np.arange(train.car_count)
    # at every car's station (n, cars): tangent z, yaw (lateral curvature), G0 left z,
    # pitch (minus the vertical curvature), G0 up z
    tz, p, q, r, w = interpolate_columns(
        geometry.s, [geometry.tangent[:, 2], geometry.omega[:, 2], G0 * geometry.left[:, 2],
                     geometry.omega[:, 1], G0 * geometry.up[:, 2]],
        np.clip(cars, 0.0, geometry.length))
    gravity = -G0 * (tz @ masses) / total
    code, remaining, target_e, accel, force, cap_e = _section_arrays(
        stations, operation, geometry.length, train.length_m, ds)
    e, last, reason, frac, unsettled = _march(
        ds, gravity, p, q, r, w, masses_list, train.rolling_coefficient / total,
        0.5 * train.air_density_kg_m3 * train.drag_area_m2 / total, float(head_wind_m_s),
        code, remaining, target_e, accel, force / total, cap_e,
        0.5 * operation.start_speed_m_s**2)
    s = stations[: last + 1]
    e = e[: last + 1]
    if reason != RAN_TO_END:
        s = np.append(s, s[-1] + frac * ds)
        e = np.append(e, 0.0)
    v = np.sqrt(2.0 * np.maximum(e, 0.0))
    dt = 2.0 * np.diff(s) / np.maximum(v[1:] + v[:-1], 1e-12)
    t = np.concatenate([[0.0], np.cumsum(dt)])
    stall = None
    if reason == STALLED:
        stall = _stall(geometry, train, float(s[-1]), float(t[-1]), float(s[-1] - start))
    if len(s) < 3:  # came to rest within the first step: nothing to integrate
        stall = _stall(geometry, train, float(s[-1]), float(t[-1]), float(s[-1] - start))
        s = np.array([s[0], s[0] + 0.5 * ds, s[0] + ds])
        e = np.zeros(3)
        v = np.zeros(3)
        t = np.array([0.0, 1.0, 2.0])
    a_t = np.gradient(e, s, edge_order=2)  # second order at the ends too (the first sample)
    ends = {RAN_TO_END: "reached the end of the track",
            STOPPED_BY_BRAKE: f"stopped by a brake at station {s[-1]:.1f} m",
            STALLED: f"stalled at station {s[-1]:.1f} m"}
    return RideMotion(s, t, v, a_t, train.spacing_m, train.car_count, ends[reason], stall,
                      unsettled)
