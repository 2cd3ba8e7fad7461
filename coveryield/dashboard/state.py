"""What the dashboard user has chosen, and the result it gives: plain Python, no widget module.

:class:`DashboardState` holds the plan started from, the zone being edited (or all zones), the
edited cover shares of every zone, the covers held fixed, and the outcome of the edited plan with
its change against ``current``. Moving a share never runs the daily loop: the state asks the
comparison to :meth:`evaluate` the new shares, which weights the tile results simulated once.

The rebalancing rule (stated on the page as :data:`SHARE_RULE` and :data:`ALL_ZONES_RULE`) lives in
the pure functions :func:`rebalance_zone` and :func:`rebalance`, so it can be tested without a
kernel.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from typing import Any

from traitlets import Any as AnyTrait
from traitlets import Dict, HasTraits, List, Unicode, observe

#: The zone choice that edits every zone at once.
ALL_ZONES = "all zones"
#: Shares are kept on a grid of 0.1 % so the percentages on screen add up to 100.0 [-].
SHARE_QUANTUM = 0.001

SHARE_RULE = (
    "Shares always add up to 100 %. Raising one cover takes area from the other covers that are "
    "not held, in proportion to their shares; lowering it gives the freed area to those covers in "
    "the same proportion (equally if they are all at 0 %). A held cover keeps its share."
)
ALL_ZONES_RULE = (
    "With \u201call zones\u201d chosen, a slider shows the cover's share of the whole catchment "
    "(zones weighted by area), and a move scales the cover by the same factor in every zone that "
    "has it: raising forest by a third raises it by a third in each zone with forest (as far as "
    "the other covers there can give). A zone without the cover keeps none; to add a cover to a "
    "zone, choose that zone."
)


def _quantize_rest(values: Mapping[str, float], total: float) -> dict[str, float]:
    """Round values to :data:`SHARE_QUANTUM` so that they add up to ``total`` exactly.

    Largest-remainder rounding: each value is floored to the grid, then the grid steps still
    missing go to the values with the largest remainders; any part smaller than one grid step
    (when ``total`` itself is off the grid) goes to the largest value.

    Parameters
    ----------
    values : mapping of str to float
        Unrounded shares that add up to ``total`` [-].
    total : float
        The sum to keep [-].

    Returns
    -------
    dict
        Rounded shares [-].
    """
    if not values:
        return {}
    floors = {k: math.floor(v / SHARE_QUANTUM + 1e-9) for k, v in values.items()}
    units_total = math.floor(total / SHARE_QUANTUM + 1e-9)
    missing = units_total - sum(floors.values())
    by_remainder = sorted(values, key=lambda k: values[k] / SHARE_QUANTUM - floors[k], reverse=True)
    for key in by_remainder[: max(missing, 0)]:
        floors[key] += 1
    rounded = {k: n * SHARE_QUANTUM for k, n in floors.items()}
    leftover = total - sum(rounded.values())
    largest = max(rounded, key=lambda k: rounded[k])
    rounded[largest] = max(rounded[largest] + leftover, 0.0)
    return rounded


def rebalance_zone(
    shares: Mapping[str, float], cover: str, target: float, held: Iterable[str] = ()
) -> dict[str, float]:
    r"""Set one cover's share in one zone and rebalance the others so shares still sum to 1.

    Parameters
    ----------
    shares : mapping of str to float
        Cover -> share of the zone, summing to 1 [-].
    cover : str
        The cover being moved.
    target : float
        Wanted share of ``cover`` [-]; clipped to what the covers not held can give or take.
    held : iterable of str
        Covers that keep their share.

    Returns
    -------
    dict
        New cover -> share [-], on the 0.1 % grid for the covers that changed.

    Notes
    -----
    With :math:`x` the cover's share, :math:`F` the covers neither moved nor held and
    :math:`R = \\sum_{c \\in F} s_c`, the target is clipped to :math:`[0, x + R]` and each
    :math:`c \\in F` gets :math:`s_c (x + R - t) / R` (or :math:`(x + R - t)/|F|` when
    :math:`R = 0`). Common practice, no source.
    """
    held = set(held) - {cover}
    free = [c for c in shares if c != cover and c not in held]
    new = dict(shares)
    if not free or cover not in shares:
        return new
    x = float(shares[cover])
    room = sum(float(shares[c]) for c in free)
    available = x + room
    target = min(max(float(target), 0.0), available)
    target = min(round(target / SHARE_QUANTUM) * SHARE_QUANTUM, available)
    rest = available - target
    if room > 0:
        spread = {c: float(shares[c]) * rest / room for c in free}
    else:
        spread = {c: rest / len(free) for c in free}
    new[cover] = target
    new.update(_quantize_rest(spread, rest))
    return new


def _scale_factor(
    x: Mapping[str, float], cap: Mapping[str, float], w: Mapping[str, float], wanted: float
) -> float:
    r"""Factor :math:`k \ge 0` with :math:`\sum_z w_z \min(k x_z, c_z) = ` ``wanted``.

    Zones whose cap binds are fixed at their cap one after the other (at most one pass per
    zone); ``wanted`` beyond every cap gives the largest factor any zone needs. Common practice,
    no source.
    """
    active = {z for z in x if x[z] > 0.0}
    fixed = 0.0
    k = 0.0
    while active:
        k = max((wanted - fixed) / sum(w[z] * x[z] for z in active), 0.0)
        capped = {z for z in active if k * x[z] > cap[z]}
        if not capped:
            return k
        fixed += sum(w[z] * cap[z] for z in capped)
        active -= capped
    return max((cap[z] / x[z] for z in x if x[z] > 0.0), default=0.0)


def rebalance(
    shares_by_zone: Mapping[str, Mapping[str, float]],
    zone_weights: Mapping[str, float],
    cover: str,
    target: float,
    held: Iterable[str] = (),
) -> dict[str, dict[str, float]]:
    r"""Move a cover's area-weighted share over several zones, scaling it alike in each zone.

    Parameters
    ----------
    shares_by_zone : mapping
        Zone -> (cover -> share), each zone summing to 1 [-]; only these zones change.
    zone_weights : mapping of str to float
        Zone -> area share of the catchment [-].
    cover : str
        The cover being moved.
    target : float
        Wanted area-weighted share of ``cover`` over these zones [-]; clipped to what the zones
        that have the cover can reach.
    held : iterable of str
        Covers that keep their share in every zone.

    Returns
    -------
    dict
        Zone -> (cover -> share) [-].

    Notes
    -----
    Every zone that has the cover gets :math:`\min(k x_z, x_z + R_z)`, one factor :math:`k`
    for all (:math:`x_z`: the cover's share, :math:`R_z`: the share of the covers neither moved
    nor held in zone z), with :math:`k` chosen so the area-weighted mean reaches the target. A
    zone without the cover keeps none (:data:`ALL_ZONES_RULE`). With one zone this is
    :func:`rebalance_zone`. Common practice, no source.
    """
    held = set(held) - {cover}
    if len(shares_by_zone) == 1:
        ((zone, shares),) = shares_by_zone.items()
        return {zone: rebalance_zone(shares, cover, target, held)}
    total_w = sum(zone_weights[z] for z in shares_by_zone) or 1.0
    weights = {z: zone_weights[z] / total_w for z in shares_by_zone}
    x = {z: float(s.get(cover, 0.0)) for z, s in shares_by_zone.items()}
    room = {z: sum(float(v) for c, v in s.items() if c != cover and c not in held)
            for z, s in shares_by_zone.items()}
    movable = {z for z in shares_by_zone if x[z] > 0.0 and room[z] + x[z] > 0.0}
    fixed = sum(weights[z] * x[z] for z in shares_by_zone if z not in movable)
    k = _scale_factor({z: x[z] for z in movable}, {z: x[z] + room[z] for z in movable},
                      weights, float(target) - fixed)
    result = {z: dict(s) for z, s in shares_by_zone.items()}
    for zone in movable:
        result[zone] = rebalance_zone(shares_by_zone[zone], cover, min(k * x[zone],
                                                                       x[zone] + room[zone]), held)
    return result


def default_start_plan(plan_names: list[str]) -> str:
    """Return the plan the page starts from: the first after ``current``, else ``current``."""
    return plan_names[1] if len(plan_names) > 1 else plan_names[0]


class DashboardState(HasTraits):
    """The user's choices and the edited plan's result, observable with traitlets.

    Parameters
    ----------
    comparison : coveryield.comparison.Comparison
        The plans compared, tiles simulated once.
    plan_name : str, optional
        Plan to start from (default: :func:`default_start_plan`, the first plan after
        ``current``, so the page opens on a plan's own figures rather than on zero changes).

    Attributes
    ----------
    plan_name : str
        Plan the edit started from; changing it resets the shares to that plan.
    zone : str
        Zone being edited, or :data:`ALL_ZONES`.
    shares : dict
        Edited plan: zone -> (cover -> share), every cover in :attr:`cover_names` present [-].
    held : list of str
        Covers held at their share.
    outcome, change
        :class:`PlanOutcome` of the edited plan and its :class:`PlanChange` against ``current``;
        ``outcome`` is assigned last, so observing it sees ``shares`` and ``change`` up to date.
    bands : dict
        With a parameter ensemble: ``mean_yield_mm``, ``change_mm``, ``dry_year_change_mm`` ->
        (p05, p50, p95) of the edited plan [mm yr-1], a weighted sum per member (no daily
        loop); empty without one. Assigned with ``outcome``.
    error : str
        Short message about the last failed action; empty when all is well.
    """

    plan_name = Unicode("current")
    zone = Unicode(ALL_ZONES)
    shares = Dict()
    held = List(Unicode())
    change = AnyTrait(allow_none=True)
    bands = Dict()
    outcome = AnyTrait(allow_none=True)
    error = Unicode("")

    def __init__(self, comparison: Any, plan_name: str | None = None) -> None:
        super().__init__()
        self.comparison = comparison
        self.plan_file = comparison.plan_file
        self.baseline = comparison.outcome("current")
        self.zone_names = [z.name for z in self.plan_file.zones]
        self.zone_weights = {z.name: float(z.area_share) for z in self.plan_file.zones}
        self.cover_names = list(comparison.cover_names)
        if plan_name is None:
            plan_name = default_start_plan(self.plan_names)
        if plan_name not in self.plan_names:
            raise KeyError(f"plan {plan_name!r} is not in the plan file")
        if plan_name != self.plan_name:
            self.plan_name = plan_name  # resets through the observer
        else:
            self.reset()

    @property
    def plan_names(self) -> list[str]:
        """Plans in the file, ``current`` first."""
        return list(self.comparison.plan_names)

    @property
    def edited_label(self) -> str:
        """Name of the plan on screen: the plan started from, ``, edited`` once changed."""
        if self.is_edited:
            return f"{self.plan_name}, edited"
        if self.plan_name == self.plan_names[0]:
            return f"{self.plan_name} (start of an edit)"
        return self.plan_name

    @property
    def edited_colour(self) -> str:
        """Colour of the plan on screen: that of the plan started from (see coveryield.palette)."""
        from coveryield.palette import edited_colour

        return edited_colour(self.plan_names, self.plan_name)

    @property
    def zone_choices(self) -> list[str]:
        """Zone names, preceded by :data:`ALL_ZONES`."""
        return [ALL_ZONES, *self.zone_names]

    def plan_shares(self, plan_name: str) -> dict[str, dict[str, float]]:
        """Shares of a plan in the file, every cover listed in every zone [-]."""
        plan = self.plan_file.plans[plan_name]
        return {
            zone: {c: float(plan.get(zone, {}).get(c, 0.0)) for c in self.cover_names}
            for zone in self.zone_names
        }

    @property
    def edited_zones(self) -> list[str]:
        """The zones a share move changes."""
        return list(self.zone_names) if self.zone == ALL_ZONES else [self.zone]

    def displayed_shares(self) -> dict[str, float]:
        """Cover -> share shown on the sliders: the zone's, or the area-weighted mean [-]."""
        zones = self.edited_zones
        total_w = sum(self.zone_weights[z] for z in zones) or 1.0
        return {
            c: sum(self.zone_weights[z] * self.shares[z][c] for z in zones) / total_w
            for c in self.cover_names
        }

    @property
    def is_edited(self) -> bool:
        """Whether the shares differ from the plan started from."""
        base = self.plan_shares(self.plan_name)
        return any(
            abs(self.shares[z][c] - base[z][c]) > 1e-9 for z in self.zone_names
            for c in self.cover_names
        )

    @observe("plan_name")
    def _plan_chosen(self, change: dict) -> None:
        self.reset()

    def reset(self) -> None:
        """Return the shares to the plan started from (its outcome is cached by the comparison)."""
        outcome = self.comparison.outcome(self.plan_name)
        self._publish(self.plan_shares(self.plan_name), outcome)

    def set_share(self, cover: str, share: float) -> float:
        """Move a cover's share in the chosen zone(s) and re-evaluate; return the share reached.

        Parameters
        ----------
        cover : str
            Cover to move.
        share : float
            Wanted share, of the zone or (all zones) of the catchment [-].

        Returns
        -------
        float
            The displayed share reached after clipping [-].
        """
        if cover in self.held:
            return self.displayed_shares()[cover]
        chosen = {z: self.shares[z] for z in self.edited_zones}
        absent = not any(s[cover] > 0.0 for s in chosen.values())
        if len(chosen) > 1 and absent and share > self.displayed_shares()[cover]:
            self.error = (f"{cover} is in none of the zones chosen: choose a zone to add "
                          f"{cover} there")
            return self.displayed_shares()[cover]
        moved = rebalance(chosen, self.zone_weights, cover, share, self.held)
        new_shares = {z: dict(self.shares[z]) for z in self.zone_names}
        new_shares.update(moved)
        if new_shares != self.shares:
            self._publish(new_shares, self.comparison.evaluate(engine_shares(new_shares)))
        return self.displayed_shares()[cover]

    def set_held(self, cover: str, hold: bool) -> None:
        """Hold a cover at its share (``hold=True``) or release it [-]."""
        held = [c for c in self.held if c != cover]
        self.held = [*held, cover] if hold else held

    def _publish(self, shares: dict[str, dict[str, float]], outcome: Any) -> None:
        """Assign new shares and their outcome, notifying observers once they all agree."""
        change = self.comparison.change(outcome)
        bands = self.comparison.bands(engine_shares(shares)) if self.has_ensemble else {}
        with self.hold_trait_notifications():
            self.shares = shares
            self.change = change
            self.bands = bands
            self.outcome = outcome

    @property
    def has_ensemble(self) -> bool:
        """Whether the comparison carries a parameter ensemble (bands on the headlines)."""
        return getattr(self.comparison, "ensemble", None) is not None

    def attach_ensemble(self, ensemble: Any) -> None:
        """Give the comparison a parameter ensemble and show the bands of the edited shares.

        Parameters
        ----------
        ensemble : coveryield.uncertainty.ensemble.EnsembleResults
            Every member's tiles, simulated once for the same tiles as the comparison.
        """
        if tuple(ensemble.tiles) != tuple(self.comparison.tiles.tiles):
            raise ValueError("the ensemble was simulated for other tiles than this comparison")
        self.comparison.ensemble = ensemble
        self._publish(self.shares, self.outcome)


def engine_shares(shares: Mapping[str, Mapping[str, float]]) -> dict[str, dict[str, float]]:
    """Shares as the comparison takes them: zone -> (cover -> share), zero shares left out [-]."""
    return {z: {c: float(v) for c, v in s.items() if v > 0.0} for z, s in shares.items()}
