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
  losses (conservation of mechanical energy); where the riders are inverted, the top must
  also be passed with v^2 / r >= g0 so that they stay in their seats (common practice: a car
  without upstop wheels stays on the track at the top of a loop only while v^2 / r >= g0).
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
    """A computed suggestion, a first estimate for the designer.

    Attributes
    ----------
    quantity : str
        What to change, e.g. ``"radius at the rider"``, ``"bank"``, ``"transition length"``.
    value : float or None
        The suggested value in ``unit``; None when no value of that quantity helps (e.g.
        gravity alone reaches the limit).
    unit : str
        Unit of ``value``: ``"m"``, ``"deg"``, ``"m/s"``, ``"m/s^2"`` or ``"x"`` (a factor).
    formula : str
        The closed form used, as text.
    suggestion : str
        The suggestion in one sentence, without the "first estimate" clause (for a table
        whose heading says it).
    """

    quantity: str
    value: float | None
    unit: str
    formula: str
    suggestion: str

    @property
    def text(self) -> str:
        """The suggestion in one sentence, saying that it is a first estimate, not a design."""
        return f"{self.suggestion} ({FIRST_ESTIMATE})"


def valley_radius(v: float, gz_limit: float) -> float:
    """Rider path radius at the bottom of a valley that meets a +Gz limit.

    R = v^2 / (g0 (Gz_lim - 1)), uniform circular motion with the rider upright.

    Parameters
    ----------
    v : float
        Speed [m/s].
    gz_limit : float
        Highest allowed Gz, above 1 [g0].

    Returns
    -------
    radius : float
        Rider path radius [m] (negative or infinite for gz_limit <= 1: no radius helps).
    """
    return v * v / (G0 * (gz_limit - 1.0))


def crest_radius(v: float, gz_min: float) -> float:
    """Rider path radius over a crest that meets the lowest allowed Gz.

    R = v^2 / (g0 (1 - Gz_min)), uniform circular motion with the rider upright.

    Parameters
    ----------
    v : float
        Speed [m/s].
    gz_min : float
        Lowest allowed Gz, below 1 [g0].

    Returns
    -------
    radius : float
        Rider path radius [m].
    """
    return v * v / (G0 * (1.0 - gz_min))


def bank_angle_deg(v: float, radius_m: float) -> float:
    """Bank that cancels the lateral force in a level turn: tan(theta) = v^2 / (g0 R).

    Parameters
    ----------
    v : float
        Speed [m/s].
    radius_m : float
        Horizontal radius of the turn [m].

    Returns
    -------
    theta : float
        Bank angle, 0 to 90 [deg].
    """
    return math.degrees(math.atan2(v * v, G0 * radius_m))


def transition_length(v: float, curvature_step: float, onset_limit_g_s: float) -> float:
    """Clothoid length that keeps the onset of the normal acceleration within a limit.

    Along a clothoid (Euler spiral, curvature linear in arc length) from 0 to k over L, the
    normal acceleration v^2 kappa rises at v^3 k / L, so L = v^3 |k| / (g0 onset_lim).

    Parameters
    ----------
    v : float
        Speed [m/s].
    curvature_step : float
        Curvature reached at the end of the transition (sign ignored) [1/m].
    onset_limit_g_s : float
        Allowed rate of change of the normal acceleration [g0/s].

    Returns
    -------
    length : float
        Transition length [m].
    """
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
    """A computed remedy for an event (closed forms in the module docstring).

    Parameters
    ----------
    event : Event
        The event; its governing finding's kind, axis, speed, station, peak and limit are
        used.
    geometry : TrackGeometry or None
        Track geometry; None for recorded data.
    place : str
        The element there in words (:func:`checker.places.element_at`); a Gx finding in a
        ``"brake run"``, ``"launch"`` or ``"lift"`` gets a rate instead of a length.
    seat_height_m : float or None
        Height of the riders above the rails for the tangential rule; None takes 1 m [m].

    Returns
    -------
    remedy : Remedy or None
        None without geometry, speed or station, at zero speed (except for a stall), and for
        kinds with no closed form here (Gx onset, uplift).
    """
    f = event.governing
    v = f.v_m_s
    if geometry is None or v is None or f.s_worst_m is None:
        return None
    s = f.s_worst_m
    if f.kind == "stall":
        return _stall_remedy(geometry, s, f.attitude or "upright")
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
                      f"of at least {length:.1f} m at {v:.1f} m/s")
    if f.kind == "combined":
        factor = 1.0 - f.margin / 100.0
        return Remedy("radius factor", factor, "x", "R_new = (1 + f) R",
                      f"open the rider's path radius here to at least {factor:.2f} times "
                      f"the present one at {v:.1f} m/s")
    return None


def _vertical(geometry, s, v, limit, peak) -> Remedy:
    (up,) = _at(geometry, s, "up")
    u = float(up[2])
    need = abs(limit - u)
    now = abs(peak - u)
    if need < 1e-9 or (limit - u) * (peak - u) <= 0:
        return Remedy("radius at the rider", None, "m", "R = v^2 / (g0 |Gz_lim - u|)",
                      f"gravity alone reaches the {limit:.2f} g limit here: change the "
                      f"rider's attitude, not the radius")
    radius = v * v / (G0 * need)
    present = v * v / (G0 * now) if now > 1e-9 else float("inf")
    return Remedy("radius at the rider", radius, "m", "R = v^2 / (g0 |Gz_lim - u|)",
                  f"a rider path radius of at least {radius:.1f} m at {v:.1f} m/s "
                  f"(now about {present:.1f} m) meets {limit:.2f} g")


def _lateral(geometry, s, v) -> Remedy:
    k_vec, roll = _at(geometry, s, "curvature_vector", "roll_deg")
    k_h = float(np.hypot(k_vec[0], k_vec[1]))
    if k_h < 1e-6:
        return Remedy("bank", 0.0, "deg", "tan(theta) = v^2 / (g0 R)",
                      f"no turn here: the lateral force comes from the bank ({float(roll):.1f}"
                      f" deg) or its rate; level it")
    theta = bank_angle_deg(v, 1.0 / k_h)
    return Remedy("bank", theta, "deg", "tan(theta) = v^2 / (g0 R)",
                  f"bank the {1.0 / k_h:.1f} m radius turn at about {theta:.1f} deg at "
                  f"{v:.1f} m/s (now {abs(float(roll)):.1f} deg)")


def _tangential(geometry, s, v, limit, place, seat_height_m) -> Remedy:
    if place in ("brake run", "launch", "lift"):
        rate = abs(limit) * G0
        return Remedy("tangential acceleration", rate, "m/s^2", "a <= |Gx_lim| g0",
                      f"set the {place}'s rate to at most {rate:.2f} m/s^2")
    k = _step(geometry, s, -geometry.omega[:, 1])
    h = seat_height_m or 1.0
    length = h * v * v * k / (G0 * abs(limit))
    return Remedy("transition length", length, "m", "L >= h v^2 dk / (g0 |Gx_lim|)",
                  f"the pitch curvature steps by {k:.3f} 1/m: spread it over at least "
                  f"{length:.1f} m for riders {h:.2f} m above the rails at {v:.1f} m/s")


def _stall_remedy(geometry, s, attitude: str = "upright") -> Remedy:
    z = geometry.position[:, 2]
    i = min(int(np.searchsorted(geometry.s, s)), len(z) - 1)
    ahead = z[i:]
    falls = np.flatnonzero(np.diff(ahead) < 0)
    top = i + (int(falls[0]) if falls.size else int(np.argmax(ahead)))
    dz = max(float(z[top] - z[i]), 0.0)
    need_top = 0.0
    if attitude != "upright":  # riders held in their seats over the top: v^2 / r >= g0
        radius = 1.0 / max(float(np.linalg.norm(geometry.curvature_vector[top])), 1e-9)
        need_top = G0 * radius if geometry.up[top, 2] < 0 else 0.0
    speed = math.sqrt(need_top + 2.0 * G0 * dz)
    if speed < 0.05:  # nothing ahead to climb: it stopped for want of speed alone
        return Remedy("speed at the stall point", speed, "m/s", "v > 0",
                      "nothing ahead is higher than here: the train stops because it has no "
                      "speed left against its resistances (or never had any); give it speed "
                      "(a start speed, a lift or a launch)")
    why = (f"to reach the top ahead ({dz:.1f} m higher) with v^2 / r >= g0 there"
           if need_top else f"to reach the top ahead ({dz:.1f} m higher)")
    return Remedy("speed at the stall point", speed, "m/s",
                  "v >= sqrt(v_top^2 + 2 g0 dz), v_top^2 >= g0 r when inverted",
                  f"the train needs at least {speed:.1f} m/s here {why}, before losses "
                  f"(more entry speed, a lift or a launch)")
