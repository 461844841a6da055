"""Report figures (matplotlib, vector output): one-page PDFs for reports.

Every function takes plain arrays and returns the figure as a one-page PDF (matplotlib's
PDF backend; :mod:`checker.report.placing` puts it into the report), its size given by the
function's ``*_height`` companion so a report can lay out before it is drawn; nothing here
knows physics or rules. Long signals are reduced to per-pixel minimum and maximum before
plotting, so the peaks stay visible and the files stay small.
"""

from __future__ import annotations

import io
import re
import warnings
import xml.etree.ElementTree as ET

import matplotlib

matplotlib.use("Agg")
import matplotlib.figure  # noqa: E402
import matplotlib.pyplot as plt  # noqa: E402
import matplotlib.ticker  # noqa: E402
import numpy as np  # noqa: E402

plt.rcParams.update({
    "svg.fonttype": "none", "font.family": "DejaVu Sans",
    # Type 3 glyphs: embedding TrueType (42) subsets each figure's font with fontTools,
    # three times slower per figure (measured on the demo's 22 figures)
    "pdf.fonttype": 3, "font.size": 8,
    "axes.titlesize": 9, "axes.labelsize": 8, "legend.fontsize": 7, "axes.grid": True,
    "grid.alpha": 0.3, "svg.hashsalt": "checker",  # deterministic element ids
    "text.parse_math": False,  # '$' in a seat, case or file name is text, never math markup
    # titles at a fixed height above the axes: with no tick labels on top there is nothing
    # to dodge, and the automatic placement measures every tick label again on each draw
    "axes.titley": 1.0,
})
# A name in a script DejaVu Sans lacks (a seat called in Chinese, an emoji) is drawn as a
# box in a figure; the JSON and the terminal keep it whole. matplotlib's warning for each
# missing glyph, with a source line, would only clutter the terminal.
warnings.filterwarnings("ignore", message=r"Glyph \d+ .* missing from font", category=UserWarning)
AXIS_COLORS = {"gx": "#1f5fa8", "gy": "#2a8a3e", "gz": "#6a3d9a"}
DIRECTION_COLORS = ("#1f5fa8", "#e08a00")  # exposure curves: first and second direction
FINDING_COLOR = "#d11a1a"
LIMIT_COLOR = "#111111"  # limit lines: black, dashed; never the colour of a signal
NEUTRAL = {"gx": 0.0, "gy": 0.0, "gz": 1.0}  # the level of a rider at rest [g]
WIDTH_IN = 6.7  # fits A4 and US Letter with 2 cm margins
LOG_TICKS = [0.01, 0.1, 1.0, 10.0, 100.0]
# Space above the top axes [in]: for a figure title, for panel titles only, for none (half a
# tick label). A report puts its figure titles in the HTML instead, as captions set once
# (they were a third of the figures' characters, when weasyprint drew figure text).
TITLE_IN, PANEL_TITLE_IN, BARE_TOP_IN = 0.23, 0.25, 0.08


def _margins(fig, top_in: float, bottom_in: float, **kwargs) -> None:
    """Fixed margins in inches (no tight_layout, which draws the whole figure once more)."""
    height = fig.get_figheight()
    fig.subplots_adjust(top=1.0 - top_in / height, bottom=bottom_in / height, **kwargs)


def _log_duration_axis(ax) -> None:
    """Plain decade labels and no minor ticks: legible and cheap to draw."""
    ax.set_xscale("log")
    ax.xaxis.set_major_locator(matplotlib.ticker.FixedLocator(LOG_TICKS))
    ax.xaxis.set_major_formatter(matplotlib.ticker.FixedFormatter(
        ["0.01", "0.1", "1", "10", "100"]))
    ax.xaxis.set_minor_locator(matplotlib.ticker.NullLocator())


# Legend corners tried in turn; the first one no line passes under is taken
_CORNERS = ("upper right", "upper left", "lower right", "lower left")
_MEASURE: dict[float, object] = {}  # a text-measuring renderer per figure dpi


def _crosses(segments: np.ndarray, box: tuple[float, float, float, float]) -> bool:
    """Whether any segment (k, 2, 2) [px] meets the rectangle (x0, y0, x1, y1) [px]
    (Liang-Barsky clipping, all segments at once)."""
    if not len(segments):
        return False
    x0, y0, x1, y1 = box
    start, delta = segments[:, 0], segments[:, 1] - segments[:, 0]
    lo, hi = np.zeros(len(segments)), np.ones(len(segments))
    inside = np.ones(len(segments), dtype=bool)
    for p, q in ((-delta[:, 0], start[:, 0] - x0), (delta[:, 0], x1 - start[:, 0]),
                 (-delta[:, 1], start[:, 1] - y0), (delta[:, 1], y1 - start[:, 1])):
        parallel = p == 0
        inside &= ~(parallel & (q < 0))
        with np.errstate(divide="ignore", invalid="ignore"):
            r = np.where(parallel, 0.0, q / np.where(parallel, 1.0, p))
        lo = np.where(~parallel & (p < 0), np.maximum(lo, r), lo)
        hi = np.where(~parallel & (p > 0), np.minimum(hi, r), hi)
    return bool(np.any(inside & (lo <= hi)))


def _segments(ax) -> np.ndarray:
    """Every drawn line of the axes (data, limits, reference lines) as display-space
    segments (k, 2, 2) [px]; a NaN ends a line."""
    parts = []
    for line in ax.lines:
        if not line.get_visible():
            continue
        xy = line.get_transform().transform(line.get_path().vertices)
        seg = np.stack([xy[:-1], xy[1:]], axis=1)
        parts.append(seg[np.isfinite(seg).all(axis=(1, 2))])
    return np.concatenate(parts) if parts else np.zeros((0, 2, 2))


def free_legend(ax, fontsize: float = 6, **kwargs):
    """A legend placed where no line of the axes passes under it.

    Matplotlib's ``loc="best"`` only picks the corner covering the fewest vertices, which
    on a full plot still hides a limit line or a peak. Here the four corners are tried in
    turn; when every one covers a line, the y range grows on the side that needs the least
    (the legend then sits in an empty band above or below the data). The axes keep their
    size and margins: call this after the figure's margins and every line are set, on a
    linear y axis.

    Parameters
    ----------
    ax : matplotlib.axes.Axes
        The axes, with all their lines drawn.
    fontsize : float, optional
        Legend font size [pt] (default 6).
    **kwargs
        Further :meth:`matplotlib.axes.Axes.legend` arguments (``ncol``, ``handles``...).

    Returns
    -------
    matplotlib.legend.Legend
        The legend, at its chosen corner.
    """
    from matplotlib.backends.backend_agg import RendererAgg

    fig = ax.figure
    legend = ax.legend(loc=_CORNERS[0], fontsize=fontsize, **kwargs)
    if fig.dpi not in _MEASURE:
        _MEASURE[fig.dpi] = RendererAgg(1, 1, fig.dpi)
    size = legend.get_window_extent(_MEASURE[fig.dpi])
    frame = ax.get_window_extent()
    pad = legend.borderaxespad * fontsize * fig.dpi / 72.0
    gap = 0.5 * fontsize * fig.dpi / 72.0  # clear space kept between legend and lines
    w, h = size.width + 2 * gap, size.height + 2 * gap
    ax.get_ylim()  # settle autoscaling before reading the data transform
    segments = _segments(ax)

    def box(corner: str) -> tuple[float, float, float, float]:
        x0 = frame.x0 + pad - gap if "left" in corner else frame.x1 - pad - size.width - gap
        y0 = frame.y0 + pad - gap if "lower" in corner else frame.y1 - pad - size.height - gap
        return x0, y0, x0 + w, y0 + h

    for corner in _CORNERS:
        if not _crosses(segments, box(corner)):
            legend.set_loc(corner)
            return legend
    # no corner is free: the y range each corner needs to clear the lines beneath it
    y0, y1 = ax.get_ylim()
    to_data = ax.transData.inverted()
    best = None
    for corner in _CORNERS:
        bx0, _, bx1, _ = box(corner)
        seg = segments[(segments[..., 0].max(axis=1) >= bx0)
                       & (segments[..., 0].min(axis=1) <= bx1)]
        if not len(seg):
            continue
        # each segment cut to the legend's columns: its ends at the cut, linearly
        a, b = seg[:, 0], seg[:, 1]
        dx = np.where(b[:, 0] == a[:, 0], 1.0, b[:, 0] - a[:, 0])
        ts = np.clip(np.stack([(bx0 - a[:, 0]) / dx, (bx1 - a[:, 0]) / dx]), 0.0, 1.0)
        ts = np.concatenate([ts, np.zeros((1, len(seg))), np.ones((1, len(seg)))])
        xs = a[:, 0] + ts * (b[:, 0] - a[:, 0])
        ys = a[:, 1] + ts * (b[:, 1] - a[:, 1])
        ys = ys[(xs >= bx0 - 1e-9) & (xs <= bx1 + 1e-9)]
        if not len(ys):
            continue
        free = 1.0 - (h + pad) / frame.height  # the data's share of the axes height
        if free <= 0.2:
            continue
        if "upper" in corner:
            reach = to_data.transform((frame.x0, ys.max()))[1]
            span = (reach - y0) / free
            lims = (y0, max(y1, y0 + span))  # never narrower than the data's own range
        else:
            reach = to_data.transform((frame.x0, ys.min()))[1]
            span = (y1 - reach) / free
            lims = (min(y0, y1 - span), y1)
        if best is None or span < best[0]:
            best = (span, corner, lims)
    if best is not None:
        ax.set_ylim(*best[2])
        legend.set_loc(best[1])
    return legend


SVG_NS = "http://www.w3.org/2000/svg"
XLINK_NS = "http://www.w3.org/1999/xlink"
_NO_ROTATION = re.compile(r"rotate\(-?0 [-+\d.e]+ [-+\d.e]+\)")


def _pdf(fig) -> bytes:
    """The figure as a one-page PDF of its size; closed unless kept for reuse."""
    buffer = io.BytesIO()
    fig.savefig(buffer, format="pdf", metadata={"CreationDate": None})  # same input, same bytes
    if not any(fig is f for f, _ in _REUSED.values()):
        plt.close(fig)
    return buffer.getvalue()


def _svg(fig) -> str:
    buf = io.StringIO()
    fig.savefig(buf, format="svg", metadata={"Date": None})
    if not any(fig is f for f, _ in _REUSED.values()):
        plt.close(fig)
    return lean_svg(buf.getvalue())


# This process's figures by layout, kept for the next figure of the same layout (see _reused)
_REUSED: dict[tuple, tuple] = {}


def _reused(nrows: int, ncols: int, figsize: tuple[float, float], **kwargs):
    """``plt.subplots(nrows, ncols, figsize=figsize, **kwargs)``, or the figure of the same
    layout drawn last in this process, emptied of its plotted artists and legends.

    A report draws many figures of a few layouts (event windows, seat pages); most of a
    figure's matplotlib time goes into making axes and their tick objects, which an emptied
    figure keeps (about 40 % less time per figure). Callers set every label, limit and scale
    on each use; a figure with a title has another height than one without, so titles never
    carry over. tests/test_report.py checks that a reused figure draws the same PDF as a new
    one.
    """
    key = (nrows, ncols, tuple(figsize), repr(sorted(kwargs.items())))
    if key not in _REUSED:
        fig = matplotlib.figure.Figure(figsize=figsize)  # kept out of pyplot's open figures
        _REUSED[key] = (fig, fig.subplots(nrows, ncols, **kwargs))
        return _REUSED[key]
    fig, axes = _REUSED[key]
    for ax in fig.axes:
        for artist in [*ax.lines, *ax.patches, *ax.collections, *ax.texts]:
            artist.remove()
        if ax.get_legend() is not None:
            ax.get_legend().remove()
        ax.set_title("")
        ax.relim()
        ax.autoscale()  # limits follow the new data, as on new axes
    return fig, axes


def lean_svg(text: str) -> str:
    """The same drawing in fewer, simpler SVG nodes, which weasyprint draws far faster.

    Matplotlib wraps every artist in a ``<g id=...>``, writes each style as a CSS
    declaration (parsed again for every node) and adds a metadata block and a ``*`` style
    sheet. Here groups that carry only an id give way to their children, style declarations
    become presentation attributes (the same cascade: SVG 1.1, 6.4), the sheet's two
    inherited properties move to the root, and zero rotations go. Within each axis (its
    ticks, grid and labels), the grid lines become one path and the tick marks another:
    matplotlib writes a path per grid line and a ``<use>`` of a marker per tick, and each
    node costs weasyprint a clip, a graphics state and (for ``<use>``) a copy of the marker.
    Tick marks become the marker's polyline moved to the tick; parallel lines with the same
    stroke do not overlap, so one path draws them as the separate ones did. What is drawn
    does not change.

    Parameters
    ----------
    text : str
        An SVG document as matplotlib writes it.

    Returns
    -------
    str
        The leaner SVG document (the text unchanged when it is not well-formed XML).
    """
    ET.register_namespace("", SVG_NS)
    ET.register_namespace("xlink", XLINK_NS)
    try:
        root = ET.fromstring(text[text.index("<svg"):])
    except ET.ParseError:  # e.g. control characters of a name in a title: left as drawn
        return text
    markers: dict[str, ET.Element] = {}
    _lean_children(root, markers)
    used = {el.get(_HREF, "")[1:] for el in root.iter(f"{{{SVG_NS}}}use")}
    for defs in list(root.iter(f"{{{SVG_NS}}}defs")):
        for el in list(defs):
            if el.tag == f"{{{SVG_NS}}}style" or (el.get("id") in markers
                                                  and el.get("id") not in used):
                defs.remove(el)  # the style sheet, and markers no tick refers to any more
    _drop_empty_defs(root)
    # what the removed "*{stroke-linejoin: round; stroke-linecap: butt}" sheet gave every node
    root.set("stroke-linejoin", "round")
    root.set("stroke-linecap", "butt")
    return ET.tostring(root, encoding="unicode")


_HREF = f"{{{XLINK_NS}}}href"
_POLYLINE = re.compile(r"\s*(?:[ML]\s*[-+\d.e]+\s+[-+\d.e]+\s*)+")
_NUMBER_PAIR = re.compile(r"([ML])\s*([-+\d.e]+)\s+([-+\d.e]+)")


def _drop_empty_defs(parent) -> None:
    for el in list(parent):
        if el.tag == f"{{{SVG_NS}}}defs" and not len(el):
            parent.remove(el)
        else:
            _drop_empty_defs(el)


def _merge_axis(axis, markers: dict) -> None:
    """One path per stroke style among an axis group's paths (its grid lines) and its
    tick marks (``<use>`` of a polyline marker, written out at the tick), in place."""
    kept: list = []
    merged: dict[tuple, ET.Element] = {}
    for el in axis:
        tag = el.tag.rpartition("}")[2]
        d = None
        if tag == "path" and "id" not in el.attrib:
            d, attrs = el.get("d", ""), {k: v for k, v in el.attrib.items() if k != "d"}
        elif tag == "use":
            marker = markers.get(el.get(_HREF, "")[1:])
            attrs = {k: v for k, v in el.attrib.items() if k not in (_HREF, "x", "y")}
            if marker is not None and attrs == {k: v for k, v in marker.attrib.items()
                                                if k not in ("id", "d")}:
                x, y = float(el.get("x", 0)), float(el.get("y", 0))
                d = " ".join(f"{op} {float(a) + x:.6f} {float(b) + y:.6f}"
                             for op, a, b in _NUMBER_PAIR.findall(marker.get("d", "")))
        if d is None:
            kept.append(el)
            continue
        key = (tag, tuple(sorted(attrs.items())))
        if key in merged:
            merged[key].set("d", merged[key].get("d") + " " + d)
        else:
            path = ET.Element(f"{{{SVG_NS}}}path", attrs)
            path.set("d", d)
            merged[key] = path
            kept.append(path)
    axis[:] = kept


def _lean_children(parent, markers: dict) -> None:
    kept = []
    for el in parent:
        tag = el.tag.rpartition("}")[2]
        if tag == "metadata":
            continue
        _lean_children(el, markers)
        style = el.attrib.pop("style", None)
        if style:
            for declaration in style.split(";"):
                name, colon, value = declaration.partition(":")
                if colon:
                    el.set(name.strip(), value.strip())
        transform = el.get("transform")
        if transform is not None and _NO_ROTATION.fullmatch(transform):
            del el.attrib["transform"]
        if tag == "path" and parent.tag == f"{{{SVG_NS}}}defs" and "id" in el.attrib \
                and _POLYLINE.fullmatch(el.get("d", "")):
            markers[el.get("id")] = el  # a tick marker: ticks may be written out as paths
        if tag == "g" and el.get("id", "").startswith("matplotlib.axis"):
            _merge_axis(el, markers)
        if tag == "g" and set(el.attrib) <= {"id"}:
            kept.extend(el)  # a bare group: its children take its place
        else:
            kept.append(el)
    parent[:] = kept


def envelope_decimate(x: np.ndarray, y: np.ndarray, bins: int = 300):
    """Keep the minimum and maximum of y in each of about ``bins`` equal slices (peaks survive).

    Parameters
    ----------
    x : numpy.ndarray
        Abscissa, shape (n,).
    y : numpy.ndarray
        Ordinate, shape (n,).
    bins : int, optional
        Number of slices (default 300).

    Returns
    -------
    x, y : numpy.ndarray
        The inputs unchanged when ``n <= 2 * bins``; else 2 points per slice (its minimum and
        maximum, in their order along x).
    """
    n = len(x)
    if n <= 2 * bins:
        return x, y
    width = -(-n // bins)  # ceil: every sample falls in a slice
    slices = np.minimum(np.arange(-(-n // width) * width), n - 1).reshape(-1, width)
    values = np.asarray(y)[slices]
    rows = np.arange(len(slices))
    pair = np.stack([slices[rows, np.argmin(values, axis=1)],
                     slices[rows, np.argmax(values, axis=1)]], axis=1)
    keep = np.sort(pair, axis=1).ravel()
    return x[keep], y[keep]


def path_decimate(points: np.ndarray, tolerance: float) -> np.ndarray:
    """Indices of a 2-D path's points, keeping one whenever the path enters another cell of
    a ``tolerance`` grid (no shortcuts across fast excursions; vectorized).

    Parameters
    ----------
    points : numpy.ndarray
        The path, shape (n, 2).
    tolerance : float
        Cell size of the grid (same unit as ``points``).

    Returns
    -------
    numpy.ndarray
        Increasing integer indices; the first and the last point are always kept.
    """
    n = len(points)
    if n < 3:
        return np.arange(n)
    cells = np.floor(np.asarray(points, dtype=float) / tolerance)
    moved = np.any(cells[1:] != cells[:-1], axis=1)
    keep = np.flatnonzero(np.concatenate(([True], moved)))
    if keep[-1] != n - 1:
        keep = np.append(keep, n - 1)
    return keep


def layout_views_height(speed: bool, bank: bool) -> float:
    """Height of :func:`layout_views` [in] (its width is :data:`WIDTH_IN`).

    Parameters
    ----------
    speed, bank : bool
        Whether the speed and the bank panels are drawn.

    Returns
    -------
    float
        The figure height [in].
    """
    return 5.6 + 1.3 * (speed + bank)


def layout_views(position: np.ndarray, s: np.ndarray, marks: list[tuple[float, str]],
                 station_every_m: float = 100.0, title: str = "",
                 speed: tuple[np.ndarray, np.ndarray] | None = None,
                 bank_deg: np.ndarray | None = None) -> bytes:
    """Plan (x-y) and elevation (station-z) views with station ticks and finding marks, and
    (when given) speed and bank against station, so a reader can see the input was
    understood.

    Parameters
    ----------
    position : numpy.ndarray
        Track points on the station grid, shape (n, 3) [m], z up.
    s : numpy.ndarray
        Stations of those points, shape (n,) [m], increasing.
    marks : list of (float, str)
        (station [m], label) of each exceedance location, drawn as crosses.
    station_every_m : float, optional
        Spacing of the station ticks on the plan view [m] (default 100).
    title : str, optional
        Appended to the plan view's title.
    speed : (numpy.ndarray, numpy.ndarray) or None, optional
        (lead car station [m], speed [m/s]) for a speed panel.
    bank_deg : numpy.ndarray or None, optional
        Roll against the level reference at each station of ``s`` [deg], right side down
        positive, for a bank panel.

    Returns
    -------
    bytes
        The figure, a one-page PDF.
    """
    extra = (speed is not None) + (bank_deg is not None)
    ratios = [3, 1.4] + [1.0] * extra
    fig, panels = plt.subplots(2 + extra, 1, figsize=(
        WIDTH_IN, layout_views_height(speed is not None, bank_deg is not None)),
                               gridspec_kw={"height_ratios": ratios})
    plan, elev = panels[0], panels[1]
    rest = list(panels[2:])
    if speed is not None:
        ax = rest.pop(0)
        ax.plot(*speed, color="#1f5fa8", lw=1.0, label="speed (lead car)")
        ax.set_ylabel("speed [m/s]")
        ax.set_title("Speed against station")
        ax.set_xlim(0.0, s[-1])
        ax.legend(loc="best", fontsize=6)
    if bank_deg is not None:
        ax = rest.pop(0)
        ax.plot(s, bank_deg, color="#2a8a3e", lw=1.0, label="bank (roll, right side down +)")
        ax.set_ylabel("bank [deg]")
        ax.set_xlabel("station along the track [m]")
        ax.set_title("Bank against station")
        ax.set_xlim(0.0, s[-1])
        ax.legend(loc="best", fontsize=6)
    plan.plot(position[:, 0], position[:, 1], color="#333333", lw=1.0)
    plan.set_aspect("equal", adjustable="datalim")
    plan.set_xlabel("x [m]")
    plan.set_ylabel("y [m]")
    plan.set_title("Plan view" + (f" - {title}" if title else ""))
    ticks = np.arange(0.0, s[-1], station_every_m)
    idx = np.searchsorted(s, ticks).clip(0, len(s) - 1)
    plan.plot(position[idx, 0], position[idx, 1], "o", ms=2.5, color="#555555")
    span = max(np.ptp(position[:, 0]), np.ptp(position[:, 1]), 1.0)
    placed: list[np.ndarray] = []
    for k, i in enumerate(idx):  # skip a label that would sit on an earlier one
        where = position[i, :2]
        if any(np.linalg.norm(where - p) < 0.05 * span for p in placed):
            continue
        placed.append(where)
        plan.annotate(f"{ticks[k]:.0f}", where, textcoords="offset points",
                      xytext=(3, 3), fontsize=6, color="#555555")
    elev.plot(s, position[:, 2], color="#333333", lw=1.0)
    elev.set_xlabel("station along the track [m]")
    elev.set_ylabel("height z [m]")
    elev.set_title("Elevation (height against station)")
    if marks:
        ms = np.array([m for m, _ in marks])
        mi = np.searchsorted(s, ms).clip(0, len(s) - 1)
        plan.plot(position[mi, 0], position[mi, 1], "x", color=FINDING_COLOR, ms=7, mew=1.6,
                  label="exceedance")
        elev.plot(ms, position[mi, 2], "x", color=FINDING_COLOR, ms=7, mew=1.6)
        plan.legend(loc="best")
        elev.legend(["track", "exceedance"], loc="best", fontsize=6)
    elev.set_xlim(0.0, s[-1])
    # fixed margins (inches) instead of tight_layout, which draws the whole figure once more
    height, rows, gap = fig.get_figheight(), 2 + extra, 0.72  # gap: x label and next title
    usable = height - 0.3 - 0.5
    fig.subplots_adjust(left=0.1, right=0.98, top=1.0 - 0.3 / height, bottom=0.5 / height,
                        hspace=gap * rows / (usable - gap * (rows - 1)))
    return _pdf(fig)


ELEVATION_PAIR_HEIGHT_IN = 2.6  # the figure of elevation_pair [in]


def elevation_pair(left: tuple, right: tuple, labels: tuple[str, str]) -> bytes:
    """Two layouts' elevations side by side.

    Parameters
    ----------
    left, right : tuple
        ``(s, z, marks)``: stations [m], heights [m] (arrays of shape (n,)) and the stations
        of finding marks [m] (list, may be empty).
    labels : (str, str)
        The two panels' titles.

    Returns
    -------
    bytes
        The figure, a one-page PDF.
    """
    fig, axes = plt.subplots(1, 2, figsize=(WIDTH_IN, ELEVATION_PAIR_HEIGHT_IN), sharey=True)
    for ax, (s, z, marks), label in zip(axes, (left, right), labels):
        ax.plot(s, z, color="#333333", lw=1.0)
        if marks:
            mi = np.searchsorted(s, marks).clip(0, len(s) - 1)
            ax.plot(s[mi], z[mi], "x", color=FINDING_COLOR, ms=6, mew=1.4)
        ax.set_title(label)
        ax.set_xlabel("station [m]")
    axes[0].set_ylabel("height z [m]")
    fig.tight_layout()
    return _pdf(fig)


def time_histories_height(titled: bool) -> float:
    """Height of :func:`time_histories` [in] (its width is :data:`WIDTH_IN`).

    Parameters
    ----------
    titled : bool
        Whether the figure has a title.

    Returns
    -------
    float
        The figure height [in].
    """
    return 3.63 + (TITLE_IN if titled else BARE_TOP_IN)


def time_histories(t: np.ndarray, filtered: np.ndarray, raw: np.ndarray | None,
                   spans: list[tuple[float, float, str]], title: str,
                   overlay: tuple[np.ndarray, np.ndarray, str] | None = None) -> bytes:
    """Gx, Gy, Gz against time: filtered in colour, raw faint behind, findings shaded.

    Parameters
    ----------
    t : numpy.ndarray
        Time, shape (n,) [s].
    filtered : numpy.ndarray
        Filtered signal, shape (n, 3) [g], columns gx, gy, gz.
    raw : numpy.ndarray or None
        Raw signal, shape (n, 3) [g], or None.
    spans : list of (float, float, str)
        (t_start [s], t_end [s], axis) of each finding; an axis such as ``"gx+gz"`` shades
        both panels.
    title : str
        Figure title; empty: none (the axes keep their size, the figure is shorter).
    overlay : (numpy.ndarray, numpy.ndarray, str) or None, optional
        (t [s], filtered (m, 3) [g], label) of a second signal drawn dashed (comparisons,
        correlation).

    Returns
    -------
    bytes
        The figure, a one-page PDF; each signal is reduced with :func:`envelope_decimate`.
    """
    top = TITLE_IN if title else BARE_TOP_IN
    fig, axes = _reused(3, 1, (WIDTH_IN, time_histories_height(bool(title))), sharex=True)
    for i, (ax, axis) in enumerate(zip(axes, ("gx", "gy", "gz"))):
        if raw is not None:
            ax.plot(*envelope_decimate(t, raw[:, i]), color="#bbbbbb", lw=0.6, label="raw")
        ax.plot(*envelope_decimate(t, filtered[:, i]), color=AXIS_COLORS[axis], lw=0.9,
                label="filtered")
        if overlay is not None:
            ax.plot(*envelope_decimate(overlay[0], overlay[1][:, i]), color="#222222", lw=0.8,
                    ls="--", label=overlay[2])
        for a, b, which in spans:
            if which == axis or axis in which.split("+"):
                ax.axvspan(a, b, color=FINDING_COLOR, alpha=0.18, lw=0)
        ax.set_ylabel(f"{axis.capitalize()} [g]")
        ax.legend(loc="upper right", ncol=3, fontsize=6)
    if title:
        axes[0].set_title(title)
    axes[-1].set_xlabel("time [s]")
    _margins(fig, top, 0.4, left=0.09, right=0.98, hspace=0.12)  # room for "time [s]"
    return _pdf(fig)


def exposure_curves_height(titled: bool) -> float:
    """Height of :func:`exposure_curves` [in] (its width is :data:`WIDTH_IN`).

    Parameters
    ----------
    titled : bool
        Whether the figure has a title.

    Returns
    -------
    float
        The figure height [in].
    """
    return 1.886 + PANEL_TITLE_IN + (0.164 if titled else 0.0)


def exposure_curves(curves: list[dict], title: str) -> bytes:
    """Exposure curves against limits, one panel per axis with both directions.

    An exposure curve is the highest level sustained for at least a duration. Each curve is
    drawn only on its own side of the rider-at-rest level (Gz +1, Gx and Gy 0), the side of
    its limit; a legend in every panel.

    Parameters
    ----------
    curves : list of dict
        Each: ``name``, ``axis`` (``"gx"``, ``"gy"`` or ``"gz"``), ``durations`` [s] and
        ``levels`` [g] (equal length, increasing durations), ``limit_durations`` [s] and
        ``limit_levels`` [g]; optionally ``step`` (draw the limit as steps),
        ``limit_label`` (its legend, default ``"limit"``), ``overlay_durations``,
        ``overlay_levels`` and ``overlay_label`` (a second curve drawn dotted).
    title : str
        Figure title; empty: none (the panels keep their size, the figure is shorter).

    Returns
    -------
    bytes
        The figure, a one-page PDF (durations on a log axis).
    """
    axes_names = [a for a in ("gx", "gy", "gz") if any(c["axis"] == a for c in curves)]
    top = PANEL_TITLE_IN + (0.164 if title else 0.0)
    fig, axes = _reused(1, max(len(axes_names), 1),
                        (WIDTH_IN, exposure_curves_height(bool(title))), squeeze=False)
    for ax, axis in zip(axes.flat, axes_names):
        _log_duration_axis(ax)
        longest = 1.0
        neutral = NEUTRAL[axis]
        for n, c in enumerate(c for c in curves if c["axis"] == axis):
            colour = DIRECTION_COLORS[n % 2]
            d, lv = c["durations"], c["levels"]  # already at the plotted durations
            side = np.sign(np.nanmedian(c["limit_levels"]) - neutral) or 1.0
            ax.plot(d, _own_side(lv, neutral, side), color=colour, lw=1.2,
                    label=f"{c['name']}")
            if c.get("overlay_levels") is not None:
                od, ol = c["overlay_durations"], c["overlay_levels"]
                ax.plot(od, _own_side(ol, neutral, side), color=colour, lw=0.9,
                        ls=":", label=f"{c.get('overlay_label')}: {c['name']}")
            lim_d = np.asarray(c["limit_durations"], dtype=float)
            ax.plot(np.maximum(lim_d, d[0]), c["limit_levels"], color=LIMIT_COLOR, lw=1.0,
                    ls="--", drawstyle="steps-post" if c.get("step") else "default",
                    label=c.get("limit_label", "limit") if n == 0 else None)
            longest = max(longest, d[-1], lim_d[-1])
        ax.axhline(neutral, color="#888888", lw=0.6)
        ax.set_xlim(curves[0]["durations"][0], longest)
        ax.set_title(f"{axis.capitalize()}")
        ax.set_xlabel("duration [s]")
        ax.set_ylabel(f"{axis.capitalize()} level [g]")
    if title:
        fig.suptitle(title, fontsize=9)
    _margins(fig, top, 0.437, left=0.08, right=0.98, wspace=0.35)
    # placed once the panels have their final size; with an old revision overlaid (five
    # entries) in two columns, so that the band a legend may need stays short
    overlaid = any(c.get("overlay_levels") is not None for c in curves)
    for ax in axes.flat[:len(axes_names)]:
        free_legend(ax, ncol=2 if overlaid else 1, columnspacing=0.8, handlelength=1.6)
    return _pdf(fig)


def _own_side(levels: np.ndarray, neutral: float, side: float) -> np.ndarray:
    """The levels on the limit's side of neutral; beyond it NaN (the curve ends there)."""
    out = np.asarray(levels, dtype=float).copy()
    out[(out - neutral) * side < 0] = np.nan
    return out


def _event_window_bands(onset: bool, titled: bool) -> tuple[float, float, float]:
    """(top margin, axes and the gap between them, bottom margin) of an event window [in]."""
    top = (0.33 if onset else 0.2325) if titled else BARE_TOP_IN
    return top, (2.035 if onset else 0.9145), (0.385 if onset else 0.403)


def event_window_height(onset: bool, titled: bool) -> float:
    """Height of :func:`event_window` [in] (its width is :data:`WIDTH_IN`).

    Parameters
    ----------
    onset : bool
        Whether the dG/dt panel is drawn.
    titled : bool
        Whether the figure has a title.

    Returns
    -------
    float
        The figure height [in].
    """
    return sum(_event_window_bands(onset, titled))


def event_window(t: np.ndarray, filtered: np.ndarray, raw: np.ndarray | None,
                 axes: list[int], span: tuple[float, float], limits: list[tuple[str, float]],
                 title: str, pad_s: float = 1.5,
                 onset: tuple[np.ndarray, float] | None = None,
                 limit_name: str = "limit") -> bytes:
    """A few seconds around an event: the filtered (and raw) signal of its axes, the event's
    time span shaded and each limit drawn as a dashed line.

    Parameters
    ----------
    t : numpy.ndarray
        Time, shape (n,) [s].
    filtered : numpy.ndarray
        Filtered signal, shape (n, 3) [g].
    raw : numpy.ndarray or None
        Raw signal, shape (n, 3) [g], or None.
    axes : list of int
        Column indices to draw (0 gx, 1 gy, 2 gz).
    span : (float, float)
        The event's start and end [s].
    limits : list of (str, float)
        (label, level [g]) of each limit line.
    title : str
        Figure title; empty: none (the axes keep their size, the figure is shorter).
    pad_s : float, optional
        Time shown before and after the span [s] (default 1.5).
    onset : (numpy.ndarray, float) or None, optional
        (rate, shape (n,) [g/s], limit [g/s]): a second panel shows dG/dt of the filtered
        signal against +-limit.
    limit_name : str, optional
        What the onset limit's legend calls it (``"illustrative limit"`` for an example set).

    Returns
    -------
    bytes
        The figure, a one-page PDF.
    """
    names = ("gx", "gy", "gz")
    a, b = span
    window = (t >= a - pad_s) & (t <= b + pad_s)
    rows = 2 if onset is not None else 1
    top, plots, bottom = _event_window_bands(rows == 2, bool(title))
    fig, panels = _reused(rows, 1, (WIDTH_IN, top + plots + bottom), sharex=True,
                          squeeze=False)
    ax = panels[0, 0]
    for i in axes:
        if raw is not None:
            # a light tint of the axis's colour: two axes' raw traces stay apart
            ax.plot(t[window], raw[window, i], color=AXIS_COLORS[names[i]], alpha=0.3,
                    lw=0.6, label=f"{names[i].capitalize()} raw")
        ax.plot(t[window], filtered[window, i], color=AXIS_COLORS[names[i]], lw=1.1,
                label=f"{names[i].capitalize()} filtered")
    for label, level in limits:
        ax.axhline(level, color=LIMIT_COLOR, ls="--", lw=1.0, label=label)
    ax.axvspan(a, b, color=FINDING_COLOR, alpha=0.12, lw=0, label="exceedance")
    ax.set_ylabel("[g]")
    if title:
        ax.set_title(title)
    if onset is not None:
        rate, limit = onset
        ax2 = panels[1, 0]
        ax2.plot(t[window], rate[window], color="#1f5fa8", lw=1.1, label="dG/dt (filtered)")
        ax2.axhline(limit, color=LIMIT_COLOR, ls="--", lw=1.0,
                    label=f"{limit_name} \u00b1{limit:g} g/s")
        ax2.axhline(-limit, color=LIMIT_COLOR, ls="--", lw=1.0)
        ax2.axvspan(a, b, color=FINDING_COLOR, alpha=0.12, lw=0, label="exceedance")
        ax2.set_ylabel("[g/s]")
    panels[-1, 0].set_xlabel("time [s]")
    _margins(fig, top, bottom, left=0.09, right=0.98, hspace=0.12)
    for panel in panels[:, 0]:  # placed once the panels have their final size
        free_legend(panel, ncol=3)
    return _pdf(fig)


def combined_scatter_height(titled: bool) -> float:
    """Height of :func:`combined_scatter` [in] (its width is :data:`WIDTH_IN`).

    Parameters
    ----------
    titled : bool
        Whether the figure has a title.

    Returns
    -------
    float
        The figure height [in].
    """
    return 1.83 + PANEL_TITLE_IN + (0.19 if titled else 0.0)


def combined_scatter(panels: list[dict], title: str) -> bytes:
    """Filtered pairs of axes against each envelope polygon.

    Parameters
    ----------
    panels : list of dict
        Each: ``name``, ``axes`` (a, b) axis names, ``points`` (n, 2) [g], ``vertices``
        (m, 2) [g] of the polygon and ``outside`` (n,) bool, the samples outside it (drawn
        red).
    title : str
        Figure title; empty: none (the panels keep their size, the figure is shorter).

    Returns
    -------
    bytes
        The figure, a one-page PDF; the trajectory is reduced with :func:`path_decimate` (0.04 g).
    """
    n = len(panels)
    top = PANEL_TITLE_IN + (0.19 if title else 0.0)
    fig, axes = _reused(1, max(n, 1), (WIDTH_IN, combined_scatter_height(bool(title))),
                        squeeze=False)
    for ax, p in zip(axes.flat, panels):
        pts = p["points"]
        path = pts[path_decimate(pts, 0.04)]
        # the trajectory as one path, not thousands of markers
        ax.plot(path[:, 0], path[:, 1], lw=0.5, color="#1f5fa8", alpha=0.7)
        out = p["outside"]
        if out.any():
            shown = np.where(out, pts[:, 1], np.nan)  # breaks the line between excursions
            ax.plot(pts[:, 0], shown, lw=1.4, color=FINDING_COLOR)
        v = np.vstack([p["vertices"], p["vertices"][:1]])
        ax.plot(v[:, 0], v[:, 1], color="#222222", lw=1.0)
        ax.set_xlabel(f"{p['axes'][0].capitalize()} [g]")
        ax.set_ylabel(f"{p['axes'][1].capitalize()} [g]")
        ax.set_title(p["name"])
    if title:
        fig.suptitle(title, fontsize=9)
    _margins(fig, top, 0.4, left=0.08, right=0.98, wspace=0.3)  # room for the x labels
    return _pdf(fig)
