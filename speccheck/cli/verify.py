"""``speccheck verify REPORT.pdf``: check the signature and recompute the recorded result.

Calls :func:`speccheck.report.verify.verify_report`. Exit 0: signed, intact, whole file covered,
recomputation equal (and trusted when --trust is given); 1: anything else, with what differs;
2: not a speccheck record.
"""

from __future__ import annotations

import json
from pathlib import Path

import click

from speccheck.cli.options import InputPath


def _lines(r) -> list[str]:  # r: VerifyResult
    s = r.signature
    out = [f"record:        {r.path}"]
    if not s.present:
        out.append("signature:     none")
    else:
        state = "intact" if s.intact else "BROKEN"
        cover = "covers the whole file" if s.whole_file else "does NOT cover the whole file"
        out.append(f"signature:     {state}, {cover}")
        out.append(f"signer:        {s.signer or 'unknown'}")
        out.append(f"signed at:     {s.signing_time or 'unknown'} (as stated by the signer)")
        if s.certificate_sha256:
            out.append(f"certificate:   SHA-256 {s.certificate_sha256}")
        trust = {
            True: "trusted (chains to a --trust certificate)",
            False: "NOT trusted",
            None: "not checked",
        }
        out.append(f"trust:         {trust[s.trusted]}")
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

    Exit status: 0 verified; 1 not verified (unsigned, changed, untrusted with --trust, or the
    recomputed result differs); 2 not a speccheck record. Without --trust an intact record is
    verified with the warning that its signer is not vouched for. Calls
    speccheck.report.verify.verify_report.
    """
    from speccheck.report.verify import verify_report

    result = verify_report(report, trust=trust)
    if as_json:
        click.echo(json.dumps(result.to_dict(), indent=2, ensure_ascii=False))
    else:
        click.echo("\n".join(_lines(result)))
    return 0 if result.ok else 1
