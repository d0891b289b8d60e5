"""HTML/CSS templates of the conformance record; installed as ``speccheck.templates``."""
