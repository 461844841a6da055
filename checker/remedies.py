"""Remedies computed from the physics: a first estimate of what would bring an event within
its limit at the simulated speed. A first estimate for the designer, not a design: the
changed element changes the speed, the neighbouring elements and the other axes, and must be
simulated and checked again.

Closed forms (rider in steady circular motion of path radius R at speed v, g0 = 9.80665 m/s^2):

- Vertical: Gz = s v^2 / (g0 R) + u, with u the world-up component of the rider's z axis
  (1 upright, -1 inverted) and s = +1 where the path curves toward the rider's head
  (valley, loop), -1 toward the feet (crest). The radius that meets the limit Gz_lim is
  R = v^2 / (g0 |Gz_lim - u|): R = v^2 / (g0 (Gz_lim - 1)) in a valley and
  R = v^2 / (g0 (1 - Gz_min)) over a crest (uniform circular motion; Halliday, Resnick and
  Walker, Fundamentals of Physics, from memory).
- Lateral: the bank that cancels the lateral force in a turn of horizontal radius R is
  tan(theta) = v^2 / (g0 R) (banked curve without friction; Serway and Jewett, Physics for
  Scientists and Engineers, from memory).
- Onset at a curvature step: a clothoid from curvature 0 to k over length L raises the normal
  acceleration at v^3 k / L, so L >= v^3 k / (g0 * onset_lim [g/s]) (Shortt's transition
  formula for railways, 1909, from memory; Euler spiral curvature linear in arc length).
- Tangential force at a seat a height h above the rails where the pitch curvature changes by
  dk over L: Gx = h v^2 (dk / L) / g0, so L >= h v^2 dk / (g0 |Gx_lim|) (rigid-body
  kinematics, the omega' x d term).
- Combined envelopes: the deviation from rest of a curvature-driven point scales with
  v^2 / R, so a radius (1 + f) times the present one brings a point f outside back to the
  boundary.
- Stall: the energy to reach the top ahead: v >= sqrt(2 g0 dz) at the stall point before
  losses (conservation of mechanical energy).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from .constants import G0
from .geometry import TrackGeometry

FIRST_ESTIMATE = "first estimate for the designer, not a design"
STEP_REACH_M = 10.0  # a curvature step is measured over this far either side [m]


@dataclass(frozen=True)
class Remedy:
    """A computed suggestion: ``quantity`` (e.g. "radius at the rider") of ``value``
    [``unit``] from ``formula``; ``text`` says it in one sentence."""

    quantity: str
    value: float | None
    unit: str
    formula: str
    text: str


def valley_radius(v: float, gz_limit: float) -> float:
    """Rider path radius [m] at the bottom of a valley meeting +Gz limit ``gz_limit`` [g] at
    speed ``v`` [m/s]: R = v^2 / (g0 (Gz_lim - 1))."""
    return v * v / (G0 * (gz_limit - 1.0))


def crest_radius(v: float, gz_min: float) -> float:
    """Rider path radius [m] over a crest meeting the lowest allowed Gz ``gz_min`` [g] at
    speed ``v`` [m/s]: R = v^2 / (g0 (1 - Gz_min))."""
    return v * v / (G0 * (1.0 - gz_min))


def bank_angle_deg(v: float, radius_m: float) -> float:
    """Bank [deg] that cancels the lateral force in a level turn of radius ``radius_m`` at
    speed ``v``: tan(theta) = v^2 / (g0 R)."""
    return math.degrees(math.atan2(v * v, G0 * radius_m))


def transition_length(v: float, curvature_step: float, onset_limit_g_s: float) -> float:
    """Clothoid length [m] from curvature 0 to ``curvature_step`` [1/m] that keeps the rate
    of change of the normal acceleration within ``onset_limit_g_s`` [g/s] at speed ``v``:
    L = v^3 k / (g0 onset_lim)."""
    return v**3 * abs(curvature_step) / (G0 * onset_limit_g_s)


def _at(geometry: TrackGeometry, station: float, *names: str):
    return [a[0] for a in geometry.sample(np.array([station]), *names)]


def _step(geometry: TrackGeometry, station: float, component: np.ndarray) -> float:
    """Curvature step [1/m] across ``station``: the median of ``component`` over
    STEP_REACH_M after it minus that before it (medians: the spline's ringing at a step
    does not count)."""
    offset = geometry.s - station
    before = component[(offset >= -STEP_REACH_M) & (offset < -0.2 * STEP_REACH_M)]
    after = component[(offset > 0.2 * STEP_REACH_M) & (offset <= STEP_REACH_M)]
    if not before.size or not after.size:
        return 0.0
    return float(abs(np.median(after) - np.median(before)))


def remedy_for(event, geometry: TrackGeometry | None, place: str = "",
               seat_height_m: float | None = None) -> Remedy | None:
    """A computed remedy for an event (see the module text), or None without geometry
    (recorded data) or speed."""
    f = event.governing
    v = f.v_m_s
    if geometry is None or v is None or f.s_worst_m is None:
        return None
    s = f.s_worst_m
    if f.kind == "stall":
        return _stall_remedy(geometry, s)
    if v <= 0.0:
        return None
    if f.kind == "duration" and f.axis == "gz":
        return _vertical(geometry, s, v, f.limit_g, f.peak_g)
    if f.kind == "duration" and f.axis == "gy":
        return _lateral(geometry, s, v)
    if f.kind == "duration" and f.axis == "gx":
        return _tangential(geometry, s, v, f.limit_g, place, seat_height_m)
    if f.kind == "onset":
        component = (-geometry.omega[:, 1] if f.axis == "gz" else geometry.omega[:, 2]
                     if f.axis == "gy" else None)
        if component is None:
            return None
        k = _step(geometry, s, component)
        length = transition_length(v, k, abs(f.limit_g))
        return Remedy("transition length", length, "m", "L >= v^3 k / (g0 onset_lim)",
                      f"ease the curvature step of {k:.3f} 1/m over a transition (clothoid) "
                      f"of at least {length:.1f} m at {v:.1f} m/s ({FIRST_ESTIMATE})")
    if f.kind == "combined":
        factor = 1.0 - f.margin / 100.0
        return Remedy("radius factor", factor, "x", "R_new = (1 + f) R",
                      f"open the rider's path radius here to at least {factor:.2f} times "
                      f"the present one at {v:.1f} m/s ({FIRST_ESTIMATE})")
    return None


def _vertical(geometry, s, v, limit, peak) -> Remedy:
    (up,) = _at(geometry, s, "up")
    u = float(up[2])
    need = abs(limit - u)
    now = abs(peak - u)
    if need < 1e-9 or (limit - u) * (peak - u) <= 0:
        return Remedy("radius at the rider", None, "m", "R = v^2 / (g0 |Gz_lim - u|)",
                      f"gravity alone reaches the {limit:.2f} g limit here: change the "
                      f"rider's attitude, not the radius ({FIRST_ESTIMATE})")
    radius = v * v / (G0 * need)
    present = v * v / (G0 * now) if now > 1e-9 else float("inf")
    return Remedy("radius at the rider", radius, "m", "R = v^2 / (g0 |Gz_lim - u|)",
                  f"a rider path radius of at least {radius:.1f} m at {v:.1f} m/s "
                  f"(now about {present:.1f} m) meets {limit:.2f} g ({FIRST_ESTIMATE})")


def _lateral(geometry, s, v) -> Remedy:
    k_vec, roll = _at(geometry, s, "curvature_vector", "roll_deg")
    k_h = float(np.hypot(k_vec[0], k_vec[1]))
    if k_h < 1e-6:
        return Remedy("bank", 0.0, "deg", "tan(theta) = v^2 / (g0 R)",
                      f"no turn here: the lateral force comes from the bank ({float(roll):.1f}"
                      f" deg) or its rate; level it ({FIRST_ESTIMATE})")
    theta = bank_angle_deg(v, 1.0 / k_h)
    return Remedy("bank", theta, "deg", "tan(theta) = v^2 / (g0 R)",
                  f"bank the {1.0 / k_h:.1f} m radius turn at about {theta:.1f} deg at "
                  f"{v:.1f} m/s (now {abs(float(roll)):.1f} deg) ({FIRST_ESTIMATE})")


def _tangential(geometry, s, v, limit, place, seat_height_m) -> Remedy:
    if place in ("brake run", "launch", "lift"):
        rate = abs(limit) * G0
        return Remedy("tangential acceleration", rate, "m/s^2", "a <= |Gx_lim| g0",
                      f"set the {place}'s rate to at most {rate:.2f} m/s^2 ({FIRST_ESTIMATE})")
    k = _step(geometry, s, -geometry.omega[:, 1])
    h = seat_height_m or 1.0
    length = h * v * v * k / (G0 * abs(limit))
    return Remedy("transition length", length, "m", "L >= h v^2 dk / (g0 |Gx_lim|)",
                  f"the pitch curvature steps by {k:.3f} 1/m: spread it over at least "
                  f"{length:.1f} m for riders {h:.2f} m above the rails at {v:.1f} m/s "
                  f"({FIRST_ESTIMATE})")


def _stall_remedy(geometry, s) -> Remedy:
    z = geometry.position[:, 2]
    i = int(np.searchsorted(geometry.s, s))
    ahead = z[i:]
    falls = np.flatnonzero(np.diff(ahead) < 0)
    top = float(ahead[falls[0]] if falls.size else ahead.max()) if ahead.size else float(z[-1])
    dz = max(top - float(z[min(i, len(z) - 1)]), 0.0)
    speed = math.sqrt(2.0 * G0 * dz)
    return Remedy("speed at the stall point", speed, "m/s", "v >= sqrt(2 g0 dz)",
                  f"the top ahead is {dz:.1f} m higher: the train needs at least {speed:.1f} "
                  f"m/s here before losses (more entry speed, a lift or a launch) "
                  f"({FIRST_ESTIMATE})")
