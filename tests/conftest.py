"""Test-wide settings: property tests never fail on wall-clock deadlines (CI machines are noisy);
the tile cache lives in a temporary folder, never in the user's cache folder."""

import pytest
from hypothesis import settings

settings.register_profile("coveryield", deadline=None)
settings.load_profile("coveryield")


@pytest.fixture(autouse=True, scope="session")
def _tile_cache_in_a_temporary_folder(tmp_path_factory):
    """Point COVERYIELD_CACHE_DIR at a fresh folder for the whole run (subprocesses inherit it)."""
    with pytest.MonkeyPatch.context() as patch:
        patch.setenv("COVERYIELD_CACHE_DIR", str(tmp_path_factory.mktemp("coveryield-cache")))
        yield
