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
    """One ``"stall"`` finding per seat history (objects with ``seat``, ``car`` (1-based),
    ``position`` (n, 3) [m]) for the stall of one load case."""
    out = []
    for h in histories:
        car_station = stall.station_m - (h.car - 1) * car_spacing_m
        (up,) = geometry.sample(np.array([car_station]), "up")
        seat_attitude = attitude(float(up[0, 2]))
        position = tuple(float(v) for v in np.asarray(h.position)[-1])
        out.append(Finding(
            rule=STALL_RULE, kind=FindingKind.STALL, axis="", seat=h.seat, case=case,
            t_start=stall.time_s, t_end=stall.time_s, duration_s=0.0,
            peak_g=stall.speed_m_s, limit_g=0.0, margin=float("nan"), t_worst=stall.time_s,
            s_start_m=stall.station_m, s_worst_m=stall.station_m, s_end_m=stall.station_m,
            s_motion_m=stall.station_m, position_m=position, attitude=seat_attitude, v_m_s=0.0,
            detail=f"{stall.message()}; this seat's car is {seat_attitude}"))
    return out
