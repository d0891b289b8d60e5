"""HTML to PDF (weasyprint) and the files attached to a PDF (pypdf)."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from speccheck.errors import ReportError

__all__ = ["EmbeddedFile", "render_pdf", "embed_files", "read_embedded_files"]


@dataclass(frozen=True)
class EmbeddedFile:
    """A file attached to a PDF: its name inside the PDF, a description and its exact bytes."""

    name: str
    data: bytes
    description: str = ""


def render_pdf(
    html: str, *, base_url: str | None = None, attachments: Sequence[EmbeddedFile] = ()
) -> bytes:
    """Render an HTML document (with its CSS inline or linked from ``base_url``) to PDF bytes.

    ``attachments`` are embedded while the PDF is written (PDF 32000-1 7.11.4, the same name
    tree :func:`embed_files` fills), which spares reading and writing the whole PDF again.
    Names must be unique; the bytes are stored exactly as given.

    Notes
    -----
    weasyprint is imported here, not at module level, so the command line starts fast.
    """
    import logging
    import warnings
    from io import BytesIO

    with warnings.catch_warnings():
        # weasyprint warns at import when the optional HarfBuzz-Subset library is missing
        warnings.filterwarnings(
            "ignore", message=".*HarfBuzz-Subset.*", category=DeprecationWarning
        )
        import weasyprint

    # weasyprint reports unsupported CSS through logging; keep it off the user's terminal
    logging.getLogger("weasyprint").setLevel(logging.ERROR)
    logging.getLogger("fontTools").setLevel(logging.ERROR)
    names = [f.name for f in attachments]
    if len(set(names)) != len(names):
        raise ReportError(f"attachment names are not unique: {names}")
    files = [weasyprint.Attachment(file_obj=BytesIO(f.data), name=f.name) for f in attachments]
    try:
        pdf = weasyprint.HTML(string=html, base_url=base_url).write_pdf(attachments=files)
    except Exception as exc:  # a template or rendering fault is not the user's input
        raise ReportError(f"cannot render the report: {type(exc).__name__}: {exc}") from exc
    if not pdf:
        raise ReportError("cannot render the report: the renderer produced nothing")
    return bytes(pdf)


def embed_files(pdf_bytes: bytes, files: Sequence[EmbeddedFile]) -> bytes:
    """Attach ``files`` to a PDF (PDF 32000-1 7.11.4 embedded file streams) and return the PDF.

    Names must be unique; the bytes are stored exactly as given.
    """
    from io import BytesIO

    from pypdf import PdfReader, PdfWriter

    names = [f.name for f in files]
    if len(set(names)) != len(names):
        raise ReportError(f"attachment names are not unique: {names}")
    writer = PdfWriter(clone_from=PdfReader(BytesIO(pdf_bytes)))
    for f in files:
        writer.add_attachment(f.name, f.data)
    out = BytesIO()
    writer.write(out)
    return out.getvalue()


def _quiet_pypdf() -> None:
    """Keep pypdf's repair notes ("EOF marker not found") off standard error: a damaged file
    is reported once, as an error naming it, or read as it is."""
    import logging

    logger = logging.getLogger("pypdf")
    logger.setLevel(logging.ERROR)
    if not logger.handlers:
        logger.addHandler(logging.NullHandler())
    logger.propagate = False


def read_embedded_files(pdf_bytes: bytes, *, path: str | None = None) -> dict[str, bytes]:
    """The files attached to a PDF, name -> bytes (the first one when a name repeats).

    Raises
    ------
    ReportError
        When the bytes are not a readable PDF.
    """
    from io import BytesIO

    from pypdf import PdfReader
    from pypdf.errors import PyPdfError

    if not pdf_bytes.startswith(b"%PDF-"):
        raise ReportError("not a PDF file (no %PDF- header)", path=path, where="byte 0")
    _quiet_pypdf()
    try:
        reader = PdfReader(BytesIO(pdf_bytes), strict=False)
        attachments = reader.attachments
        return {name: bytes(datas[0]) for name, datas in attachments.items() if datas}
    except (PyPdfError, ValueError, KeyError, TypeError) as exc:
        raise ReportError(f"cannot read the PDF: {exc}", path=path) from exc
