"""The built-in demo data set, set in an invented scenario (Kestrel Fluid Power and suppliers).

- :mod:`speccheck.demo.data`: process models (turned, ground, plateau-honed, scratch, spike),
  the catalogue of demo profiles and the functions that build and write them.
"""

__all__: list[str] = []
