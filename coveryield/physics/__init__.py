"""Physics layer: pure functions, arrays in, arrays out (FAO-56 meteorology, Penman-Monteith)."""
