"""Archive re-evaluation: what a revised specification would have decided on past deliveries.

``archive`` finds archived profiles by their SHA-256; ``jobs`` turns the records of one part
into re-evaluation jobs; ``execute`` runs them in batches on a local process pool or a Dask
cluster, streaming results back; ``summary`` counts the flips per record, supplier and lot, with
reject rates and their confidence intervals; ``report`` writes the PDF summary.
"""

from speccheck.replay.archive import Archive
from speccheck.replay.execute import replay
from speccheck.replay.summary import ReplaySummary

__all__ = ["Archive", "ReplaySummary", "replay"]
