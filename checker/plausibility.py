"""Plausibility warnings: inputs that load but look wrong. The run goes on; the warnings are
printed and listed under review items in the report.

Thresholds are deliberately loose (they flag, they do not judge) and stated in each message.
"""

from __future__ import annotations

import numpy as np

from .constants import G0
from .dynamics import RideMotion
from .geometry import TrackGeometry
from .operation import Launch, Lift, Operation

TALLEST_PLAUSIBLE_M = 150.0  # height range beyond any built coaster (common practice, rough)
LONGEST_PLAUSIBLE_M = 3000.0  # layout length beyond any built coaster (rough)
SHORTEST_PLAUSIBLE_M = 5.0
TURN_PER_SAMPLE_DEG = 6.0  # curvature x sample spacing above this: sampling too coarse
SPIKE_RATIO = 3.0  # curvature between samples this many times that at the samples
SPIKE_FLOOR = 0.05  # [1/m] ignore spikes on gentle curves
ENERGY_TOLERANCE_M_S = 0.5  # speed above the energy bound before the energy check warns
ROLL_RATE_DEG_S = 400.0  # faster than a train is rolled in practice (rough)


NOISE_RMS_PER_M = 0.01  # curvature a 2 mm fit removes, RMS over samples: noisy input [1/m]


def fitting_warnings(geometry: TrackGeometry, line, automatic: bool) -> list[str]:
    """What the curve fit did about rounded coordinates, and curvature noise left in them.

    Parameters
    ----------
    geometry : TrackGeometry
        The fitted track.
    line : Centerline
        The loaded centerline (its ``resolution_text`` names the grid of a rounded file).
    automatic : bool
        Whether the smoothing tolerance was chosen automatically (half the grid of a rounded
        file) rather than given; only then is the fit reported.

    Returns
    -------
    list of str
        At most two warnings: the automatic fit (tolerance [mm], curvature removed [1/m]),
        and curvature noise when the 2 mm probe fit removes more than
        :data:`NOISE_RMS_PER_M` RMS.
    """
    out = []
    sm = geometry.smoothing
    if automatic and sm is not None and sm.refused:
        out.append(f"track coordinates sit on a {line.resolution_text} grid (rounded export), "
                   f"but they are not smoothed: {sm.refused}; the curve passes through every "
                   "sample, so the rounding may show as false onset and curvature: export "
                   "finer or more evenly spaced samples, or give --smoothing")
    elif automatic and sm is not None:
        out.append(f"track coordinates sit on a {line.resolution_text} grid (rounded export): "
                   f"the curve is fitted within {sm.tolerance_m * 1000:.3g} mm RMS of the samples"
                   f" (not through them); curvature removed rms {sm.rms_curvature_removed:.4f}"
                   f" 1/m, max {sm.max_curvature_removed:.4f} 1/m at station "
                   f"{sm.station_of_max_removed_m:.1f} m (--smoothing 0 fits through every "
                   "sample)")
    noise = geometry.noise
    if noise is not None and noise.rms_curvature_removed > NOISE_RMS_PER_M:
        out.append(f"curvature noise: a fit within {noise.tolerance_m * 1000:g} mm of the "
                   f"samples removes {noise.rms_curvature_removed:.3f} 1/m RMS of curvature "
                   f"(max {noise.max_curvature_removed:.3f} 1/m at station "
                   f"{noise.station_of_max_removed_m:.1f} m), more than "
                   f"{NOISE_RMS_PER_M:g} 1/m: noisy samples; try --smoothing "
                   f"{noise.tolerance_m:g}")
    return out


def track_warnings(geometry: TrackGeometry, points: np.ndarray) -> list[str]:
    """Unit, sampling and curvature-spike checks on a centerline.

    Parameters
    ----------
    geometry : TrackGeometry
        The fitted track.
    points : numpy.ndarray
        The centerline samples, shape (n, 3) [m], z up.

    Returns
    -------
    list of str
        Warnings for: a length above :data:`LONGEST_PLAUSIBLE_M` or a height range above
        :data:`TALLEST_PLAUSIBLE_M` (feet or millimetres read as metres?), a length below
        :data:`SHORTEST_PLAUSIBLE_M`, a turn of more than :data:`TURN_PER_SAMPLE_DEG` between
        samples (the first place, with the count), and the first curvature spike between
        samples (above :data:`SPIKE_FLOOR` and :data:`SPIKE_RATIO` times the curvature at the
        samples).
    """
    out = []
    height = float(np.ptp(points[:, 2]))
    length = geometry.length
    if height > TALLEST_PLAUSIBLE_M or length > LONGEST_PLAUSIBLE_M:
        out.append(f"track is {length:.0f} m long with a {height:.0f} m height range, more than "
                   f"any built coaster ({LONGEST_PLAUSIBLE_M:.0f} m, {TALLEST_PLAUSIBLE_M:.0f} m):"
                   " feet or millimetres read as metres? (--units ft, or convert)")
    if length < SHORTEST_PLAUSIBLE_M:
        out.append(f"track is only {length:.2f} m long: kilometres, or a scaled model? "
                   "lengths are read in metres")
    chords = np.diff(geometry.sample_stations)
    (curv_at,) = geometry.sample(geometry.sample_stations, "curvature_vector")
    kappa_at = np.linalg.norm(curv_at, axis=1)
    turn = np.degrees(np.maximum(kappa_at[:-1], kappa_at[1:]) * chords)
    coarse = np.flatnonzero(turn > TURN_PER_SAMPLE_DEG)
    if coarse.size:
        i = coarse[0]
        out.append(f"sampling is coarse for the curvature: the track turns {turn[i]:.1f} deg "
                   f"between samples at station {geometry.sample_stations[i]:.1f} m (more than "
                   f"{TURN_PER_SAMPLE_DEG:g} deg at {coarse.size} places); export more points")
    kappa = geometry.curvature
    idx = np.searchsorted(geometry.s, geometry.sample_stations)
    for k, (a, b) in enumerate(zip(idx[:-1], idx[1:])):
        if b - a < 3:
            continue
        inner = float(kappa[a:b].max())
        ends = max(kappa_at[k], kappa_at[k + 1])
        if inner > SPIKE_FLOOR and inner > SPIKE_RATIO * max(ends, 1e-9):
            out.append(f"curvature spike between samples near station {geometry.s[a]:.1f} m "
                       f"({inner:.3f} 1/m against {ends:.3f} 1/m at the samples): noisy or "
                       "uneven samples; consider --smoothing")
            break
    return out


def motion_warnings(geometry: TrackGeometry, motion: RideMotion,
                    operation: Operation) -> list[str]:
    """Roll rate and the energy check on a simulated ride.

    Parameters
    ----------
    geometry : TrackGeometry
        The fitted track.
    motion : RideMotion
        The simulated motion (stations [m] and speeds [m/s] at the output times).
    operation : Operation
        Start speed and powered sections.

    Returns
    -------
    list of str
        Warnings for: a speed march that did not settle (``motion.unsettled_e``); a roll
        rate (d roll / ds times speed) above :data:`ROLL_RATE_DEG_S`;
        without a launch, a start speed more than :data:`ENERGY_TOLERANCE_M_S` above what the
        height range gives (``sqrt(2 g0 h)``); unless a force launch without a speed cap is
        present, a top speed more than :data:`ENERGY_TOLERANCE_M_S` above
        ``sqrt(v_p**2 + 2 g0 h)``, ``v_p`` the largest start, lift or launch speed; a train
        still faster than :data:`END_SPEED_M_S` at the end of the track (no stopping brake).
    """
    out = []
    if motion.unsettled_e > 0.0:
        slowest = max(float(np.min(motion.v)), 1.0)
        out.append(f"the speed march did not settle: v^2/2 still moved by "
                   f"{motion.unsettled_e:.3g} m^2/s^2 in its last pass (speeds uncertain by about "
                   f"{motion.unsettled_e / slowest:.2g} m/s); check the rolling resistance and "
                   "the train's wheel loads, and confirm with a finer --step")
    (roll,) = geometry.sample(motion.s, "roll_deg")
    rate = np.abs(np.gradient(roll, motion.s)) * motion.v
    if rate.size and rate.max() > ROLL_RATE_DEG_S:
        i = int(np.argmax(rate))
        out.append(f"bank angle changes at {rate[i]:.0f} deg/s at station {motion.s[i]:.1f} m, "
                   f"faster than a train is rolled in practice ({ROLL_RATE_DEG_S:g} deg/s): "
                   "check the roll column")
    z = geometry.position[:, 2]
    powered = [operation.start_speed_m_s]
    for sec in operation.sections:
        if isinstance(sec, Lift):
            powered.append(sec.speed_m_s)
        elif isinstance(sec, Launch):
            powered += [v for v in (sec.exit_speed_m_s, sec.max_speed_m_s) if v is not None]
    force_launch = any(isinstance(s, Launch) and s.force_n is not None
                       and s.max_speed_m_s is None for s in operation.sections)
    from_height = float(np.sqrt(2 * G0 * np.ptp(z)))
    launched = any(isinstance(s, Launch) for s in operation.sections)
    if not launched and operation.start_speed_m_s > from_height + ENERGY_TOLERANCE_M_S:
        out.append(f"start speed {operation.start_speed_m_s:.1f} m/s is more than the layout's "
                   f"{np.ptp(z):.1f} m height range can give ({from_height:.1f} m/s) and no "
                   "launch provides it (energy check): check the start speed and its units")
    if motion.end_reason.startswith("reached the end") and motion.v[-1] > END_SPEED_M_S:
        out.append(f"the train reaches the end of the track at {motion.v[-1]:.1f} m/s: no "
                   "stopping brake brings it to rest, so what happens beyond is not checked; "
                   "add a brake section with speed_m_s = 0 at the end (operation file) or "
                   "extend the track")
    bound = float(np.sqrt(max(powered) ** 2 + 2 * G0 * np.ptp(z)))
    top = float(motion.v.max())
    if not force_launch and top > bound + ENERGY_TOLERANCE_M_S:
        out.append(f"top speed {top:.1f} m/s exceeds what the layout's {np.ptp(z):.1f} m height "
                   f"and powered sections can give ({bound:.1f} m/s, energy check): check the "
                   "start speed, wind and sections")
    return out


END_SPEED_M_S = 0.5  # a train faster than this at the track's end ran off it (rough)
REST_GZ_RANGE = (0.5, 1.5)  # [g0] median Gz of a seated rider's record (rough, common practice)
USUAL_CORNER_HZ = (1.0, 30.0)  # low-pass corners used for ride acceleration (common practice)
BODY_REACH_M = 0.5  # a rider's reach beyond the seat reference point (rough)
MIN_CLEARANCE_M = 1.0
NEIGHBOUR_FACTOR = 4.0  # stretches closer along the track than this x clearance are neighbours


def history_warnings(signals) -> list[str]:
    """A recorded Gz whose median is far from the 1 g of a seated rider: wrong units or a
    sensor mounted with its z axis not up.

    Parameters
    ----------
    signals : iterable of RecordedSignal
        Recorded seats, each with ``seat`` and ``g`` (shape (n, 3), [g], x, y, z).

    Returns
    -------
    list of str
        One warning per seat whose median Gz is outside :data:`REST_GZ_RANGE`.
    """
    out = []
    for sig in signals:
        rest = float(np.median(sig.g[:, 2]))
        if not REST_GZ_RANGE[0] <= rest <= REST_GZ_RANGE[1]:
            out.append(f"seat {sig.seat}: the recorded Gz has a median of {rest:.2f} g, far "
                       "from the 1 g a seated rider reads at rest: wrong units (--units g or "
                       "m/s2?) or a sensor mounted with z not up through the spine")
    return out


def filter_warnings(spec) -> list[str]:
    """A low-pass corner far outside the range usual for ride accelerations.

    Parameters
    ----------
    spec : FilterSpec
        The limit set's filter (``kind``, ``corner_hz`` [Hz]).

    Returns
    -------
    list of str
        Empty for no filter (``kind == "none"``) or a corner within
        :data:`USUAL_CORNER_HZ`; else one warning.
    """
    if spec.kind == "none":
        return []
    low, high = USUAL_CORNER_HZ
    if low <= spec.corner_hz <= high:
        return []
    effect = ("smooths away most of the ride's peaks" if spec.corner_hz < low
              else "keeps vibration that limits are not meant for")
    return [f"the limit set's filter corner is {spec.corner_hz:g} Hz, outside the usual "
            f"{low:g} to {high:g} Hz: it {effect}; check filter.corner_hz"]


def train_clearance_m(train) -> float:
    """Radius around the rails that a train and its riders take up [m] (rough).

    Parameters
    ----------
    train : Train
        The train; its seats' ``left_m`` and ``up_m`` offsets [m] are used.

    Returns
    -------
    float
        The farthest seat's distance from the rails plus :data:`BODY_REACH_M`, at least
        :data:`MIN_CLEARANCE_M` [m].
    """
    reach = max((float(np.hypot(s.left_m, s.up_m)) for s in train.seats), default=0.0)
    return max(MIN_CLEARANCE_M, reach + BODY_REACH_M)


def crossing_warnings(geometry: TrackGeometry, clearance_m: float) -> list[str]:
    """Stretches of track that pass closer to each other than the train's clearance.

    Points of the station grid are paired with a KD-tree (scipy.spatial.cKDTree); pairs
    closer along the track than ``NEIGHBOUR_FACTOR`` clearances are the same stretch. A
    layout whose ends meet (a circuit) counts distance along the track around the circuit.

    Parameters
    ----------
    geometry : TrackGeometry
        The fitted track (its station grid).
    clearance_m : float
        The train's clearance [m] (:func:`train_clearance_m`).

    Returns
    -------
    list of str
        Empty, or one warning naming the closest pair of stations [m] and their distance.
    """
    from scipy.spatial import cKDTree

    position, s = geometry.position, geometry.s
    if len(s) < 3:
        return []
    pairs = cKDTree(position).query_pairs(clearance_m, output_type="ndarray")
    if not len(pairs):
        return []
    along = np.abs(s[pairs[:, 0]] - s[pairs[:, 1]])
    if np.linalg.norm(position[0] - position[-1]) < clearance_m:  # a circuit
        along = np.minimum(along, geometry.length - along)
    apart = pairs[along > NEIGHBOUR_FACTOR * clearance_m]
    if not len(apart):
        return []
    gap = np.linalg.norm(position[apart[:, 0]] - position[apart[:, 1]], axis=1)
    k = int(np.argmin(gap))
    a, b = sorted(s[apart[k]])
    return [f"the track passes within {gap[k]:.2f} m of itself (stations {a:.1f} m and "
            f"{b:.1f} m), less than the train's clearance of {clearance_m:.2f} m: the layout "
            "crosses or clashes with itself there; check the coordinates (a loop needs a "
            "sideways offset)"]
