"""The replay summary as a PDF: the question, the answer per supplier and lot, one plot.

Plain data in (the replay JSON), a logic-free template (``templates/replay.html``), the same
renderer as the conformance records (:func:`speccheck.report.pdf.render_pdf`).
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

__all__ = ["write_replay_report", "rates_svg"]

CAUTIONS = (
    "A replay shows what a revised requirement would have decided on archived measurements. It "
    "is not a re-inspection: the parts, instruments and conditions of the original checks are "
    "not re-examined.",
    "The governing drawing, the purchase contract, the applicable standards and the customer's "
    "quality requirements take precedence over this summary; decisions on delivered parts need "
    "qualified personnel and the review your quality system requires.",
    "Confidence intervals are exact binomial (Clopper–Pearson) intervals of the share of "
    "nonconforming checks; they assume the archived checks are a random sample of deliveries.",
)


def rates_svg(suppliers: dict[str, dict[str, Any]]) -> str:
    """Reject rate before and after per supplier, with 95 % intervals (grey and black bars)."""
    import io

    import numpy as np
    from matplotlib.figure import Figure

    names = list(suppliers)
    fig = Figure(figsize=(16 / 2.54, (2.2 + 0.7 * len(names)) / 2.54))
    ax = fig.add_subplot()
    y = np.arange(len(names))
    for offset, when, colour, hatch in ((-0.18, "before", "0.65", ""), (0.18, "after", "0.1", "")):
        rates = [suppliers[n][when] for n in names]
        r = np.array([100 * (x["rate"] or 0.0) for x in rates])
        lo = np.array([100 * (x["ci95"][0] or 0.0) for x in rates])
        hi = np.array([100 * (x["ci95"][1] or 0.0) for x in rates])
        ax.barh(y + offset, r, height=0.34, color=colour, hatch=hatch, label=f"{when} revision")
        ax.errorbar(
            r, y + offset, xerr=[r - lo, hi - r], fmt="none", ecolor="0.3", capsize=2, linewidth=0.8
        )
    ax.set_yticks(y, names)
    ax.invert_yaxis()
    ax.set_xlabel("reject rate, % of checks (bars: 95 % interval)")
    ax.legend(loc="lower right", fontsize=7, frameon=False)
    fig.tight_layout()
    buf = io.StringIO()
    fig.savefig(buf, format="svg")
    return buf.getvalue()


def write_replay_report(summary: dict[str, Any], out: Path) -> None:
    """Render ``summary`` (the replay JSON) to a PDF at ``out`` (written atomically)."""
    import base64

    from speccheck._atomic import atomic_write_bytes
    from speccheck.report._resources import template_environment
    from speccheck.report.pdf import render_pdf

    plot = None
    if summary["suppliers"]:
        svg = rates_svg(summary["suppliers"]).encode("utf-8")
        plot = "data:image/svg+xml;base64," + base64.b64encode(svg).decode("ascii")
    html = (
        template_environment()
        .get_template("replay.html")
        .render(s=summary, plot=plot, cautions=CAUTIONS)
    )
    atomic_write_bytes(out, render_pdf(html))
