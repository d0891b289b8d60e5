"""What the bench page shows, worded from the report's view model: the page and the PDF read
the same result through the same words."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from speccheck.report.view import SignatureView, build_view
from speccheck.web.bench import BenchSession

__all__ = ["BenchPage", "bench_page", "CAUTION", "VERDICT_MARKS"]

CAUTION = (
    "The governing drawing, the contract and the applicable standards take precedence over this "
    "page. Its verdicts are only as good as the instrument's calibration and the measurement; "
    "parts are accepted or released by qualified personnel under the customer's quality "
    "requirements."
)
#: A shape beside every verdict word, so that neither colour nor the word alone carries it.
VERDICT_MARKS = {"conforming": "✔", "nonconforming": "✘", "undecided": "?"}
_PENDING = SignatureView(
    signed=False,
    status="NOT YET RECORDED",
    signer="—",
    role="—",
    date="—",
    fingerprint="—",
    note="",
)


@dataclass
class BenchPage:
    """Everything the bench template needs, already worded."""

    session: BenchSession
    view: Any = None  # ReportView of the running result, None before the first trace
    verdict: str = ""
    verdict_mark: str = ""
    headline: str = ""  # "Measure 3 more ..." or "Decided: ready to sign and record"
    next_steps: list[str] = field(default_factory=list)
    can_record: bool = False
    plot_index: int | None = None  # measurement shown in the plot (0-based)
    signing: str = ""  # who signs, or that records are not signed


def _headline(result: Any, next_steps: list[str]) -> str:
    if result.verdict != "undecided":
        return "Decided. Sign and record, or add no more traces."
    for req in result.requirements:
        if req.verdict == "undecided" and req.next:
            return req.next[0].upper() + req.next[1:] + "."
    return "Undecided: see the requirements below."


def bench_page(session: BenchSession, *, plot: int | None, signer: str | None) -> BenchPage:
    """The page model of a session (no computation: the session's result, worded)."""
    page = BenchPage(session=session)
    page.signing = (
        f"Records are signed by {signer}."
        if signer
        else ("No signing key was given at the server's start: records are written NOT SIGNED.")
    )
    result = session.result
    if result is None:
        return page
    view = build_view(result, signature=_PENDING)
    page.view = view
    page.verdict = result.verdict
    page.verdict_mark = VERDICT_MARKS.get(result.verdict, "")
    page.next_steps = list(view.next_steps)
    page.headline = _headline(result, page.next_steps)
    page.can_record = result.verdict != "undecided" and session.recorded is None
    n = len(result.measurements)
    page.plot_index = (n - 1) if plot is None or not 0 <= plot < n else plot
    return page
