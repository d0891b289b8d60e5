"""The conformance record: result → HTML (jinja2) → PDF (weasyprint) → signature (pyHanko).

- :func:`write_report`: the self-contained PDF (spec, profiles and result attached), signed or not.
- :func:`verify_report`: signature check and recomputation from the attachments.
- :func:`new_key`, :func:`read_passphrase`, :func:`sign_pdf`: keys, passphrases, signing.
- :func:`render_pdf`, :func:`embed_files`, :func:`read_embedded_files`: PDF building blocks.

Heavy libraries (weasyprint, matplotlib, pyHanko, pypdf) are imported inside the functions.
"""

from speccheck.report.pdf import EmbeddedFile, embed_files, read_embedded_files, render_pdf
from speccheck.report.signing import KeyInfo, new_key, read_passphrase, sign_pdf, signer_identity
from speccheck.report.verify import VerifyResult, verify_report
from speccheck.report.writer import ReportInfo, write_report

__all__ = [
    "ReportInfo",
    "write_report",
    "VerifyResult",
    "verify_report",
    "KeyInfo",
    "new_key",
    "read_passphrase",
    "sign_pdf",
    "signer_identity",
    "render_pdf",
    "EmbeddedFile",
    "embed_files",
    "read_embedded_files",
]
