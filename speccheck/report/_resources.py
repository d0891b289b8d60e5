"""Find the report templates: the source tree's folder when running from one, else package data."""

from __future__ import annotations

from functools import lru_cache
from importlib import resources
from pathlib import Path

from speccheck.errors import ReportError

__all__ = ["template_text", "template_environment"]

_REPO_TEMPLATES = Path(__file__).resolve().parent.parent.parent / "templates"


def template_text(name: str) -> str:
    """Text of ``templates/<name>``: from ``speccheck.templates`` or the repository's folder.

    Raises
    ------
    ReportError
        When neither place holds the file (a broken installation).
    """
    candidate = _REPO_TEMPLATES / name
    if candidate.is_file():  # a source tree: its own templates, beside the code that runs
        return candidate.read_text(encoding="utf-8")
    try:
        return resources.files("speccheck.templates").joinpath(name).read_text(encoding="utf-8")
    except (ModuleNotFoundError, FileNotFoundError, NotADirectoryError, OSError):
        pass
    try:
        return candidate.read_text(encoding="utf-8")
    except OSError as exc:
        raise ReportError(
            f"report template missing ({exc.strerror or exc}); reinstall speccheck",
            path=str(candidate),
        ) from exc


@lru_cache(maxsize=1)
def template_environment():  # -> jinja2.Environment
    """A jinja2 environment, autoescaping on, loading templates through :func:`template_text`."""
    import jinja2

    return jinja2.Environment(
        loader=jinja2.FunctionLoader(template_text),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
    )
