"""Vector (SVG) plots for the conformance record: profiles, material ratio curve, histogram.

Plots are drawn with matplotlib's object API (no pyplot state), black and grey only, with
line styles and markers that stay distinct when printed in greyscale. Text stays text (set in
DejaVu Sans, the font the record already embeds). Long traces are reduced to the minimum and
maximum of each horizontal pixel column before drawing: no peak or valley is lost, the file
stays small.

The PDF renderer pays for every SVG node and every character of SVG text it draws, so the
plots keep ticks few, place titles and axis labels at fixed spots (matplotlib need not measure
tick labels to find them) and drop matplotlib's empty wrapper groups (:func:`_compact_svg`).
"""

from __future__ import annotations

import base64
import io
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

__all__ = [
    "PLOT_STYLE",
    "RkConstruction",
    "profile_svg",
    "material_ratio_svg",
    "histogram_svg",
    "svg_data_uri",
]

_CM = 1 / 2.54
_COLUMNS = 500  # min/max pairs kept per trace: 0.34 mm per column on a 17 cm wide plot

# matplotlib rc settings of every plot in speccheck's records (the lot report uses them too)
PLOT_STYLE: dict[str, Any] = {
    "font.family": "DejaVu Sans",
    "font.size": 7.5,
    "axes.linewidth": 0.6,
    "axes.titlesize": 8,
    "axes.titleweight": "bold",
    "axes.titlelocation": "left",
    "axes.titley": 1.0,  # fixed title place: no search for overlapping tick labels
    "axes.titlepad": 3.0,
    "axes.labelsize": 7.5,
    "xtick.labelsize": 7,
    "ytick.labelsize": 7,
    "legend.fontsize": 6.5,
    "legend.frameon": True,
    "legend.framealpha": 1.0,
    "legend.edgecolor": "0.6",
    "svg.fonttype": "none",  # text stays text: weasyprint sets it in DejaVu Sans, fast and crisp
    "svg.hashsalt": "speccheck",
    "lines.linewidth": 0.7,
    "axes.grid": True,
    "grid.color": "0.85",
    "grid.linewidth": 0.4,
}


@dataclass(frozen=True)
class RkConstruction:
    """ISO 13565-2:1996 quantities needed to draw the core line on the material ratio curve."""

    rk_um: float
    rpk_um: float
    rvk_um: float
    mr1_pct: float
    mr2_pct: float
    core_top_um: float | None = None  # equivalent line at Mr 0 %; None: the curve at Mr1


def svg_data_uri(svg: bytes) -> str:
    """``data:`` URI for an ``<img src=...>`` in the report HTML."""
    return "data:image/svg+xml;base64," + base64.b64encode(svg).decode("ascii")


def _decimate(x, y, columns: int | None = None):
    """Keep the minimum and maximum of ``y`` in each of ``columns`` equal runs of points."""
    import numpy as np

    columns = columns or _COLUMNS
    x = np.asarray(x, dtype=np.float64)
    y = np.asarray(y, dtype=np.float64)
    n = y.size
    if n <= 2 * columns:
        return x, y
    edges = np.linspace(0, n, columns + 1).astype(np.int64)
    starts = edges[:-1]
    idx_min = np.minimum.reduceat(y, starts)
    idx_max = np.maximum.reduceat(y, starts)
    xs = np.repeat(x[starts], 2)
    ys = np.empty(2 * columns)
    ys[0::2] = idx_min
    ys[1::2] = idx_max
    return xs, ys


def _headroom(ax, y) -> None:
    """Leave the top third of the axes free for the legend, so it never hides the profile."""
    import numpy as np

    y = np.asarray(y, dtype=np.float64)
    y = y[np.isfinite(y)]
    if y.size:
        lo, hi = float(y.min()), float(y.max())
        span = (hi - lo) or 1.0
        ax.set_ylim(lo - 0.12 * span, hi + 0.55 * span)


def _figure(width_cm: float, height_cm: float):
    from matplotlib.figure import Figure

    return Figure(figsize=(width_cm * _CM, height_cm * _CM))


def _place_labels(fig, *axes, left_cm: float = 0.95, below_cm: float = 0.62) -> None:
    """Axis labels at a fixed distance from the axes (and so aligned with each other).

    Call after ``subplots_adjust``. A fixed place spares matplotlib measuring every tick label
    to find one; the distances leave room for tick labels of up to five characters.
    """
    width_in, height_in = fig.get_size_inches()
    for ax in axes:
        box = ax.get_position()
        ax.yaxis.set_label_coords(-left_cm * _CM / (box.width * width_in), 0.5)
        ax.xaxis.set_label_coords(0.5, -below_cm * _CM / (box.height * height_in))


def _few_ticks(*axis, nbins: int = 5) -> None:
    """At most about ``nbins`` labelled ticks per axis: enough to read a value off the grid."""
    from matplotlib.ticker import MaxNLocator

    for a in axis:
        a.set_major_locator(MaxNLocator(nbins=nbins))


_SVG_NS = "http://www.w3.org/2000/svg"


def _declarations(css: str) -> dict[str, str]:
    """``"fill: none; stroke: #000"`` -> ``{"fill": "none", "stroke": "#000"}``."""
    out = {}
    for part in css.split(";"):
        name, sep, value = part.partition(":")
        if sep and name.strip():
            out[name.strip()] = value.strip()
    return out


def _compact_svg(svg: bytes) -> bytes:
    """The same drawing with fewer nodes: the record's renderer pays for every node it visits.

    matplotlib wraps each artist (each tick, each label) in a ``<g id=...>`` that carries no
    style; those groups are replaced by their children, and the RDF metadata block is dropped.
    Groups that carry a style, transform or clip path are kept. ``style`` declarations become
    the equivalent presentation attributes (SVG 1.1 6.4), so no CSS is parsed per node.
    """
    import xml.etree.ElementTree as ET

    ET.register_namespace("", _SVG_NS)
    ET.register_namespace("xlink", "http://www.w3.org/1999/xlink")
    root = ET.fromstring(svg)
    group = f"{{{_SVG_NS}}}g"

    def flatten(el: Any) -> None:
        children = []
        for ch in list(el):
            flatten(ch)
            if ch.tag == group and set(ch.attrib) <= {"id"}:
                children.extend(ch)
            else:
                children.append(ch)
        el[:] = children

    for md in root.findall(f"{{{_SVG_NS}}}metadata"):
        root.remove(md)
    # matplotlib's one style rule, "*{stroke-linejoin: round; stroke-linecap: butt}", set once
    # on the root (both properties are inherited) instead of being matched against every node
    for defs in root.findall(f"{{{_SVG_NS}}}defs"):
        for st in defs.findall(f"{{{_SVG_NS}}}style"):
            rule = (st.text or "").strip()
            if rule.startswith("*{") and rule.endswith("}") and "{" not in rule[2:]:
                root.attrib.update(_declarations(rule[2:-1]))
                defs.remove(st)
        if not len(defs):
            root.remove(defs)
    flatten(root)
    # style="a: b; c: d" becomes presentation attributes a="b" c="d": same drawing, no CSS parse
    for el in root.iter():
        style = el.attrib.pop("style", None)
        if style is not None:
            el.attrib.update(_declarations(style))
    return ET.tostring(root, encoding="utf-8", xml_declaration=True)


def _to_svg(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    return _compact_svg(buf.getvalue())


def profile_svg(
    profiles: Any,
    *,
    features: Sequence[dict[str, Any]] = (),
    width_cm: float = 17.0,
    height_cm: float = 9.0,
) -> bytes:
    """Primary profile with its mean line above, roughness profile below, as SVG.

    Parameters
    ----------
    profiles:
        An object with ``x_mm``, ``primary_um``, ``mean_line_um``, ``roughness_um`` (arrays over
        the evaluation length) and ``section_bounds_mm`` (section boundaries, mm).
    features:
        Isolated features to mark: dicts with ``x_mm`` and, when known, ``depth_um``.

    Returns
    -------
    bytes
        The SVG document.
    """
    import matplotlib
    import numpy as np

    x = np.asarray(profiles.x_mm, dtype=np.float64)
    p = np.asarray(profiles.primary_um, dtype=np.float64)
    m = np.asarray(profiles.mean_line_um, dtype=np.float64)
    r = np.asarray(profiles.roughness_um, dtype=np.float64)
    bounds = [float(b) for b in profiles.section_bounds_mm]
    with matplotlib.rc_context(PLOT_STYLE):  # type: ignore[arg-type]
        fig = _figure(width_cm, height_cm)
        ax1, ax2 = fig.subplots(2, 1, sharex=True)
        xs, ps = _decimate(x, p)
        ax1.plot(xs, ps, color="0.45", linestyle="-", label="primary profile")
        xm, ms = _decimate(x, m, 100)  # the mean line is smooth: fewer points suffice
        ax1.plot(xm, ms, color="black", linestyle="--", linewidth=1.1, label="mean line")
        ax1.set_ylabel("height, µm")
        ax1.set_title("Primary profile and mean line")
        _headroom(ax1, ps)
        ax1.legend(loc="upper right", ncols=2)

        xr, rs = _decimate(x, r)
        ax2.plot(xr, rs, color="black", label="roughness profile")
        ax2.axhline(0.0, color="0.5", linewidth=0.5)
        for b in bounds:
            ax2.axvline(b, color="0.35", linestyle=":", linewidth=0.8)
        if r.size:
            i_peak = int(np.nanargmax(r))
            i_valley = int(np.nanargmin(r))
            ax2.plot(
                x[i_peak],
                r[i_peak],
                marker="^",
                markersize=5,
                color="black",
                markerfacecolor="white",
                linestyle="none",
                label=f"highest peak {r[i_peak]:.3g} µm",
            )
            ax2.plot(
                x[i_valley],
                r[i_valley],
                marker="v",
                markersize=5,
                color="black",
                linestyle="none",
                label=f"deepest valley {r[i_valley]:.3g} µm",
            )
        fx = [float(f["x_mm"]) for f in features if f.get("x_mm") is not None]
        if fx:
            fy = [float(np.interp(v, x, r)) if r.size else 0.0 for v in fx]
            ax2.plot(
                fx,
                fy,
                marker="D",
                markersize=5,
                markerfacecolor="none",
                color="black",
                markeredgewidth=0.9,
                linestyle="none",
                label="isolated feature",
            )
        if bounds:
            ax2.plot([], [], color="0.35", linestyle=":", label="section boundary")
        ax2.set_ylabel("height, µm")
        ax2.set_xlabel("position along the trace, mm")
        ax2.set_title("Roughness profile (evaluation length)")
        _headroom(ax2, rs)
        ax2.legend(loc="upper right", ncols=3)
        if x.size:
            ax2.set_xlim(float(x[0]), float(x[-1]))
        _few_ticks(ax2.xaxis, nbins=6)  # shared with ax1
        fig.subplots_adjust(left=0.075, right=0.99, top=0.94, bottom=0.11, hspace=0.28)
        _place_labels(fig, ax1, ax2)
        return _to_svg(fig)


def _material_ratio_curve(roughness_um):
    """Abbott-Firestone curve: heights sorted from highest to lowest against material ratio %."""
    import numpy as np

    z = np.sort(np.asarray(roughness_um, dtype=np.float64)[np.isfinite(roughness_um)])[::-1]
    mr = (np.arange(z.size) + 0.5) / z.size * 100.0
    return mr, z


def material_ratio_svg(
    roughness_um: Any,
    *,
    rk: RkConstruction | None = None,
    width_cm: float = 8.4,
    height_cm: float = 6.2,
) -> bytes:
    """Material ratio curve (ISO 4287:1997 3.1.11) with the ISO 13565-2 core construction.

    Notes
    -----
    The core limits are the curve's heights at Mr1 and Mr2; the equivalent straight line joins
    them at 0 % and 100 %; the triangles of equal area have heights Rpk and Rvk
    (ISO 13565-2:1996 4.1-4.5, Figure 3).
    """
    import matplotlib
    import numpy as np

    mr, z = _material_ratio_curve(roughness_um)
    with matplotlib.rc_context(PLOT_STYLE):  # type: ignore[arg-type]
        fig = _figure(width_cm, height_cm)
        ax = fig.subplots()
        ms, zs = _decimate(mr, z, 150)  # a monotone curve: 300 points are plenty
        ax.plot(ms, zs, color="black", label="material ratio curve")
        if rk is not None and z.size:
            top = rk.core_top_um
            if top is None:
                top = float(np.interp(rk.mr1_pct, mr, z))
            bottom = top - rk.rk_um
            ax.plot(
                [0, 100],
                [top, bottom],
                color="black",
                linestyle="--",
                linewidth=0.9,
                label=f"core line, Rk {rk.rk_um:.3g} µm",
            )
            for level in (top, bottom):
                ax.axhline(level, color="0.45", linestyle=":", linewidth=0.7)
            for pct in (rk.mr1_pct, rk.mr2_pct):
                ax.axvline(pct, color="0.45", linestyle=":", linewidth=0.7)
            ax.fill(
                [0, 0, rk.mr1_pct],
                [top, top + rk.rpk_um, top],
                facecolor="0.8",
                edgecolor="black",
                linewidth=0.5,
                hatch="////",
                label=f"Rpk {rk.rpk_um:.3g} µm, Mr1 {rk.mr1_pct:.3g} %",
            )
            ax.fill(
                [rk.mr2_pct, 100, 100],
                [bottom, bottom, bottom - rk.rvk_um],
                facecolor="white",
                edgecolor="black",
                linewidth=0.5,
                hatch="\\\\\\\\",
                label=f"Rvk {rk.rvk_um:.3g} µm, Mr2 {rk.mr2_pct:.3g} %",
            )
        ax.set_xlim(0, 100)
        ax.set_xlabel("material ratio, %")
        ax.set_ylabel("height, µm")
        ax.set_title("Material ratio curve")
        ax.legend(loc="lower left")
        fig.subplots_adjust(left=0.15, right=0.97, top=0.91, bottom=0.15)
        _place_labels(fig, ax)
        return _to_svg(fig)


def histogram_svg(
    roughness_um: Any,
    *,
    rsk: float | None = None,
    width_cm: float = 8.4,
    height_cm: float = 6.2,
) -> bytes:
    """Height distribution of the roughness profile, heights upward, with its skewness Rsk."""
    import matplotlib
    import numpy as np

    z = np.asarray(roughness_um, dtype=np.float64)
    z = z[np.isfinite(z)]
    with matplotlib.rc_context(PLOT_STYLE):  # type: ignore[arg-type]
        fig = _figure(width_cm, height_cm)
        ax = fig.subplots()
        if z.size:
            counts, edges = np.histogram(z, bins=40)
            share = counts / z.size * 100.0
            ax.stairs(share, edges, orientation="horizontal", fill=True, color="0.75")
            ax.stairs(share, edges, orientation="horizontal", color="black", linewidth=0.6)
            ax.axhline(0.0, color="black", linestyle="--", linewidth=0.8, label="mean line")
            ax.set_ylim(float(edges[0]), float(edges[-1]))
        label = f"Rsk = {rsk:.3g}" if rsk is not None else "Rsk not computed"
        ax.text(
            0.97,
            0.96,
            label,
            transform=ax.transAxes,
            ha="right",
            va="top",
            fontsize=8,
            fontweight="bold",
            bbox={"facecolor": "white", "edgecolor": "0.6", "linewidth": 0.5},
        )
        ax.set_xlabel("share of points, %")
        ax.set_ylabel("height, µm")
        ax.set_title("Height distribution")
        _few_ticks(ax.xaxis, ax.yaxis)
        fig.subplots_adjust(left=0.15, right=0.97, top=0.91, bottom=0.15)
        _place_labels(fig, ax)
        return _to_svg(fig)
