"""The design aids' report section: its context and its figures.

Figures take plain arrays and return a one-page PDF, like :mod:`checker.report.figures` (the
bank figure SVG text, for the plot file beside the banked track);
:func:`aids_section` builds the template context of ``aids.html.j2`` from a result.
"""

from __future__ import annotations

import matplotlib.ticker
import numpy as np

from ..limits import AXES
from ..zones import overall_highest
from .figures import FINDING_COLOR, WIDTH_IN, _pdf, _svg, path_decimate, plt

# Figure heights [in] (the width is WIDTH_IN), known before a figure is drawn
ZONES_HEIGHT_IN, UPLIFT_HEIGHT_IN, RATIO_HEIGHT_IN = 2.5, 1.7, 1.9
ZONE_COLORS = ("#e3f1e0", "#fdf1cf", "#fbdcc4", "#f6c4c4", "#e4d2ee", "#d3e3f3")


def zones_figure(zones, traces: list[tuple[str, np.ndarray, np.ndarray]], title: str) -> bytes:
    """Filtered (Gx, Gz) traces over the zone polygons (highest order drawn first, so nested
    diagrams show every band).

    Parameters
    ----------
    zones : sequence of checker.limits.Zone
        Objects with ``name``, ``order`` and ``vertices`` (m, 2) [g] in (Gx, Gz).
    traces : list of (str, numpy.ndarray, numpy.ndarray)
        (label, gx, gz) [g] of each seat drawn (reduced with
        :func:`checker.report.figures.path_decimate`, 0.02 g).
    title : str
        Figure title.

    Returns
    -------
    bytes
        The figure, a one-page PDF.
    """
    fig, ax = plt.subplots(figsize=(WIDTH_IN, ZONES_HEIGHT_IN))
    keys = {}
    for k, z in sorted(enumerate(zones), key=lambda p: -p[1].order):
        v = np.vstack([z.vertices, z.vertices[:1]])
        keys[(z.order, k)] = ax.fill(v[:, 0], v[:, 1], color=ZONE_COLORS[k % len(ZONE_COLORS)],
                                     lw=0.7, ec="#666666", label=z.name)[0]
    shades = ("#1f5fa8", "#b0301f", "#2a8a3e", "#7a3fa0")
    lines = []
    for i, (label, gx, gz) in enumerate(traces):
        pts = np.column_stack([gx, gz])
        path = pts[path_decimate(pts, 0.02)]
        lines += ax.plot(path[:, 0], path[:, 1], lw=0.6, color=shades[i % len(shades)],
                         label=label)
    ax.set_xlabel("Gx [g]")
    ax.set_ylabel("Gz [g]")
    ax.set_title(title)
    # the zones' names and the seats in a key beside the diagram: a name written on the
    # diagram ran past the frame or lay under the traces
    ax.legend(handles=[keys[k] for k in sorted(keys)] + lines, loc="upper left",
              bbox_to_anchor=(1.01, 1.0), borderaxespad=0.0, fontsize=6)
    fig.tight_layout()
    return _pdf(fig)


def uplift_figure(points: list[tuple[float, float, str]], free_travel_m: float | None,
                  xlabel: str, title: str) -> bytes:
    """Peak rise off the seat [m] of every flight against its station (or time).

    Parameters
    ----------
    points : list of (float, float, str)
        (station [m] or time [s], peak rise [m], seat label) of each flight; the rise is
        drawn on a log axis.
    free_travel_m : float or None
        The limit set's free travel [m]: flights above it are red and the limit is drawn.
    xlabel : str
        Label of the x axis (station or time).
    title : str
        Figure title.

    Returns
    -------
    bytes
        The figure, a one-page PDF.
    """
    fig, ax = plt.subplots(figsize=(WIDTH_IN, UPLIFT_HEIGHT_IN))
    if points:
        x = np.array([p[0] for p in points])
        y = np.array([p[1] for p in points])
        over = np.full(len(y), False) if free_travel_m is None else y > free_travel_m
        ax.plot(x[~over], y[~over], "o", ms=3, color="#1f5fa8", label="flight")
        if over.any():
            ax.plot(x[over], y[over], "o", ms=3.5, color=FINDING_COLOR,
                    label="beyond the free travel")
        ax.set_yscale("log")
        # plain numbers: the log axis labels by default with math text, turned off here
        ax.yaxis.set_major_formatter(matplotlib.ticker.FuncFormatter(lambda v, _: f"{v:g}"))
        ax.yaxis.set_minor_locator(matplotlib.ticker.NullLocator())
    if free_travel_m is not None:
        ax.axhline(free_travel_m, color=FINDING_COLOR, lw=1.0, ls="--", label="free travel")
    ax.set_xlabel(xlabel)
    ax.set_ylabel("rise off the seat [m]")
    ax.set_title(title)
    if points or free_travel_m is not None:
        ax.legend(loc="best")
    fig.tight_layout()
    return _pdf(fig)


def ratio_figure(t: np.ndarray, ratios: list[tuple[str, np.ndarray]], title: str) -> bytes:
    """Sustained combined ratio (a/A)^2 + (b/B)^2 against time, with the limit 1.

    Parameters
    ----------
    t : numpy.ndarray
        Time, shape (n,) [s].
    ratios : list of (str, numpy.ndarray)
        (label, ratio of shape (n,) [-]) of each curve.
    title : str
        Figure title.

    Returns
    -------
    bytes
        The figure, a one-page PDF.
    """
    fig, ax = plt.subplots(figsize=(WIDTH_IN, RATIO_HEIGHT_IN))
    for label, r in ratios:
        ax.plot(t, r, lw=0.8, label=label)
    ax.axhline(1.0, color=FINDING_COLOR, lw=1.0, label="limit")
    ax.set_xlabel("time [s]")
    ax.set_ylabel("ratio")
    ax.set_title(title)
    ax.legend(loc="upper right")
    fig.tight_layout()
    return _pdf(fig)


def sensitivity_height(rows: int) -> float:
    """Height of :func:`sensitivity_figure` [in] (its width is WIDTH_IN).

    Parameters
    ----------
    rows : int
        The number of rules (rows of the heat map).

    Returns
    -------
    float
        The figure height [in].
    """
    return 0.9 + 0.3 * rows


def sensitivity_figure(rules: list[str], labels: list[str], effects: np.ndarray,
                       margins: np.ndarray, title: str) -> bytes:
    """Heat map: the change of each rule's margin for a typical change of each parameter, in
    % of that margin (rows: rules, columns: parameters), so rules of different units compare;
    red loses margin, blue gains it.

    Parameters
    ----------
    rules : list of str
        Row labels (rule and seat).
    labels : list of str
        Column labels (parameters).
    effects : numpy.ndarray
        Margin change for a typical change of each parameter, shape (rules, parameters), in
        each rule's unit; NaN where unknown.
    margins : numpy.ndarray
        Each rule's margin, shape (rules,), same unit; a margin of (nearly) zero leaves its
        row blank.
    title : str
        Figure title.

    Returns
    -------
    bytes
        The figure, a one-page PDF.
    """
    scale = np.where(np.abs(margins) > 1e-9, np.abs(margins), np.nan)[:, None]
    rel = 100.0 * effects / scale
    fig, ax = plt.subplots(figsize=(WIDTH_IN, sensitivity_height(len(rules))))
    top = np.nanmax(np.abs(rel)) if np.isfinite(rel).any() else 1.0
    ax.imshow(np.nan_to_num(rel), cmap="RdBu", vmin=-top, vmax=top, aspect="auto")
    for i in range(rel.shape[0]):
        for j in range(rel.shape[1]):
            if np.isfinite(rel[i, j]):
                dark = abs(rel[i, j]) > 0.6 * top
                ax.text(j, i, f"{rel[i, j]:+.0f}", ha="center", va="center", fontsize=6,
                        color="white" if dark else "#111111")
    ax.set_xticks(range(len(labels)))
    ax.set_xticklabels(labels, fontsize=6.5, rotation=30, ha="right")
    ax.set_yticks(range(len(rules)))
    ax.set_yticklabels(rules, fontsize=6.5)
    ax.grid(False)
    ax.set_title(title)
    fig.tight_layout()
    return _pdf(fig)


def bank_figure(s: np.ndarray, given: np.ndarray, advised: np.ndarray, target: np.ndarray,
                unmet: np.ndarray, title: str) -> str:
    """Given and advised bank [deg] against station, with the unsmoothed target.

    Parameters
    ----------
    s : numpy.ndarray
        Stations, shape (n,) [m].
    given, advised, target : numpy.ndarray
        Bank (roll) at each station, shape (n,) [deg]: as given, as advised, and the
        unsmoothed roll that cancels Gy at rail level.
    unmet : numpy.ndarray
        Bool, shape (n,): where the advice cannot meet every seat (drawn red).
    title : str
        Figure title.

    Returns
    -------
    str
        The SVG document.
    """
    fig, ax = plt.subplots(figsize=(WIDTH_IN, 2.8))
    ax.plot(s, target, color="#bbbbbb", lw=0.8, label="cancelling Gy at rail level")
    ax.plot(s, given, color="#222222", lw=1.0, label="given")
    ax.plot(s, advised, color="#1f5fa8", lw=1.2, label="advised")
    if unmet.any():
        ax.plot(s, np.where(unmet, advised, np.nan), color=FINDING_COLOR, lw=2.0,
                label="cannot meet every seat")
    ax.set_xlabel("station along the track [m]")
    ax.set_ylabel("roll [deg]")
    ax.set_title(title)
    ax.legend(loc="best")
    fig.tight_layout()
    return _svg(fig)


def _top_zone_rows(rows: list[dict], count: int) -> list[dict]:
    """The seats reaching the highest zones first (earliest first among equals)."""
    def key(r):
        h = r["highest"]
        return (-(h["order"] if h else 0), h["t_start"] if h else 0.0)

    return sorted(rows, key=key)[:count]


def _governing(evaluation, rule: str):
    """The seat with the smallest margin for a rule among those with signals kept."""
    kept = [s for s in evaluation.seats if s.filtered is not None and rule in s.margins]
    return min(kept, key=lambda s: s.margins[rule]) if kept else None


def _draw_now(function, *args):
    return function(*args)


def aids_section(evaluation, sensitivity=None, draw=_draw_now) -> dict:
    """Template context of the aids section: tables and figures (not yet assets).

    Parameters
    ----------
    evaluation : Evaluation
        The check; figures use the seats that carry their filtered signal.
    sensitivity : checker.sensitivity.Sensitivity or None, optional
        Adds the sensitivity table and heat map when it has rows.
    draw : callable, optional
        Called as ``draw(figure_function, *args)`` for each figure; its return value is
        what the section holds as that figure (by default the one-page PDF, drawn at once;
        the report passes one that queues the figure for its worker pool).

    Returns
    -------
    dict
        ``uplift`` (free travel, the three highest seats, the worst flight, figure),
        ``zones`` (None without a diagram), ``sustained`` (one entry per sustained rule, its
        ratio figure at the governing seat with signals) and ``sensitivity`` (or None);
        each ``figure`` is what ``draw`` returned (a one-page PDF by default; empty when
        there is nothing to draw).
    """
    from ..aids import sustained_document, uplift_document, zones_document

    limits = evaluation.limits
    up = uplift_document(evaluation)
    flights = []
    by_station = all(e["s_start_m"] is not None for s in up["seats"] for e in s["events"])
    for s in up["seats"]:
        for e in s["events"]:
            flights.append((e["s_start_m"] if by_station else e["t_start"], e["peak_m"],
                            s["seat"]))
    uplift_rows = sorted(
        ({"seat": s["seat"], "case": s["case"], "flights": len(s["events"]),
          "peak": s["peak_m"], "where": max(s["events"], key=lambda e: e["peak_m"])}
         for s in up["seats"] if s["events"]), key=lambda r: -r["peak"])[:3]
    section = {
        "uplift": {"free_travel": up["free_travel_m"], "rows": uplift_rows,
                   "more": sum(1 for s in up["seats"] if s["events"]) > len(uplift_rows),
                   "worst": up["worst"],
                   "figure": draw(uplift_figure, flights, up["free_travel_m"],
                                  "station [m]" if by_station else "time [s]",
                                  "Rise of an unrestrained rider off the seat, "
                                  "every flight of every seat")},
        "zones": None, "sustained": [], "sensitivity": None,
    }
    several = len({s.case for s in evaluation.seats}) > 1  # name the case only then

    def who(result) -> str:
        return f"{result.seat} ({result.case})" if several else result.seat

    zones = zones_document(evaluation)
    if zones is not None:
        summaries = {(s.seat, s.case): s for s in evaluation.seats if s.zones is not None}
        top = overall_highest({k: s.zones for k, s in summaries.items()})
        # the figure draws the seats the table lists (highest zone first, then earliest)
        kept = {(s.seat, s.case): s for s in evaluation.seats if s.filtered is not None}
        ranked = [kept[(r["seat"], r["case"])] for r in _top_zone_rows(zones["seats"],
                                                                        len(zones["seats"]))
                  if (r["seat"], r["case"]) in kept]
        traces = [(who(s), s.filtered[:, 0], s.filtered[:, 2]) for s in ranked[:3]]
        named = top[0] if top else None  # (seat, case) reaching the highest zone first
        drawn = named is not None and named in {(s.seat, s.case) for s in ranked[:3]}
        section["zones"] = {
            "top": zones["highest"], "rows": _top_zone_rows(zones["seats"], 3),
            "more": max(0, len(zones["seats"]) - 3),
            "diagram": [{"name": z.name, "order": z.order, "dwell": z.dwell_s}
                        for z in limits.zones],
            "top_drawn": drawn,
            # the longest stretch outside the diagram, of any seat (the table lists three)
            "outside": max(zones["seats"], key=lambda r: r["outside_longest_s"], default=None),
            "figure": draw(zones_figure, limits.zones, traces, "Filtered (Gx, Gz) over the "
                           "zone diagram" + (f"; highest zone by {named[0]}" if drawn else "")),
        }
    for entry in sustained_document(evaluation):
        seat = _governing(evaluation, entry["rule"])
        figure = ""
        if seat is not None:
            from ..sustained import pair_limits, sustained_combined

            env = next(e for e in limits.combined if f"combined {e.name}" == entry["rule"])
            ia, ib = AXES.index(env.axes[0]), AXES.index(env.axes[1])
            dt = float(np.median(np.diff(seat.t)))
            res = sustained_combined(seat.filtered[:, ia], seat.filtered[:, ib], dt,
                                     pair_limits(limits.duration, env.axes[0]),
                                     pair_limits(limits.duration, env.axes[1]))
            figure = draw(ratio_figure, seat.t, [(who(seat), res.ratio)],
                          f"{entry['rule']}: (a/A)^2 + (b/B)^2 at the governing seat")
        section["sustained"].append({**entry, "figure": figure})
    if sensitivity is not None and sensitivity.rows:
        params = [p for p in sensitivity.parameters if p.key not in sensitivity.skipped]
        rows = list(sensitivity.rows)
        effects = np.array([[r.effect(p) if r.effect(p) is not None else np.nan
                             for p in params] for r in rows])
        section["sensitivity"] = {
            "params": [{"label": p.label, "unit": p.unit, "typical": f"{p.typical:g}",
                        "nominal": sensitivity.base.get(p.key)} for p in params],
            "rows": [{"rule": r.label, "seat": r.seat, "margin": f"{r.margin:.3f}",
                      "cells": ["-" if np.isnan(e) else f"{e:+.3f}" for e in effects[i]],
                      "dominant": next((p.label for p in params if p.key == r.dominant),
                                       "-")} for i, r in enumerate(rows)],
            "skipped": sorted(sensitivity.skipped.items()),
            "figure": draw(sensitivity_figure, [f"{r.label} ({r.seat})" for r in rows],
                           [p.label for p in params], effects,
                           np.array([r.margin for r in rows]),
                           "Change of each margin for a typical change of each "
                           "parameter, in % of the margin"),
        }
    return section


def job_height(function, args: tuple) -> float:
    """The height [in] of an aids figure before it is drawn (its width is WIDTH_IN).

    Parameters
    ----------
    function : callable
        One of the figure functions of this module (not the bank figure).
    args : tuple
        Its arguments, as :func:`aids_jobs` lists them.

    Returns
    -------
    float
        The figure height [in].
    """
    if function is sensitivity_figure:
        return sensitivity_height(len(args[0]))
    return {zones_figure: ZONES_HEIGHT_IN, uplift_figure: UPLIFT_HEIGHT_IN,
            ratio_figure: RATIO_HEIGHT_IN}[function]


class _Pending(int):
    """The index of a figure job not drawn yet."""


def aids_jobs(evaluation, sensitivity) -> tuple[dict, list]:
    """:func:`aids_section` with its figures left as (function, args) jobs.

    The jobs are drawn with the report's other figures (on every core); finish with
    :func:`aids_context`.

    Parameters
    ----------
    evaluation : Evaluation
        The check.
    sensitivity : checker.sensitivity.Sensitivity or None
        As for :func:`aids_section`.

    Returns
    -------
    section : dict
        The section, each figure a placeholder for its job.
    jobs : list of (callable, tuple)
        The figure functions and their arguments, in placeholder order.
    """
    jobs: list = []

    def defer(function, *args):
        jobs.append((function, args))
        return _Pending(len(jobs) - 1)

    return aids_section(evaluation, sensitivity, draw=defer), jobs


def aids_context(section: dict, drawn: list, asset) -> dict:
    """The section of :func:`aids_jobs` with each figure drawn and handed to ``asset``.

    Parameters
    ----------
    section : dict
        The section from :func:`aids_jobs`.
    drawn : list
        The drawn figure of each job (what ``asset`` takes), in job order.
    asset : callable
        ``asset(figure) -> str``: registers a figure and returns its ``checker-asset:``
        URL.

    Returns
    -------
    dict
        The section with figure URLs in place of the placeholders.
    """
    for part in (section["uplift"], section["zones"], section["sensitivity"],
                 *section["sustained"]):
        if part is not None and isinstance(part.get("figure"), _Pending):
            part["figure"] = asset(drawn[part["figure"]])
    return section


def bank_pdf(advice, svg: str, info: dict) -> bytes:
    """A short PDF of a bank advice: caution, figures, plot, inputs and command.

    Parameters
    ----------
    advice : checker.bank.BankAdvice
        The advice (its ``to_dict`` figures fill the table).
    svg : str
        The figure from :func:`bank_figure`.
    info : dict
        ``track``, ``output``, ``riders``, ``inputs`` (list of (file, sha256)),
        ``command``, ``roll_rate`` [deg/s], ``tolerance`` [g] and ``smoothing`` [s] are
        required; ``page_size`` (``"a4"`` or ``"letter"``) is optional.

    Returns
    -------
    bytes
        The PDF, rendered in memory (nothing is written).
    """
    import jinja2

    from .. import __version__
    from ..documents import CAUTION
    from .pdf import ASSET_SCHEME, TEMPLATES, TemplatesOnlyFetcher, render_pdf

    env = jinja2.Environment(loader=jinja2.FileSystemLoader(str(TEMPLATES)), autoescape=True,
                             undefined=jinja2.StrictUndefined)
    d = advice.to_dict()
    rows = [("Roll-rate limit", f"{info['roll_rate']:g} deg/s (fastest advised "
                                f"{d['max_roll_rate_deg_s']:.1f} deg/s)"),
            ("|Gy| tolerance per seat", f"{info['tolerance']:g} g"),
            ("Roll smoothing window", f"{info['smoothing']:g} s"),
            ("Largest change from the given bank", f"{d['max_change_deg']:.1f} deg"),
            ("Worst |Gy| at any seat, given bank", f"{d['max_abs_gy_given_g']:.3f} g"),
            ("Worst |Gy| at any seat, advised bank", f"{d['max_abs_gy_advised_g']:.3f} g"),
            ("Same, where the rail-level target is met",
             f"{d['max_abs_gy_where_rate_allows_g']:.3f} g"),
            ("Length where it is not met", f"{d['rate_bound_length_m']:.1f} m")]
    css = env.get_template("report.css").render(
        page_size={"a4": "A4", "letter": "letter"}[info.get("page_size", "a4")],
        footer_left="checker bank advice - not a verified design")
    html = env.get_template("bank.html.j2").render(
        css=css, track=info["track"], output=info["output"], riders=info["riders"],
        version=__version__, caution=CAUTION, rows=rows, figure=f"{ASSET_SCHEME}:bank.svg",
        inputs=info["inputs"], command=info["command"],
        worse=d["max_abs_gy_advised_g"] > d["max_abs_gy_given_g"])
    return render_pdf(html, TemplatesOnlyFetcher(assets={"bank.svg": svg}))
