"""Sensitivity: how each physical parameter moves each rule's margin.

Every rule has a *margin* for every seat: the worst (smallest) margin over the ride, in the
rule's own unit, positive while the rule holds and negative when it is exceeded (the margin a
finding carries is the same number at its worst window). For each rule, the governing seat is
the one with the smallest margin in the nominal run. Each physical parameter is then changed by
a small step up and down as a load case (:func:`checker.loadcases.apply_case`), every case is
run through the sweep executor (:func:`checker.sweep.run_cases`), and the margin's derivative
is the central difference (m(+h) - m(-h)) / 2h; at a bound of the parameter (occupancy 1,
start speed 0, no rolling resistance) a one-sided difference is used and marked as such.

Derivatives of different parameters have different units; to rank them each is multiplied by
a stated *typical change* of its parameter (e.g. 10 kg of rider mass, 5 m/s of wind), and the
table names the parameter whose typical change moves each margin most.

References
----------
Central and one-sided finite differences: any numerical analysis text, e.g. Burden & Faires,
*Numerical Analysis*, numerical differentiation (from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .conditioning import onset_rate
from .limits import AXES, REST, LimitSet, ray_fraction, star_shaped
from .loadcases import LoadCase
from .rules import duration_margin


@dataclass(frozen=True)
class Parameter:
    """A physical parameter varied by the sensitivity run.

    Attributes
    ----------
    key : str
        Identifier, e.g. ``"rider_mass_kg"``.
    label : str
        Name shown in tables.
    unit : str
        Unit of the parameter, as shown.
    step : float
        Finite-difference step [unit].
    typical : float
        A typical change in practice, for ranking the effects [unit].
    """

    key: str
    label: str
    unit: str
    step: float  # finite-difference step [unit]
    typical: float  # a typical change in practice, for ranking [unit]


PARAMETERS = (
    Parameter("rider_mass_kg", "rider mass", "kg", 2.0, 10.0),
    Parameter("occupancy", "occupancy", "fraction", 0.05, 0.25),
    Parameter("rolling_coefficient", "rolling coefficient", "-", 0.001, 0.003),
    Parameter("drag_area_m2", "drag area CdA", "m^2", 0.05, 0.3),
    Parameter("air_density_kg_m3", "air density", "kg/m^3", 0.02, 0.1),
    Parameter("head_wind_m_s", "head wind", "m/s", 0.5, 5.0),
    Parameter("start_speed_m_s", "start speed", "m/s", 0.25, 1.0),
    Parameter("lift_speed_pct", "lift speed", "%", 2.0, 10.0),
)


@dataclass(frozen=True)
class SensitivityRow:
    """One rule at its governing seat: margin and its derivatives per parameter.

    Attributes
    ----------
    rule : str
        Rule name, e.g. ``"duration +Gz"``.
    seat : str
        The governing seat (smallest nominal margin), or a seat that governs an event.
    margin : float
        Nominal worst margin, in the rule's unit (g0, g0/s, % of the envelope or m).
    derivative : dict
        {parameter key: d(margin)/d(parameter) [rule unit per parameter unit], or None where
        a perturbed case stalled or lacks the rule}.
    one_sided : tuple of str
        Parameters differenced one-sided (at a bound).
    events : tuple of str
        Ids of the nominal run's events this seat governs for this rule.
    """

    rule: str
    seat: str
    margin: float
    derivative: dict  # parameter key -> d margin / d parameter [rule unit per unit], or None
    one_sided: tuple[str, ...]  # parameters differenced one-sided (at a bound)
    events: tuple[str, ...] = ()  # the nominal run's events this seat governs for this rule

    @property
    def label(self) -> str:
        """The rule, with the events this seat governs (``[E1,E3]``)."""
        return self.rule + (f" [{','.join(self.events)}]" if self.events else "")

    def effect(self, p: Parameter) -> float | None:
        """Change of the margin for a typical change of a parameter.

        Parameters
        ----------
        p : Parameter
            The parameter.

        Returns
        -------
        effect : float or None
            Derivative times ``p.typical``, in the rule's unit; None without a derivative.
        """
        d = self.derivative.get(p.key)
        return None if d is None else d * p.typical

    @property
    def dominant(self) -> str | None:
        """Key of the parameter whose typical change moves this margin most, or None when no
        effect reaches 1e-3 of the rule's unit."""
        effects = [(abs(self.effect(p)), p.key) for p in PARAMETERS
                   if self.effect(p) is not None]
        return max(effects)[1] if effects and max(effects)[0] >= 1e-3 else None

    def to_dict(self) -> dict:
        """The row as JSON fields (margin, derivatives, typical effects, dominant parameter).

        Returns
        -------
        fields : dict
        """
        return {"rule": self.rule, "seat": self.seat, "margin": self.margin,
                "derivative": dict(self.derivative),
                "typical_effect": {p.key: self.effect(p) for p in PARAMETERS
                                   if p.key in self.derivative},
                "one_sided": list(self.one_sided), "dominant": self.dominant,
                "events": list(self.events)}


@dataclass(frozen=True)
class Sensitivity:
    """The sensitivity of a run: one row per rule and governing seat.

    Attributes
    ----------
    rows : tuple of SensitivityRow
        Each rule at its governing seat in the limit set's rule order, then the other seats
        that govern an event of the nominal run.
    parameters : tuple of Parameter
        The parameters considered.
    base : dict
        {parameter key: nominal value, or None where it does not apply}.
    skipped : dict
        {parameter key: why it was not varied}.
    """

    rows: tuple[SensitivityRow, ...]
    parameters: tuple[Parameter, ...]
    base: dict  # parameter key -> nominal value
    skipped: dict  # parameter key -> why it was not varied

    def to_dict(self) -> dict:
        """The sensitivity as JSON fields (parameters with steps and nominal values, skipped
        parameters, rows).

        Returns
        -------
        fields : dict
        """
        return {"parameters": [{"key": p.key, "label": p.label, "unit": p.unit,
                                "step": p.step, "typical_change": p.typical,
                                "nominal": self.base.get(p.key)} for p in self.parameters],
                "skipped": dict(self.skipped), "rows": [r.to_dict() for r in self.rows]}


CHUNK = 1 << 16  # samples traced at once (bounded temporaries)


def _polygon_margin(pair: np.ndarray, env) -> float:
    """-100 x the largest outside fraction of the samples [% of the envelope]. For a polygon
    that is star-shaped about the rest point, a sample at distance d from it has a fraction
    between d / r_max - 1 and d / r_min - 1 (r_min, r_max: nearest edge, farthest vertex),
    so only the samples that can beat the farthest sample's lower bound are traced."""
    center = np.array([REST[env.axes[0]], REST[env.axes[1]]])
    away = np.any(np.abs(pair - center) > 1e-12, axis=1)
    if not away.any():
        return 100.0
    rel = env.vertices - center
    ang = np.arctan2(rel[:, 1], rel[:, 0])
    if star_shaped(np.angle(np.exp(1j * np.diff(np.append(ang, ang[0]))))):
        dist = np.hypot(pair[:, 0] - center[0], pair[:, 1] - center[1])
        edge = np.roll(rel, -1, axis=0) - rel
        along = np.clip(-np.sum(rel * edge, axis=1) / np.sum(edge * edge, axis=1), 0.0, 1.0)
        r_min = float(np.min(np.hypot(*(rel + along[:, None] * edge).T)))
        r_max = float(np.max(np.hypot(rel[:, 0], rel[:, 1])))
        if r_min > 0:
            # the farthest sample's exact fraction bounds the answer from below; a sample
            # can beat a bound f only when d / r_min - 1 >= f. Chunks keep the temporaries
            # small, and each one's answer raises the bound for the rest.
            far = int(np.argmax(np.where(away, dist, -np.inf)))
            best = float(ray_fraction(env.vertices, center, pair[far:far + 1])[0])
            best = max(best, float(dist[far]) / r_max - 1.0)
            left = np.flatnonzero(away & (dist >= (best + 1.0) * r_min * (1 - 1e-9)))
            while left.size:
                chunk, left = left[:CHUNK], left[CHUNK:]
                best = max(best, float(np.max(ray_fraction(env.vertices, center,
                                                           pair[chunk]))))
                left = left[dist[left] >= (best + 1.0) * r_min * (1 - 1e-9)]
            return -100.0 * best
    idx = np.flatnonzero(away)
    return -100.0 * max(float(np.max(ray_fraction(env.vertices, center,
                                                  pair[idx[i:i + CHUNK]])))
                        for i in range(0, idx.size, CHUNK))


def rule_margins(filtered: np.ndarray, dt: float, limits: LimitSet, t: np.ndarray,
                 uplift=None, sustained: dict | None = None) -> dict:
    """Worst margin of every rule over one seat's filtered signal.

    Units as the findings': g0 for duration rules, % of the envelope for combined ones
    (inside positive), g0/s for onset, metres for uplift.

    Parameters
    ----------
    filtered : (n, 3) ndarray
        Filtered specific force (Gx, Gy, Gz) [g0].
    dt : float
        Sample interval [s].
    limits : LimitSet
        The rules.
    t : (n,) ndarray
        Sample times [s] (for the onset rates).
    uplift : UpliftSummary or None
        The seat's flights; the uplift margin is given only with a free-travel limit.
    sustained : dict or None
        {sustained envelope name: :class:`checker.sustained.SustainedCombined`} where the
        rule engine has it; computed here otherwise.

    Returns
    -------
    margins : dict
        {rule name: worst margin}; positive while the rule holds, negative when exceeded.
        Empty for an empty signal.
    """
    idx = {a: i for i, a in enumerate(AXES)}
    out = {}
    if len(filtered) == 0:
        return out
    for rule in limits.duration:
        out[f"duration {rule.name}"] = duration_margin(filtered[:, idx[rule.axis]], dt, rule)
    for env in limits.combined:
        pair = filtered[:, [idx[env.axes[0]], idx[env.axes[1]]]]
        if env.source == "sustained":
            from .sustained import pair_limits, sustained_combined

            res = (sustained or {}).get(env.name) or sustained_combined(pair[:, 0], pair[:, 1], dt,
                                     pair_limits(limits.duration, env.axes[0]),
                                     pair_limits(limits.duration, env.axes[1]))
            out[f"combined {env.name}"] = 100.0 * (1.0 - float(np.sqrt(res.ratio.max())))
        else:
            out[f"combined {env.name}"] = _polygon_margin(pair, env)
    if len(t) > 1:
        for onset in limits.onset:
            rate = onset_rate(filtered[:, idx[onset.axis]], t)
            out[f"onset {onset.axis}"] = float(onset.limit_g_per_s - np.max(np.abs(rate)))
    if uplift is not None and uplift.free_travel_m is not None:
        worst = uplift.worst
        out["uplift free travel"] = uplift.free_travel_m - (worst.peak_m if worst else 0.0)
    return out


def nominal_values(train, operation, options) -> dict:
    """The nominal value of every parameter.

    Parameters
    ----------
    train : Train
        Masses, occupancy and resistances.
    operation : Operation
        Start speed and sections.
    options : RideOptions
        Head wind.

    Returns
    -------
    base : dict
        {parameter key: nominal value in the parameter's unit}; occupancy is the mean over
        the cars; ``lift_speed_pct`` is 100 with a lift section and None without.
    """
    lifts = [s for s in operation.sections if s.kind == "lift"]
    occ = (float(np.mean(train.occupancy_by_car)) if train.occupancy_by_car
           else float(train.occupancy))
    return {"rider_mass_kg": train.rider_mass_kg, "occupancy": occ,
            "rolling_coefficient": train.rolling_coefficient,
            "drag_area_m2": train.drag_area_m2, "air_density_kg_m3": train.air_density_kg_m3,
            "head_wind_m_s": options.head_wind_m_s,
            "start_speed_m_s": operation.start_speed_m_s,
            "lift_speed_pct": 100.0 if lifts else None}


BOUNDS = {"rider_mass_kg": (1.0, 500.0), "occupancy": (0.0, 1.0),
          "rolling_coefficient": (0.0, 0.5), "drag_area_m2": (0.0, 100.0),
          "air_density_kg_m3": (0.01, 5.0), "head_wind_m_s": (-60.0, 60.0),
          "start_speed_m_s": (0.0, 100.0), "lift_speed_pct": (1.0, 500.0)}


def _case(p: Parameter, value: float, name: str, base: dict) -> LoadCase:
    if p.key == "lift_speed_pct":
        return LoadCase(name, lift_speed_factor=value / 100.0)
    if p.key == "occupancy":
        return LoadCase(name, occupancy=float(value))
    if p.key == "rolling_coefficient":
        return LoadCase(name, rolling_coefficient=float(value))
    if p.key == "head_wind_m_s":
        return LoadCase(name, head_wind_m_s=float(value))
    return LoadCase(name, **{p.key: float(value)})


def perturbation_cases(base: dict, parameters=PARAMETERS) -> tuple[list[LoadCase], dict,
                                                                   dict]:
    """Load cases for every parameter's step down and up, with the points used.

    Each parameter goes to its nominal value -+ ``step``, clipped to :data:`BOUNDS`; a point
    that falls on the nominal value is the nominal case (one-sided difference).

    Parameters
    ----------
    base : dict
        Nominal values (:func:`nominal_values`).
    parameters : tuple of Parameter
        Parameters to vary.

    Returns
    -------
    cases : list of LoadCase
        ``"sensitivity nominal"`` first, then the perturbed cases.
    points : dict
        {parameter key: ((case name, value) below, (case name, value) above)}.
    skipped : dict
        {parameter key: why it is not varied}.
    """
    cases, points, skipped = [], {}, {}
    for p in parameters:
        x0 = base.get(p.key)
        if x0 is None:
            skipped[p.key] = "not in this ride (no lift section)"
            continue
        lo_b, hi_b = BOUNDS[p.key]
        lo, hi = max(lo_b, x0 - p.step), min(hi_b, x0 + p.step)
        if hi - lo <= 0:
            skipped[p.key] = "no room to vary it"
            continue
        pair = []
        for tag, value in (("-", lo), ("+", hi)):
            name = f"sensitivity {p.key} {tag}"
            if value == x0:
                name = "sensitivity nominal"
            else:
                cases.append(_case(p, value, name, base))
            pair.append((name, value))
        points[p.key] = tuple(pair)
    cases.insert(0, LoadCase("sensitivity nominal"))
    return cases, points, skipped


def sensitivity_from_sweep(sweep, base: dict, points: dict, skipped: dict,
                           parameters=PARAMETERS, train_length_m: float = 0.0) -> Sensitivity:
    """Derivatives of every rule's governing margin from a sweep of the perturbation cases.

    One row per rule at its governing seat, and one per other seat that governs an event of
    the nominal run (:func:`checker.events.group_findings`). The derivative is
    (m(x_hi) - m(x_lo)) / (x_hi - x_lo): central, or one-sided where a bound clipped a step.

    Parameters
    ----------
    sweep : Sweep
        Outcomes of the cases of :func:`perturbation_cases`, with seat margins.
    base : dict
        Nominal values.
    points : dict
        Case names and values below and above each parameter.
    skipped : dict
        Parameters not varied, with the reason.
    parameters : tuple of Parameter
        Parameters considered.
    train_length_m : float
        Distance from the first to the last car's reference point, for the events [m].

    Returns
    -------
    sensitivity : Sensitivity

    References
    ----------
    R. L. Burden and J. D. Faires, Numerical Analysis, Brooks/Cole (central and one-sided
    difference formulas; from memory).
    """
    from .events import group_findings

    by_case = {o.case: o for o in sweep.outcomes}
    nominal = by_case["sensitivity nominal"]
    margins = {(s.seat, o.case): s.margins for o in sweep.outcomes
               for s in o.evaluation.seats}
    rules: dict[str, tuple[float, str]] = {}
    for s in nominal.evaluation.seats:
        for rule, m in s.margins.items():
            if rule not in rules or m < rules[rule][0]:
                rules[rule] = (m, s.seat)
    pairs: dict[tuple[str, str], list[str]] = {(r, seat): [] for r, (_, seat) in rules.items()}
    for event in group_findings(nominal.evaluation.findings, train_length_m):
        pairs.setdefault((event.rule, event.governing.seat), []).append(event.id)
    rows = []
    for (rule, seat), event_ids in pairs.items():
        m0 = margins.get((seat, "sensitivity nominal"), {}).get(rule)
        if m0 is None:
            continue
        deriv, one_sided = {}, []
        for p in parameters:
            if p.key not in points:
                continue
            (name_lo, x_lo), (name_hi, x_hi) = points[p.key]
            stalled = by_case[name_lo].stall or by_case[name_hi].stall
            m_lo = margins.get((seat, name_lo), {}).get(rule)
            m_hi = margins.get((seat, name_hi), {}).get(rule)
            if stalled or m_lo is None or m_hi is None:
                deriv[p.key] = None
                continue
            deriv[p.key] = (m_hi - m_lo) / (x_hi - x_lo)
            if x_lo == base[p.key] or x_hi == base[p.key]:
                one_sided.append(p.key)
        rows.append(SensitivityRow(rule, seat, m0, deriv, tuple(one_sided), tuple(event_ids)))
    # rows in the limit set's order (margins of different rules have different units)
    return Sensitivity(tuple(rows), tuple(parameters), dict(base), dict(skipped))


def run_sensitivity(centerline, train, operation, limits: LimitSet, options, *,
                    workers: int | None = None, scheduler: str | None = None,
                    progress=None) -> Sensitivity:
    """Every rule's governing margin and its derivative per parameter.

    Central differences over load cases run on the sweep executor
    (:func:`checker.sweep.run_cases`).

    Parameters
    ----------
    centerline : Centerline
        The layout.
    train : Train
        The nominal train.
    operation : Operation
        The nominal operation.
    limits : LimitSet
        The rules.
    options : RideOptions
        Numerical options (and the nominal head wind).
    workers : int or None
        Local worker processes; None for all cores.
    scheduler : str or None
        Dask scheduler address (``tcp://host:port``); None for local processes.
    progress : callable or None
        Called as ``progress(done, total)`` while cases finish.

    Returns
    -------
    sensitivity : Sensitivity

    Raises
    ------
    InputError
        As :func:`checker.ride.run_ride`, for any case.
    """
    from .sweep import run_cases

    base = nominal_values(train, operation, options)
    cases, points, skipped = perturbation_cases(base)
    sweep = run_cases(centerline, train, operation, limits, options, cases, workers=workers,
                      scheduler=scheduler, progress=progress)
    return sensitivity_from_sweep(sweep, base, points, skipped,
                                  train_length_m=train.length_m)


def sensitivity_table(sens: Sensitivity) -> str:
    """Terminal table of a sensitivity.

    Parameters
    ----------
    sens : Sensitivity

    Returns
    -------
    text : str
        Per row: rule, seat, margin, the change of the margin for each parameter's typical
        change ("stall" where there is no derivative) and the parameter that moves it most;
        then the parameters not varied.
    """
    params = [p for p in sens.parameters if p.key not in sens.skipped]
    head = f"{'rule':<26} {'seat':<12} {'margin':>8} " + " ".join(
        f"{p.label[:10]:>10}" for p in params) + "  moved most by"
    lines = ["sensitivity: change of each margin for a typical change of each parameter",
             "  (" + ", ".join(f"{p.label} {p.typical:g} {p.unit}" for p in params) + ")",
             head, "-" * len(head)]
    for r in sens.rows:
        cells = []
        for p in params:
            e = r.effect(p)
            cells.append(f"{'stall' if e is None else f'{e:+.3f}':>10}")
        top = next((p.label for p in params if p.key == r.dominant), "-")
        lines.append(f"{r.label[:26]:<26} {r.seat[:12]:<12} {r.margin:8.3f} " + " ".join(cells)
                     + f"  {top}")
    if not sens.rows:
        lines.append("  (no rule to rank)")
    for key, why in sens.skipped.items():
        lines.append(f"  {key}: not varied ({why})")
    return "\n".join(lines)
