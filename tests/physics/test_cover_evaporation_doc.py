"""The cover_evaporation docstring gives every returned column its unit and explains why the
wet-canopy rate reaches 12-20 mm/d (issue 12, item 8).

The physics behind the explanation (aerodynamic resistance of tall canopies about 5-20 s m-1
against 70-200 for grass; wet canopies evaporating several times the dry rate) is from
memory, as the docstring says.
"""

from __future__ import annotations

import re

from coveryield.forcing import cover_evaporation


def test_every_returned_column_has_its_unit_beside_it():
    doc = cover_evaporation.__doc__
    for column in ("dry_mm", "wet_mm", "soil_mm"):
        assert re.search(rf"``{column}``\s+mm d-1", doc), column


def test_large_wet_canopy_rates_are_explained():
    doc = " ".join(cover_evaporation.__doc__.split())
    assert "12-20 mm d-1" in doc
    assert "rs = 0" in doc
    assert "canopy_capacity_mm" in doc
