"""A stall as a finding: the train comes to rest outside a stopping brake.

The dynamics stop where the train's speed reaches zero (:class:`checker.errors.TrainStalled`
says where, when and why). Every seat of the train is then stuck there, so the stall is a
finding of every seat of that load case: it fails the seat, the case and the run. All of a
stall's findings name the lead car's station (one station per stall); each carries its own
car's attitude.
"""

from __future__ import annotations

import numpy as np

from .dynamics import attitude
from .errors import TrainStalled
from .geometry import TrackGeometry
from .rules import Finding, FindingKind

STALL_RULE = "stall"


def stall_findings(stall: TrainStalled, histories, geometry: TrackGeometry, case: str,
                   car_spacing_m: float) -> list[Finding]:
    """One ``"stall"`` finding per seat history for the stall of one load case.

    Parameters
    ----------
    stall : TrainStalled
        Where (lead car station [m]), when [s] and why the train came to rest.
    histories : sequence of SeatHistory
        Objects with ``seat`` (name), ``car`` (1-based) and ``position`` ((n, 3) [m]; the
        last row is taken as the rider's position at rest).
    geometry : TrackGeometry
        Track geometry, for each car's attitude at its station.
    case : str
        Name of the load case.
    car_spacing_m : float
        Distance between successive car reference points [m].

    Returns
    -------
    findings : list of Finding
        One per history, kind ``STALL``, all at the lead car's station, each with its own
        car's attitude; ``peak_g`` holds the speed at rest (0) [m/s], margin is nan.
    """
    out = []
    for h in histories:
        car_station = stall.station_m - (h.car - 1) * car_spacing_m
        up, left = geometry.sample(np.array([car_station]), "up", "left")
        seat_attitude = attitude(float(up[0, 2]), float(left[0, 2]))
        position = tuple(float(v) for v in np.asarray(h.position)[-1])
        out.append(Finding(
            rule=STALL_RULE, kind=FindingKind.STALL, axis="", seat=h.seat, case=case,
            t_start=stall.time_s, t_end=stall.time_s, duration_s=0.0,
            peak_g=stall.speed_m_s, limit_g=0.0, margin=float("nan"), t_worst=stall.time_s,
            s_start_m=stall.station_m, s_worst_m=stall.station_m, s_end_m=stall.station_m,
            s_motion_m=stall.station_m, position_m=position, attitude=seat_attitude, v_m_s=0.0,
            detail=f"{stall.message()}; this seat's car is {seat_attitude}"))
    return out
