"""One bench session: the part being checked, its traces, the running verdict, the record.

Everything that decides is a library call: traces are read by :func:`speccheck.readers.
read_profile` (the bounded readers), judged by :func:`speccheck.evaluation.evaluator.evaluate`,
written by :func:`speccheck.report.write_report` and appended by
:meth:`speccheck.records.store.RecordsStore.append_check`, in the order ``speccheck check
--report --sign --record`` uses.
"""

from __future__ import annotations

import datetime as _dt
import hashlib
import re
import secrets
import shutil
import threading
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from speccheck.errors import SpeccheckError
from speccheck.web.config import BenchConfig
from speccheck.web.specs import SpecEntry

__all__ = ["Trace", "Recorded", "BenchSession", "Sessions", "safe_name", "IDENTITY_KEY"]

#: Where the bench's serial, operator and instrument go in the records entry's result.
IDENTITY_KEY = "bench_identity"
_UNSAFE = re.compile(r"[^A-Za-z0-9._-]+")


def safe_name(name: str, *, limit: int = 80) -> str:
    """A file name reduced to letters, digits, ``._-``: no folder part, no leading dot."""
    base = str(name).replace("\\", "/").rsplit("/", 1)[-1]
    base = _UNSAFE.sub("_", base).lstrip("._") or "trace"
    if len(base) > limit:
        stem, dot, ext = base.rpartition(".")
        base = (stem[: limit - len(ext) - 1] + dot + ext) if dot and len(ext) < 8 else base[:limit]
    return base


@dataclass
class Trace:
    """One uploaded trace: its name as given, the copy kept on the server, the profile read."""

    name: str
    path: Path
    sha256: str
    profile: Any


@dataclass(frozen=True)
class Recorded:
    record_id: int
    pdf: Path
    signer: str | None
    verdict: str


@dataclass
class BenchSession:
    """The state of one browser's bench: nothing here is shared with another session."""

    id: str
    csrf: str
    folder: Path
    spec: SpecEntry | None = None
    serial: str = ""
    operator: str = ""
    instrument: str = ""
    candidates: list[SpecEntry] = field(default_factory=list)
    traces: list[Trace] = field(default_factory=list)
    result: Any = None
    messages: list[str] = field(default_factory=list)  # one line each, shown once
    recorded: Recorded | None = None
    plots: dict[int, bytes | str] = field(default_factory=dict)  # drawn for this result
    lock: threading.Lock = field(default_factory=threading.Lock)

    # -- the part ---------------------------------------------------------------------------

    def start_part(self, entry: SpecEntry, *, serial: str, operator: str, instrument: str) -> None:
        """Begin a new part: its spec and identity; traces of a previous part are dropped."""
        self.clear_traces()
        self.spec = entry
        self.candidates = []
        self.serial, self.operator, self.instrument = (
            serial.strip()[:80],
            operator.strip()[:80],
            instrument.strip()[:80],
        )
        self.recorded = None

    def next_part(self) -> None:
        """Ready for the next part: operator and instrument stay, everything else goes."""
        self.clear_traces()
        self.spec, self.candidates, self.serial = None, [], ""

    def clear_traces(self) -> None:
        self.traces = []
        self.result = None
        self.plots = {}
        self.recorded = None
        if self.folder.exists():
            shutil.rmtree(self.folder, ignore_errors=True)

    # -- traces -----------------------------------------------------------------------------

    def add_trace(self, filename: str, data: bytes, config: BenchConfig) -> Trace:
        """Keep one uploaded trace, read it with the bounded readers and evaluate again.

        Raises :class:`SpeccheckError` (one line naming the file) when the trace is refused;
        nothing of it is kept then.
        """
        from speccheck.readers import FORMATS, read_profile

        shown = safe_name(filename)
        if self.spec is None:
            raise SpeccheckError("choose the part before adding traces", path=shown)
        if self.recorded is not None:
            raise SpeccheckError("this part is recorded; start the next part first", path=shown)
        ext = Path(shown).suffix.lower()
        if ext not in FORMATS:
            known = ", ".join(sorted(FORMATS))
            raise SpeccheckError(f"not a profile file type (accepted: {known})", path=shown)
        if len(data) > config.max_upload_bytes:
            raise SpeccheckError(
                f"larger than the {config.max_upload_bytes // 2**20} MiB an upload may be",
                path=shown,
            )
        if len(self.traces) >= config.max_traces:
            raise SpeccheckError(f"a part takes at most {config.max_traces} traces", path=shown)
        sha = hashlib.sha256(data).hexdigest()
        for i, t in enumerate(self.traces, start=1):
            if t.sha256 == sha:
                raise SpeccheckError(
                    f"the same file as trace {i} ({t.name}); a trace counts once", path=shown
                )
        self.folder.mkdir(parents=True, exist_ok=True)
        path = self.folder / f"{len(self.traces) + 1:02d}-{shown}"
        path.write_bytes(data)
        try:
            profile = read_profile(path)
        except SpeccheckError as exc:
            path.unlink(missing_ok=True)
            raise SpeccheckError(exc.message, path=shown, where=exc.where) from None
        trace = Trace(name=shown, path=path, sha256=sha, profile=profile)
        self.traces.append(trace)
        try:
            self.evaluate()
        except SpeccheckError:
            self.traces.pop()
            path.unlink(missing_ok=True)
            self.evaluate()
            raise
        return trace

    def remove_last(self) -> None:
        """Take back the last trace (dropped by mistake)."""
        if self.recorded is not None:
            raise SpeccheckError("this part is recorded; its traces cannot change")
        if self.traces:
            self.traces.pop().path.unlink(missing_ok=True)
            self.evaluate()

    def evaluate(self) -> None:
        """The running verdict: the library's evaluation of every trace so far."""
        from speccheck.evaluation.evaluator import evaluate

        self.plots = {}
        if self.spec is None or not self.traces:
            self.result = None
            return
        self.result = evaluate(self.spec.loaded, [t.profile for t in self.traces])

    # -- the record -------------------------------------------------------------------------

    def identity(self) -> dict[str, str]:
        return {"serial": self.serial, "operator": self.operator, "instrument": self.instrument}

    def sign_and_record(self, config: BenchConfig, store_lock: threading.Lock) -> Recorded:
        """Write the signed record and append it to the records store, as ``speccheck check
        --report --sign --record`` does: the store's head first (the record carries it), then
        the PDF, then the entry with the PDF's SHA-256 and the signer."""
        from speccheck.records.store import RecordsStore
        from speccheck.report import write_report

        if self.recorded is not None:
            return self.recorded
        if self.spec is None or self.result is None:
            raise SpeccheckError("nothing to record yet: add the traces first")
        if self.result.verdict == "undecided":
            raise SpeccheckError("the verdict is not decided yet: measure as the page says first")
        stamp = _dt.datetime.now(_dt.UTC).strftime("%Y%m%dT%H%M%SZ")
        name = safe_name(
            f"{self.spec.part}_{self.serial or 'no-serial'}_{stamp}_{secrets.token_hex(3)}.pdf"
        )
        pdf = config.reports_dir / name
        with store_lock, RecordsStore.open(config.db) as store:
            head = store.chain_head() if config.sign_p12 is not None else None
            info = write_report(
                self.result,
                out_path=pdf,
                spec=self.spec.loaded,
                profile_paths=[t.path for t in self.traces],
                sign_p12=config.sign_p12,
                passphrase=config.passphrase,
                read_options={},
                chain_head=head,
            )
            entry = self.result.to_dict()
            entry[IDENTITY_KEY] = self.identity()
            rid = store.append_check(entry, report_sha256=info.sha256, signer=info.signer)
        self.recorded = Recorded(rid, pdf, info.signer, self.result.verdict)
        return self.recorded

    def plot(self, index: int) -> bytes | str:
        """The profile plot of trace ``index`` (drawn by the report layer, once per result)."""
        from speccheck.report.writer import profile_plot_svg

        if self.result is None or not 0 <= index < len(self.traces):
            return "No such trace."
        if index not in self.plots:
            self.plots[index] = profile_plot_svg(
                self.result,
                self.spec.loaded if self.spec else None,
                self.traces[index].profile,
                index,
            )
        return self.plots[index]


class Sessions:
    """Bench sessions by id (a random cookie value); each keeps its traces in its own folder."""

    def __init__(self, config: BenchConfig, *, limit: int = 200):
        self.config = config
        self.limit = limit
        self._lock = threading.Lock()
        self._by_id: dict[str, BenchSession] = {}

    def get(self, sid: str | None) -> BenchSession | None:
        with self._lock:
            return self._by_id.get(sid or "")

    def new(self) -> BenchSession:
        with self._lock:
            if len(self._by_id) >= self.limit:  # the oldest bench gives way
                oldest = next(iter(self._by_id))
                self._by_id.pop(oldest).clear_traces()
            sid = secrets.token_urlsafe(24)
            s = BenchSession(
                id=sid,
                csrf=secrets.token_urlsafe(32),
                folder=self.config.traces_dir / hashlib.sha256(sid.encode()).hexdigest()[:16],
            )
            self._by_id[sid] = s
            return s
