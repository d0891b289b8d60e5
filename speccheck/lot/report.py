"""The lot report: plan identity, sampling plan and its OC curve, parts, values, disposition.

A :class:`~speccheck.lot.result.LotResult` becomes a plain view (dicts and strings), the view
fills ``templates/lot.html`` (no logic in the template) through the report layer's template
environment, weasyprint renders the PDF, the lot JSON and the plan file are attached to it, and
pyHanko signs it when a key is given. The file is written atomically.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import io
import json
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from speccheck._atomic import atomic_write_bytes
from speccheck.lot.result import LotResult
from speccheck.lot.sampling import SamplingPlan, fraction_at_probability, oc_curve
from speccheck.report.plots import PLOT_STYLE

__all__ = [
    "OC_READING_FRACTIONS",
    "lot_view",
    "render_lot_html",
    "write_lot_report",
    "oc_svg",
    "values_svg",
]

# Fractions nonconforming at which the report reads the OC curve (a few of the preferred
# AQL-style percentages, common practice, no source).
OC_READING_FRACTIONS = (0.005, 0.01, 0.025, 0.04, 0.065, 0.10, 0.15, 0.25)

_RC: Any = {**PLOT_STYLE, "svg.hashsalt": "speccheck-lot"}  # the records' plot style
_CM = 1 / 2.54


def _plan_from(result: LotResult) -> SamplingPlan:
    s = result.sampling
    return SamplingPlan(
        s["lot_size"],
        s["sample_size"],
        s["acceptance_number"],
        s["code_letter"],
        s["every_part"],
        s["source"],
    )


def _svg(fig) -> str:
    buf = io.BytesIO()
    fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None})
    return buf.getvalue().decode("utf-8")


def oc_svg(plan: SamplingPlan, *, width_cm: float = 16.0, height_cm: float = 6.5) -> str:
    """OC curve of ``plan`` (P(accept) against % nonconforming) as SVG text."""
    import matplotlib
    import numpy as np
    from matplotlib.figure import Figure

    p10 = fraction_at_probability(plan, 0.10)
    p_max = min(1.0, max(0.05, 2.0 * (p10 if p10 is not None else 0.5)))
    p = np.linspace(0.0, p_max, 401)
    if plan.model == "hypergeometric":  # a step function: plot it at the lot's own fractions
        p = np.arange(0, int(round(p_max * plan.lot_size)) + 1) / plan.lot_size
    pa = [pt.probability_accept for pt in oc_curve(plan, p)]
    with matplotlib.rc_context(_RC):
        fig = Figure(figsize=(width_cm * _CM, height_cm * _CM))
        ax = fig.subplots()
        drawstyle = "steps-post" if plan.model == "hypergeometric" else "default"
        ax.plot(p * 100.0, pa, color="black", linewidth=1.0, drawstyle=drawstyle)
        for prob, ls in ((0.95, "--"), (0.10, ":")):
            q = fraction_at_probability(plan, prob)
            if q is not None:
                ax.axvline(q * 100.0, color="0.4", linestyle=ls, linewidth=0.7)
                ax.annotate(
                    f"P(accept) {prob:.0%} at {q * 100:.2g} %",
                    (q * 100.0, prob),
                    xytext=(4, 4),
                    textcoords="offset points",
                    fontsize=6.5,
                )
        ax.set_xlim(0, p_max * 100.0)
        ax.set_ylim(0, 1.02)
        ax.set_xlabel("nonconforming parts in the lot, %")
        ax.set_ylabel("probability of accepting the lot")
        ax.set_title(
            f"Operating characteristic, n = {plan.sample_size}, "
            f"c = {plan.acceptance_number} ({plan.model})"
        )
        fig.tight_layout(pad=0.4)
        return _svg(fig)


def values_svg(
    serials: list[str],
    values: list[list[float | None]],
    verdicts: Sequence[str],
    *,
    upper: float | None,
    lower: float | None,
    label: str,
    width_cm: float = 16.0,
    height_cm: float = 5.5,
) -> str:
    """Strip plot: each sampled part's measured values of one parameter against the limits."""
    import matplotlib
    from matplotlib.figure import Figure

    with matplotlib.rc_context(_RC):
        fig = Figure(figsize=(width_cm * _CM, height_cm * _CM))
        ax = fig.subplots()
        for i, (vals, verdict) in enumerate(zip(values, verdicts, strict=True)):
            ys = [v for v in vals if v is not None]
            # spread a part's values a little sideways so that equal values stay visible
            half = (len(ys) - 1) / 2
            xs = [i + 0.24 * (j - half) / max(1.0, half * 2) for j in range(len(ys))]
            marker = {"conforming": "o", "nonconforming": "x", "undecided": "^"}.get(verdict, "s")
            face = "none" if verdict == "conforming" else "black"
            if marker == "x":
                ax.plot(xs, ys, linestyle="none", marker="x", color="black", markersize=4)
            else:
                ax.plot(
                    xs, ys, linestyle="none", marker=marker, markerfacecolor=face,
                    markeredgecolor="black", markersize=3.5,
                )  # fmt: skip
        for lim, name in ((upper, "upper limit"), (lower, "lower limit")):
            if lim is not None:
                ax.axhline(lim, color="black", linestyle="--", linewidth=0.8)
                ax.annotate(name, (1.0, lim), xycoords=("axes fraction", "data"), xytext=(-2, 2),
                            textcoords="offset points", ha="right", fontsize=6.5)  # fmt: skip
        ax.set_xticks(range(len(serials)))
        ax.set_xticklabels(
            serials,
            rotation=45 if len(serials) > 8 else 0,
            ha="right" if len(serials) > 8 else "center",
        )
        ax.set_xlim(-0.6, len(serials) - 0.4)
        ax.set_ylabel(label)
        ax.set_title(
            f"{label}: values per sampled part (○ conforming, × nonconforming, ▲ undecided)"
        )
        fig.tight_layout(pad=0.4)
        return _svg(fig)


def _data_uri(svg: str) -> str:
    import base64

    return "data:image/svg+xml;base64," + base64.b64encode(svg.encode("utf-8")).decode("ascii")


def _fmt(x: float | None) -> str:
    return "–" if x is None else f"{x:.4g}"


def lot_view(
    result: LotResult, *, signer: dict[str, Any] | None = None, plots: bool = True
) -> dict[str, Any]:
    """Everything the template shows, as plain data (strings, numbers, lists)."""
    plan = _plan_from(result)
    readings = [
        {"p": f"{pt.fraction_nonconforming * 100:.3g} %", "pa": f"{pt.probability_accept:.3f}"}
        for pt in oc_curve(plan, OC_READING_FRACTIONS)
    ]
    p95 = fraction_at_probability(plan, 0.95)
    p10 = fraction_at_probability(plan, 0.10)
    parts = []
    for part in result.parts:
        cells = []
        for name, check in part.surfaces.items():
            reqs = "; ".join(
                f"{r.parameter} {', '.join(_fmt(v.value) for v in r.values)} → {r.verdict}"
                for r in check.requirements
            )
            cells.append({"surface": name, "verdict": check.verdict, "detail": reqs})
        parts.append({"serial": part.serial, "verdict": part.verdict, "surfaces": cells})

    distributions = []
    first = result.parts[0] if result.parts else None
    for name in result.surfaces:
        if first is None:
            break
        for k, req in enumerate(first.surfaces[name].requirements):
            serials, values, verdicts = [], [], []
            for part in result.parts:
                r = part.surfaces[name].requirements[k]
                serials.append(part.serial)
                values.append([v.value for v in r.values])
                verdicts.append(r.verdict)
            unit = f" ({req.unit})" if req.unit else ""
            label = f"{name}: {req.parameter}{unit}"
            flat = [v for vs in values for v in vs if v is not None]
            distributions.append(
                {
                    "title": f"{name} — {req.text}",
                    "limits": (
                        f"upper limit {_fmt(req.upper)}, lower limit {_fmt(req.lower)}{unit}; "
                        f"acceptance rule {req.rule}"
                    ),
                    "summary": (
                        f"{len(flat)} values, min {_fmt(min(flat))}, max {_fmt(max(flat))}, "
                        f"mean {_fmt(sum(flat) / len(flat))}"
                        if flat
                        else "no values"
                    ),
                    "svg": _data_uri(
                        values_svg(
                            serials, values, verdicts, upper=req.upper, lower=req.lower, label=label
                        )
                    )
                    if plots
                    else None,
                }
            )
    remeasure = []
    for part in result.parts:
        if part.verdict != "undecided":
            continue
        for name, check in part.surfaces.items():
            for r in check.requirements:
                if r.verdict == "undecided":
                    remeasure.append(
                        {
                            "serial": part.serial,
                            "surface": name,
                            "what": f"{r.parameter}: {r.next or r.explanation}",
                        }
                    )
    return {
        "title": f"Lot inspection record — {result.lot.get('part')} lot {result.lot.get('id')}",
        "lot": {"part_name": None, "order": None, **result.lot},
        "plan": {"notes": None, "pattern": "", **result.plan},
        "surfaces": [
            {
                "name": k,
                "spec": v["spec"],
                "sha256": v.get("spec_sha256") or "–",
                "measurements": v["measurements"],
            }
            for k, v in result.surfaces.items()
        ],
        "sampling": result.sampling,
        "readings": readings,
        "p95": "–" if p95 is None else f"{p95 * 100:.3g} %",
        "p10": "–" if p10 is None else f"{p10 * 100:.3g} %",
        "oc_svg": _data_uri(oc_svg(plan)) if plots else None,
        "parts": parts,
        "counts": {
            "sampled": len(result.parts),
            "nonconforming": result.nonconforming,
            "undecided": result.undecided,
            "conforming": len(result.parts) - result.nonconforming - result.undecided,
        },
        "disposition": result.disposition,
        "disposition_text": {
            "accept": "ACCEPT",
            "reject": "REJECT",
            "undecided": "UNDECIDED — MEASURE AGAIN",
        }[result.disposition],
        "reason": result.reason,
        "remeasure": remeasure,
        "distributions": distributions,
        "software": result.software,
        "created": result.created,
        "signer": signer,
    }


def render_lot_html(
    result: LotResult,
    *,
    signer: dict[str, Any] | None = None,
    plots: bool = True,
    status: str = "NOT SIGNED",
) -> str:
    """Fill ``templates/lot.html`` with :func:`lot_view`."""
    from markupsafe import Markup

    from speccheck.report._resources import template_environment, template_text

    css = Markup(template_text("lot.css"))
    return (
        template_environment()
        .get_template("lot.html")
        .render(v={**lot_view(result, signer=signer, plots=plots), "status": status}, css=css)
    )


LOT_RESULT_NAME = "lot-result.json"
LOT_MANIFEST_NAME = "speccheck-lot-manifest.json"
LOT_MANIFEST_KIND = "speccheck lot record"


def _signature_status(signed: bool, demo_key: bool) -> str:
    if not signed:
        return "NOT SIGNED"
    return "DIGITALLY SIGNED" + (" (DEMONSTRATION KEY: proves nothing)" if demo_key else "")


def _unique(name: str, taken: set[str]) -> str:
    out, i = name, 2
    while out in taken:
        out, i = f"{i}-{name}", i + 1
    taken.add(out)
    return out


def lot_inputs(plan: Any, data_dir: str | Path) -> tuple[list[Any], dict[str, Any]]:
    """Every input of a lot as attachments, and the manifest that says which is which.

    The plan, each surface's spec (with the path the plan names it by) and each sampled part's
    profiles (with their path below the data folder), all exactly as read.
    """
    from speccheck.lot.plan import find_part_files
    from speccheck.report.pdf import EmbeddedFile

    taken = {LOT_RESULT_NAME, LOT_MANIFEST_NAME}
    plan_name = _unique(Path(plan.path).name, taken)
    files = [EmbeddedFile(plan_name, plan.raw, "the inspection plan, as read")]
    specs = []
    for s in plan.surfaces:
        data = s.spec_path.read_bytes()
        name = _unique(f"spec-{s.name}-{s.spec_path.name}", taken)
        files.append(EmbeddedFile(name, data, f"specification of surface {s.name}, as read"))
        specs.append(
            {
                "surface": s.name,
                "name": name,
                "plan_path": s.spec_text,
                "sha256": hashlib.sha256(data).hexdigest(),
            }
        )
    profiles = []
    root = Path(data_dir)
    for serial, by_surface in find_part_files(plan, root).items():
        for surface, paths in by_surface.items():
            for p in paths:
                data = p.read_bytes()
                name = _unique(f"{serial}-{surface}-{p.name}", taken)
                files.append(EmbeddedFile(name, data, f"part {serial}, {surface}, as read"))
                profiles.append(
                    {
                        "name": name,
                        "rel_path": p.relative_to(root).as_posix(),
                        "sha256": hashlib.sha256(data).hexdigest(),
                    }
                )
    manifest = {
        "kind": LOT_MANIFEST_KIND,
        "plan": {"name": plan_name, "sha256": hashlib.sha256(plan.raw).hexdigest()},
        "specs": specs,
        "profiles": profiles,
        "result": LOT_RESULT_NAME,
    }
    return files, manifest


def write_lot_report(
    result: LotResult,
    *,
    out_path: str | Path,
    plan_raw: bytes | None = None,
    sign_p12: str | Path | None = None,
    passphrase: bytes | None = None,
    tsa_url: str | None = None,
    plan: Any = None,
    data_dir: str | Path | None = None,
    demo_key: bool = False,
    chain_head: dict[str, Any] | None = None,
) -> str:
    """Write the lot report PDF, signed if a key is given.

    With ``plan`` (the :class:`~speccheck.lot.plan.LoadedPlan`) and ``data_dir`` the record
    attaches every input (plan, specs, profiles as read) and a manifest, so that ``verify``
    recomputes the lot; otherwise only the lot JSON and ``plan_raw``. ``demo_key`` labels the
    key as a throwaway on every page; ``chain_head`` is the records store's head, kept in the
    attached lot JSON.

    Returns
    -------
    str
        SHA-256 (hex) of the PDF as written, for the records store.
    """
    from speccheck.report.pdf import EmbeddedFile, embed_files, render_pdf

    signer = key = None
    now = _dt.datetime.now(_dt.UTC).replace(microsecond=0)
    if sign_p12 is not None:
        from speccheck.report.signing import check_valid_at, open_key

        key = open_key(Path(sign_p12), passphrase)
        check_valid_at(key.certificate, now, path=key.path)
        ident = key.identity
        signer = {
            "name": ident.name,
            "organisation": ident.organisation,
            "fingerprint": ident.sha256_fingerprint,
            "self_signed": ident.self_signed,
        }
    status = _signature_status(signer is not None, demo_key)
    pdf = render_pdf(render_lot_html(result, signer=signer, status=status))
    lot_dict = result.to_dict()
    if chain_head is not None:
        lot_dict["records_chain"] = dict(chain_head)
    files = [
        EmbeddedFile(
            LOT_RESULT_NAME,
            (json.dumps(lot_dict, indent=2, ensure_ascii=False, allow_nan=False) + "\n").encode(
                "utf-8"
            ),
            "the lot result as JSON",
        )
    ]
    if plan is not None and data_dir is not None:
        inputs, manifest = lot_inputs(plan, data_dir)
        files += inputs
        files.append(EmbeddedFile(LOT_MANIFEST_NAME, json.dumps(manifest, indent=1).encode()))
    elif plan_raw is not None:
        files.append(
            EmbeddedFile(Path(result.plan["path"]).name, plan_raw, "the inspection plan, as read")
        )
    pdf = embed_files(pdf, files)
    if key is not None:
        from speccheck.report.signing import sign_pdf

        pdf = sign_pdf(
            pdf, key=key, reason="lot inspection record", signing_time=now, tsa_url=tsa_url
        )
    atomic_write_bytes(Path(out_path), pdf)
    return hashlib.sha256(pdf).hexdigest()
