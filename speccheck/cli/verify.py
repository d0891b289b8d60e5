"""``speccheck verify REPORT.pdf``: check the signature and recompute the recorded result.

Calls :func:`speccheck.report.verify.verify_report`. Exit 0: signed, intact, whole file covered,
recomputation equal (and trusted when --trust is given); 1: anything else, with what differs;
2: not a speccheck record.
"""

from __future__ import annotations

from pathlib import Path

import click

from speccheck.cli.options import InputPath, echo_json


def _signature_lines(s) -> list[str]:  # s: SignatureCheck
    if not s.present:
        return ["signature:     none" + (f" ({s.problem})" if s.problem else "")]
    state = "intact" if s.intact else "BROKEN"
    cover = "covers the whole file" if s.whole_file else "does NOT cover the whole file"
    out = [f"signature:     {state}, {cover}"]
    if s.signatures > 1:
        out.append(f"signatures:    {s.signatures} in the file (a record is signed once)")
    out.append(f"signer:        {s.signer or 'unknown'}")
    if s.certificate_sha256:
        out.append(f"certificate:   SHA-256 {s.certificate_sha256}")
    if s.valid_from:
        out.append(f"valid:         {s.valid_from} to {s.valid_until}")
    out.append(f"signed at:     {s.signing_time or 'unknown'} ({s.time_source or 'no time given'})")
    if s.timestamp_authority:
        sound = "intact" if s.timestamp_intact else "BROKEN"
        out.append(f"timestamp:     {sound}, from {s.timestamp_authority}")
    window = {
        True: "the signing time lies within the certificate's validity",
        False: "the signing time lies OUTSIDE the certificate's validity",
        None: "unknown",
    }[s.time_in_validity]
    if s.time_in_future:
        window += f"; it is LATER than now ({s.verified_at})"
    out.append(f"time check:    {window}")
    trust = {
        True: "trusted (chains to a --trust certificate)",
        False: "NOT trusted (matches no --trust certificate)",
        None: "identity UNPROVEN (no --trust given)" if s.intact else "not checked",
    }
    out.append(f"trust:         {trust[s.trusted]}")
    return out


def _lines(r) -> list[str]:  # r: VerifyResult
    out = [f"record:        {r.path}", *_signature_lines(r.signature)]
    out.append(f"attachments:   {', '.join(r.attachments)}")
    if r.recomputed_verdict is not None:
        same = "equal to the record" if r.equal else "DIFFERS from the record"
        verdicts = f"recorded verdict {r.recorded_verdict}, recomputed {r.recomputed_verdict}"
        out.append(f"recomputed:    {same} ({verdicts})")
    for d in r.differences:
        out.append(f"  differs: {d}")
    for p in r.problems:
        out.append(f"problem:       {p}")
    for w in r.warnings:
        out.append(f"warning:       {w}")
    out.append("VERIFIED" if r.ok else "NOT VERIFIED")
    return out


@click.command("verify")
@click.argument("report", type=InputPath("record", path_type=Path))
@click.option(
    "--trust",
    "trust",
    multiple=True,
    type=InputPath("certificate --trust", path_type=Path),
    metavar="CERT.pem",
    help="Certificate the signer must chain to (repeatable).",
)
@click.option("--json", "as_json", is_flag=True, help="Print the outcome as JSON.")
def command(report: Path, trust: tuple[Path, ...], as_json: bool) -> int:
    """Verify a signed conformance record and recompute its result from its attachments.

    Shows the signing time, the certificate's validity window and whether the one lies in the
    other. Exit status: 0 verified; 1 not verified (unsigned, signed bytes changed, signed outside
    the certificate's validity or later than now, untrusted with --trust, or the recomputed
    result differs); 2 not a speccheck record. Without --trust an intact record is verified but
    its signer's identity is unproven: compare the printed certificate fingerprint with the one
    the signer's organisation publishes. A lot record is recomputed the same way from the plan,
    specs and profiles it attaches. Calls speccheck.lot.verify.verify_record.
    """
    from speccheck.lot.verify import verify_record

    result = verify_record(report, trust=trust)
    if as_json:
        echo_json(result.to_dict(), "verification", strict=False)
    else:
        click.echo("\n".join(_lines(result)))
    return 0 if result.ok else 1
