"""Test-wide settings: property tests never fail on wall-clock deadlines (CI machines are noisy)."""

from hypothesis import settings

settings.register_profile("coveryield", deadline=None)
settings.load_profile("coveryield")
