"""The append-only records store (SQLite, hash-chained) and trends of recorded values.

- :mod:`speccheck.records.store`: :class:`RecordsStore` (open, append, list, get, export, audit).
- :mod:`speccheck.records.trend`: values of one parameter over time, Cp and Cpk, an SVG plot.
"""

from speccheck.records.store import AuditResult, Record, RecordsStore, default_db_path

__all__ = ["RecordsStore", "Record", "AuditResult", "default_db_path"]
