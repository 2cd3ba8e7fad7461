"""Calibration against observed flow and parameter ensembles (catchment & plans layer).

* :mod:`~coveryield.uncertainty.sampling` - which parameters vary, over which ranges, and the
  Latin hypercube draws.
* :mod:`~coveryield.uncertainty.ensemble` - every member's tiles simulated once (annual sums),
  bands of any mix of shares as weighted sums per member.
* :mod:`~coveryield.uncertainty.calibration` - fitting the catchment-wide adjustments and the
  recession constant to an observed flow record (split-sample test).

Results are screening estimates, to be confirmed by licensed hydrological practice and local
regulations.
"""
