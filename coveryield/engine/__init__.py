"""Engine layer: the daily water balance of tiles (one cover in one zone)."""
