"""Profile parameters: pure functions on numpy arrays, and the measurement conditions.

- :mod:`~speccheck.parameters.names`: names, units and families of the parameters.
- :mod:`~speccheck.parameters.conditions`: :class:`Conditions` (λs, λc, λf, sections, filter,
  form, profile kind) and the default cut-off tables (ISO 4288, ISO 21920-3, ISO 3274).
- :mod:`~speccheck.parameters.amplitude`: Ra, Rq, Rsk, Rku, Rp, Rv, Rz, Rt, Rz1max (ISO 4287).
- :mod:`~speccheck.parameters.spacing`: profile elements, RSm, Rc, RΔq (ISO 4287).
- :mod:`~speccheck.parameters.material`: Rmr(c), Rδc, material ratio curve, amplitude density.
- :mod:`~speccheck.parameters.rk`: Rk, Rpk, Rvk, Mr1, Mr2, A1, A2 (ISO 13565-2); Rpq, Rvq, Rmq
  (ISO 13565-3).
- :mod:`~speccheck.parameters.asme`: Rpm, Rvm, Rmax, Rpc (ASME B46.1).
- :mod:`~speccheck.parameters.compute`: :func:`compute_parameters`, the whole pipeline from a
  trace to a :class:`ParameterSet`.
- :mod:`~speccheck.parameters.cutoff`: the ISO 4288 default-λc procedure run on a trace.

Import from the submodules; this package imports nothing itself, so that reading names or
conditions does not load numpy.
"""

__all__: list[str] = []
