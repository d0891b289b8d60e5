"""Write the conformance record: result → view model → HTML → PDF → attachments → signature."""

from __future__ import annotations

import datetime as _dt
import hashlib
import json
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from speccheck._atomic import atomic_write_bytes
from speccheck._version import __version__
from speccheck.errors import ReportError
from speccheck.report.pdf import EmbeddedFile, render_pdf
from speccheck.report.view import PlotView, SignatureView, build_view, features_by_measurement

__all__ = [
    "profile_plot_svg",
    "ReportInfo",
    "MANIFEST_NAME",
    "RESULT_NAME",
    "RK_FAMILY",
    "write_report",
    "render_html",
    "attachment_names",
]

MANIFEST_NAME = "speccheck-manifest.json"
INSTRUMENT_NAME = "speccheck-instrument.yaml"
RESULT_NAME = "speccheck-result.json"
MANIFEST_KIND = "speccheck conformance record"
MANIFEST_VERSION = 1
CHAIN_KEY = "records_chain"  # the store's head when the record was written, in the result
RK_FAMILY = ("Rk", "Rpk", "Rvk", "Mr1", "Mr2", "A1", "A2")
DEMO_KEY_NOTE = (
    "Signed with a THROWAWAY DEMONSTRATION KEY: the signature proves nothing about who made "
    "this record. Do not use it to accept parts."
)


@dataclass(frozen=True)
class ReportInfo:
    """The written record."""

    path: Path
    sha256: str
    signed: bool
    signer: str | None


def _file_name(path: str | Path) -> str:
    return str(path).replace("\\", "/").rsplit("/", 1)[-1] or "file"


def attachment_names(spec_path: str, profile_paths: Sequence[str | Path]) -> tuple[str, list[str]]:
    """Unique names inside the PDF: original file names, numbered only when two would clash."""
    taken = {MANIFEST_NAME, RESULT_NAME}
    spec_name = _file_name(spec_path)
    if spec_name in taken:
        spec_name = f"spec-{spec_name}"
    taken.add(spec_name)
    names = []
    for i, p in enumerate(profile_paths, start=1):
        name = _file_name(p)
        if name in taken:
            name = f"m{i}-{name}"
        taken.add(name)
        names.append(name)
    return spec_name, names


def _read_profiles(result: Any, profile_paths: Sequence[Path]) -> list[bytes]:
    """The profile files exactly as read, checked against the hashes the result recorded."""
    datas = []
    by_index = {m.index: m for m in result.measurements}
    if len(profile_paths) != len(result.measurements):
        raise ReportError(
            f"{len(profile_paths)} profile files given but the result has "
            f"{len(result.measurements)} measurements"
        )
    for i, p in enumerate(profile_paths):
        try:
            data = Path(p).read_bytes()
        except OSError as exc:
            raise ReportError(
                f"cannot read the profile file ({exc.strerror or exc})", path=str(p)
            ) from exc
        m = by_index.get(i)
        if m is not None and m.sha256 and hashlib.sha256(data).hexdigest() != m.sha256:
            raise ReportError(
                "the file changed since it was evaluated (SHA-256 differs); check again",
                path=str(p),
            )
        datas.append(data)
    return datas


def _plot_conditions(spec: Any, result: Any) -> tuple[Any | None, Any | None]:
    """Conditions for the profile plots and, when the Rk family is required, for its curve.

    The profile plot uses the first roughness (R) requirement's conditions as evaluated (λc and
    λs from the result, where the evaluation settled them); the material ratio curve uses the
    ISO 13565-1 reference line the Rk family is computed on (or the robust filter when the
    requirement asks for it).
    """
    from dataclasses import replace

    from speccheck.parameters.conditions import Conditions

    evaluated = {
        i: (getattr(rr, "conditions", None) or {})
        for i, rr in enumerate(getattr(result, "requirements", ()))
    }

    def conditions(i: int, r: Any) -> Any:
        c = evaluated.get(i, {})
        return Conditions(
            c.get("lambda_c_mm", r.lambda_c_mm),
            c.get("lambda_s_um", r.lambda_s_um),
            sections=r.sections,
            filter=r.filter,
            form=r.form,
            ends=getattr(r, "ends", "run-in"),
        )

    all_reqs = list(enumerate(getattr(spec, "requirements", ())))
    reqs = [(i, r) for i, r in all_reqs if str(r.parameter).startswith("R")]
    main = conditions(*reqs[0]) if reqs else None
    rk = None
    for i, r in all_reqs:
        if r.parameter in RK_FAMILY:
            c = conditions(i, r)
            rk = replace(c, filter="iso13565-1") if c.filter == "gaussian" else c
            break
    return main, rk


def _number(params: Mapping[str, Any], name: str) -> float | None:
    p = params.get(name)
    if isinstance(p, Mapping) and isinstance(p.get("value"), (int, float)):
        return float(p["value"])
    return None


@dataclass(frozen=True)
class PlotProfiles:
    """The arrays a profile plot needs, over the evaluation length."""

    x_mm: Any
    primary_um: Any
    mean_line_um: Any
    roughness_um: Any
    section_bounds_mm: tuple[float, ...]
    rsk: float | None = None  # mean of the section values (ISO 4287:1997 4.2.3)


def profiles_for_plot(z_um: Any, *, dx_um: float, conditions: Any) -> PlotProfiles | None:
    """Primary, mean line and roughness over the evaluation length; None if the trace is short.

    Uses the same pipeline as the parameters (:func:`speccheck.parameters.compute.
    evaluated_profile`) without computing every parameter again.
    """
    import numpy as np

    from speccheck.parameters.compute import evaluated_profile

    z = np.asarray(z_um, dtype=np.float64)
    sl = conditions.evaluation_slice(z.size, dx_um)
    if sl is None:
        return None
    primary, line, rough = evaluated_profile(z, dx_um=dx_um, conditions=conditions)
    x_mm = np.arange(z.size) * (dx_um / 1000.0)
    step = (sl.stop - sl.start) // conditions.sections
    bounds = tuple(
        float(x_mm[sl.start] + k * step * dx_um / 1000.0) for k in range(conditions.sections + 1)
    )
    from speccheck.parameters.amplitude import skewness

    rows = rough[sl.start : sl.start + step * conditions.sections].reshape(
        conditions.sections, step
    )
    rsk = float(np.mean(skewness(rows)))
    return PlotProfiles(
        x_mm[sl], primary[sl], line[sl], rough[sl], bounds, rsk if np.isfinite(rsk) else None
    )


def _profile_name(filter_name: str) -> str:
    return {"iso13565-1": "ISO 13565-1", "gaussian": "Gaussian"}.get(
        filter_name, "robust (ISO 16610-31)"
    )


def _rk_construction(roughness_um: Any) -> Any:
    """The ISO 13565-2 core line of a profile, or None when no core is found."""
    from speccheck.parameters.rk import RkParameters, rk_parameters
    from speccheck.report.plots import RkConstruction

    rk = rk_parameters(roughness_um)
    if not isinstance(rk, RkParameters):
        return None
    return RkConstruction(rk.Rk, rk.Rpk, rk.Rvk, rk.Mr1, rk.Mr2, core_top_um=rk.core_top_um)


def _plots(
    result: Any,
    spec: Any,
    profile_paths: Sequence[Path],
    read_options: Mapping[str, Any],
) -> tuple[dict[int, list[PlotView]], dict[int, str]]:
    """Per measurement: the profile plot, material ratio curve (Rk family) and histogram."""
    from speccheck.profile import fill_dropouts
    from speccheck.readers import read_profile
    from speccheck.report import plots as P

    plots: dict[int, list[PlotView]] = {}
    notes: dict[int, str] = {}
    main, rk_cond = _plot_conditions(spec, result)
    if main is None:
        return plots, {
            m.index: "No roughness requirement: no profile plot." for m in result.measurements
        }
    feats = features_by_measurement(result)
    for m, path in zip(result.measurements, profile_paths, strict=True):
        try:
            prof = read_profile(path, **dict(read_options))
            if prof.n_invalid:
                prof = fill_dropouts(prof)
            z = prof.z_um
            ev = profiles_for_plot(z, dx_um=prof.dx_um, conditions=main)
        except Exception as exc:  # the record is still valid without a picture
            notes[m.index] = f"No plot: {' '.join(str(exc).split())}"
            continue
        if ev is None:
            notes[m.index] = (
                f"No plot: the trace is shorter than the {main.required_trace_mm:g} mm needed."
            )
            continue
        lc = f"λc {main.lambda_c_mm:g} mm"
        ls = f", λs {main.lambda_s_um:g} µm" if main.lambda_s_um is not None else ""
        views = [
            P.svg_data_uri(P.profile_svg(ev, features=feats.get(m.index, ()))),
        ]
        items = [
            PlotView(
                "Profiles",
                views[0],
                f"Measurement {m.index + 1}: primary profile with its {main.filter} mean line "
                f"({lc}{ls}); roughness profile with the {main.sections} section boundaries "
                "(dotted), highest peak △ and deepest valley ▼ of the evaluation length.",
            )
        ]
        params = m.parameters or {}
        if rk_cond is not None:
            try:
                ev13565 = profiles_for_plot(z, dx_um=prof.dx_um, conditions=rk_cond)
            except Exception:  # fall back on the plotted roughness profile
                ev13565 = None
            curve_src = (ev13565 or ev).roughness_um
            construction = _rk_construction(curve_src)
            items.append(
                PlotView(
                    "Material ratio curve",
                    P.svg_data_uri(P.material_ratio_svg(curve_src, rk=construction)),
                    f"Material ratio curve of the {_profile_name(rk_cond.filter)} roughness "
                    "profile with the ISO 13565-2 core line and the Rpk and Rvk triangles"
                    + ("." if construction else " (Rk family not computed: no core found)."),
                    wide=False,
                )
            )
        rsk = _number(params, "Rsk")
        if rsk is None:
            rsk = ev.rsk
        items.append(
            PlotView(
                "Height distribution",
                P.svg_data_uri(P.histogram_svg(ev.roughness_um, rsk=rsk)),
                "Distribution of the roughness profile heights; Rsk is the skewness "
                "(negative: deep valleys dominate, positive: peaks dominate).",
                wide=False,
            )
        )
        plots[m.index] = items
    return plots, notes


def profile_plot_svg(result: Any, spec: Any, profile: Any, index: int) -> bytes | str:
    """The profile plot of measurement ``index`` as the record draws it, or why there is none.

    ``profile`` is the measured :class:`~speccheck.profile.Profile` as read (dropouts are filled
    here, as for the record). Returns the SVG document, or a one-line note instead of a plot.
    """
    from speccheck.profile import fill_dropouts
    from speccheck.report.plots import profile_svg

    main, _ = _plot_conditions(spec, result)
    if main is None:
        return "No roughness requirement: no profile plot."
    prof = fill_dropouts(profile) if profile.n_invalid else profile
    try:
        ev = profiles_for_plot(prof.z_um, dx_um=prof.dx_um, conditions=main)
    except Exception as exc:  # a picture is never worth a failed page
        return f"No plot: {' '.join(str(exc).split())}"
    if ev is None:
        return f"No plot: the trace is shorter than the {main.required_trace_mm:g} mm needed."
    return profile_svg(ev, features=features_by_measurement(result).get(index, ()))


def _chain_line(chain_head: Mapping[str, Any] | None) -> str:
    if chain_head is None:
        return ""
    return (
        f"Records store before this record: {int(chain_head['records'])} records, "
        f"head {chain_head['head_hash']}"
    )


def render_html(view: Any) -> str:
    """Fill the report template with a :class:`~speccheck.report.view.ReportView`."""
    from markupsafe import Markup

    from speccheck.report._resources import template_environment, template_text

    env = template_environment()
    # the style sheet is ours, not data: mark it safe so its quotes are not escaped
    css = Markup(template_text("report.css"))
    return env.get_template("report.html").render(v=view, css=css)


def write_report(
    result: Any,
    *,
    out_path: Path,
    spec: Any,
    profile_paths: Sequence[Path],
    sign_p12: Path | None = None,
    passphrase: bytes | None = None,
    signer_role: str | None = None,
    demo_key: bool = False,
    read_options: Mapping[str, Any] | None = None,
    tsa_url: str | None = None,
    chain_head: Mapping[str, Any] | None = None,
    instrument: Any = None,
) -> ReportInfo:
    """Write the conformance record of ``result`` as a self-contained, optionally signed PDF.

    Parameters
    ----------
    result:
        The :class:`~speccheck.evaluation.result.CheckResult`.
    out_path:
        The PDF to write (atomically: a failure leaves no file and any old file intact).
    spec:
        The :class:`~speccheck.spec.requirement.LoadedSpec` the result came from; its bytes are
        attached exactly as read.
    profile_paths:
        The measured profile files, in the order of ``result.measurements``; attached exactly as
        read (their SHA-256 must match the result's).
    sign_p12, passphrase:
        Key to sign with (PAdES baseline B); unsigned when ``sign_p12`` is None, and the face of
        the record says NOT SIGNED.
    signer_role:
        The signer's role printed in the signature block ("Quality inspector").
    demo_key:
        The key is a throwaway demonstration key; the record says so in the signature block.
    read_options:
        ``fmt``, ``dx``, ``decimal`` given to the profile reader when the files were evaluated;
        stored in the record so that a verifier reads the files the same way.
    tsa_url:
        A time-stamping authority (RFC 3161) whose token vouches for the signing time.
    chain_head:
        The records store's ``{"records", "head_hash"}`` when this record is about to be
        appended to it: printed on the face and kept in the attached result, it anchors the
        chain outside the database (``records audit --reports``).

    Returns
    -------
    ReportInfo
    """
    from speccheck.report.signing import check_valid_at, open_key, sign_pdf

    out_path = Path(out_path)
    read_options = {
        k: (v if isinstance(v, (str, int, float, bool)) else str(v))
        for k, v in dict(read_options or {}).items()
        if v is not None
    }
    profile_paths = [Path(p) for p in profile_paths]
    raw_spec = bytes(spec.raw)
    profile_bytes = _read_profiles(result, profile_paths)

    signer = key = None
    now = _dt.datetime.now(_dt.UTC).replace(microsecond=0)
    if sign_p12 is not None:
        key = open_key(Path(sign_p12), passphrase)  # a wrong passphrase fails here, early
        check_valid_at(key.certificate, now, path=key.path)  # so does an expired certificate
        signer = key.identity
    if signer is not None:
        who = signer.name + (f" ({signer.organisation})" if signer.organisation else "")
        note = (
            DEMO_KEY_NOTE
            if demo_key
            else (
                "Self-signed certificate: verify with the signer's certificate file "
                "(speccheck verify --trust CERT.pem)."
                if signer.self_signed
                else ""
            )
        )
        sig_view = SignatureView(
            signed=True,
            status="DIGITALLY SIGNED" + (" (demonstration key)" if demo_key else ""),
            signer=who,
            role=signer_role or "not stated",
            date=now.strftime("%Y-%m-%d %H:%M UTC"),
            fingerprint=signer.sha256_fingerprint,
            note=note,
            summary=", ".join(
                t for t in (who, signer_role, now.strftime("%Y-%m-%d %H:%M UTC")) if t
            ),
            chain=_chain_line(chain_head),
        )
    else:
        sig_view = SignatureView(
            signed=False,
            status="NOT SIGNED",
            signer="—",
            role=signer_role or "not stated",
            date="—",
            fingerprint="—",
            note="This record carries no digital signature: nothing proves who made it or that "
            "it is unchanged.",
        )

    spec_name, profile_names = attachment_names(spec.path, profile_paths)
    attachments_desc = [(spec_name, "specification file, exactly as read")]
    attachments_desc += [
        (n, f"measured profile {i}, exactly as read") for i, n in enumerate(profile_names, 1)
    ]
    attachments_desc += [
        (RESULT_NAME, "the result as JSON (recomputed by 'speccheck verify')"),
        (MANIFEST_NAME, "which attached file is which"),
    ]

    plots, plot_notes = _plots(result, spec, profile_paths, read_options)
    view = build_view(
        result,
        signature=sig_view,
        plots=plots,
        plot_notes=plot_notes,
        attachments=attachments_desc,
    )
    html = render_html(view)

    result_dict = result.to_dict()
    software = dict(result_dict.get("software") or {})
    software.setdefault("name", "speccheck")
    software.setdefault("version", __version__)
    result_dict["software"] = software
    if chain_head is not None:
        result_dict[CHAIN_KEY] = {
            "records": int(chain_head["records"]),
            "head_hash": str(chain_head["head_hash"]),
        }
    try:
        result_json = json.dumps(result_dict, indent=2, ensure_ascii=False, allow_nan=False)
    except ValueError as exc:
        raise ReportError(f"the result holds a number JSON cannot store: {exc}") from exc
    manifest = {
        "kind": MANIFEST_KIND,
        "manifest_version": MANIFEST_VERSION,
        "software": {"name": "speccheck", "version": __version__},
        "spec": {
            "name": spec_name,
            "sha256": hashlib.sha256(raw_spec).hexdigest(),
            "original_path": str(spec.path),
        },
        "profiles": [
            {"name": n, "sha256": hashlib.sha256(b).hexdigest(), "original_path": str(p)}
            for n, b, p in zip(profile_names, profile_bytes, profile_paths, strict=True)
        ],
        "read_options": read_options,
        "instrument": (
            {"name": INSTRUMENT_NAME, "sha256": instrument.sha256}
            if instrument is not None
            else None
        ),
        "result": RESULT_NAME,
        "signer_role": signer_role,
        "demo_key": bool(demo_key),
    }
    files = [EmbeddedFile(spec_name, raw_spec, "specification")]
    files += [
        EmbeddedFile(n, b, f"profile {i}")
        for i, (n, b) in enumerate(zip(profile_names, profile_bytes, strict=True), 1)
    ]
    if instrument is not None:
        files.append(EmbeddedFile(INSTRUMENT_NAME, bytes(instrument.raw), "instrument file"))
    files.append(EmbeddedFile(RESULT_NAME, result_json.encode("utf-8"), "result"))
    files.append(
        EmbeddedFile(MANIFEST_NAME, json.dumps(manifest, indent=2).encode("utf-8"), "manifest")
    )
    pdf = render_pdf(html, attachments=files)

    if key is not None:
        number = (getattr(spec, "part", None) or {}).get("number", "?")
        reason = f"Surface finish conformance record, part {number}"
        if signer_role:
            reason += f"; signer role: {signer_role}"
        if demo_key:
            reason += "; DEMONSTRATION KEY"
        pdf = sign_pdf(pdf, key=key, reason=reason, signing_time=now, tsa_url=tsa_url)

    atomic_write_bytes(out_path, pdf)
    return ReportInfo(
        path=out_path,
        sha256=hashlib.sha256(pdf).hexdigest(),
        signed=signer is not None,
        signer=signer.name if signer is not None else None,
    )
