"""Spare-bearing stores: on-hand stock, (s, S) reordering, lead times, backorders.

Conventions (stated once, also in the README):

* Every replacement draws one spare from its bearing's store, failures and
  planned or opportunistic changes alike. A request that finds the shelf
  empty is a *stock-out* and joins a first-come, first-served backorder queue
  (failures and planned work are not prioritised at the store).
* The *inventory position* is on hand + on order − backorders. After every
  demand, the store orders ``S − position`` when the position is at or below
  the reorder point ``s`` (a continuous review (s, S) policy; ``s = S − 1`` is
  one-for-one base stock). Each order has its own lead time drawn from the
  bearing's lead-time stream.
* When a **failure** finds no spare and the stock has an emergency lead time,
  one emergency order is placed for that failure (at most one per failure).
  It counts in the inventory position like any order, so it *replaces* the
  normal reorder that demand would otherwise have caused, and on arrival it
  goes to the failure it was placed for if that failure is still waiting.
* Spares are paid for when issued (parts cost); holding cost is charged on
  the time-average stock on hand.
* A bearing without a stock entry has unlimited spares on the shelf: every
  request is filled at once and nothing is ordered.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable
from typing import Any

import numpy as np
import simpy

from fleetsim.scenario.model import Stock
from fleetsim.sim.tally import emergency_key, issued_key, on_hand_key, ordered_key
from fleetsim.sim.years import YearBook


class Claim:
    """A request for one spare by one position; ``filled`` once a spare is issued to it.

    Attributes
    ----------
    filled
        True once the spare is in the hands of the requester.
    notify
        Called (no arguments) when a backordered claim is filled.
    expedited
        True once an emergency order was placed for it.
    """

    __slots__ = ("filled", "notify", "expedited")

    def __init__(self, notify: Callable[[], None] | None, filled: bool = False) -> None:
        self.filled = filled
        self.notify = notify
        self.expedited = False


class StoreStats:
    """Counters of one bearing kind's store over a replication."""

    __slots__ = (
        "demands", "issued", "stockouts", "orders", "emergency_orders", "ordered_units",
        "on_hand_area", "backorder_area", "on_hand_end", "backorders_end", "on_order_end",
    )  # fmt: skip

    def __init__(self) -> None:
        self.demands = 0
        self.issued = 0
        self.stockouts = 0
        self.orders = 0
        self.emergency_orders = 0
        self.ordered_units = 0
        self.on_hand_area = 0.0  # spare-hours on the shelf
        self.backorder_area = 0.0  # backorder-hours
        self.on_hand_end = 0
        self.backorders_end = 0
        self.on_order_end = 0


Log = Callable[[float, str, str, str], None]


class UnlimitedSupply:
    """A bearing with no stock entry: every request is filled at once.

    ``env`` and ``book`` are needed only to book the parts it issues by year
    (:mod:`fleetsim.sim.years`); a spare issued is a spare bought.
    """

    limited = False

    def __init__(self, bearing_id: str, env: simpy.Environment | None = None,
                 book: YearBook | None = None) -> None:
        self.bearing_id = bearing_id
        self.stats = StoreStats()
        self.env = env
        self.book = book if env is not None else None
        # the year book's journal of issues (one append per spare)
        self._issued = self.book.journal(issued_key(bearing_id)) if self.book is not None else None

    def demand(
        self, unit: str, position: str, notify: Callable[[], None] | None, failure: bool = False
    ) -> Claim:
        """Issue a spare at once."""
        self.issue(self.env.now if self.env is not None else 0.0)
        return Claim(notify, filled=True)

    def issue(self, now: float) -> None:
        """Issue a spare at calendar hour ``now`` without a claim (the quiet units call it
        directly; :meth:`demand` and :meth:`try_issue` go through it)."""
        self.stats.demands += 1
        self.stats.issued += 1
        issued = self._issued
        if issued is not None:  # (what it buys is what it issues: see ordered_key)
            issued.append(now)

    def expedite(self, claim: Claim, unit: str, position: str) -> bool:
        """Never needed: claims are always filled."""
        return False

    def try_issue(self) -> bool:
        """Issue a spare if one is on the shelf: always."""
        self.issue(self.env.now if self.env is not None else 0.0)
        return True

    def finish(self, horizon_h: float) -> StoreStats:
        """Final counters."""
        return self.stats


class SpareStore:
    """The store of one bearing kind with an (s, S) policy.

    Parameters
    ----------
    env
        The replication's environment.
    bearing_id
        Bearing kind (used in the event log).
    stock
        Initial stock, reorder point, order-up-to level and lead times.
    lead_rng, emergency_rng
        Generators of normal and emergency lead times.
    log
        ``log(time_h, unit, position, kind)`` or None.
    book
        The replication's year book (parts issued and bought, spares on the
        shelf and emergency orders, by year), or None.
    """

    limited = True

    def __init__(
        self,
        env: simpy.Environment,
        bearing_id: str,
        stock: Stock,
        lead_rng: np.random.Generator,
        emergency_rng: np.random.Generator | None,
        log: Log | None,
        book: YearBook | None = None,
    ) -> None:
        self.env = env
        self.book = book
        self.bearing_id = bearing_id
        self.stock = stock
        self.lead_rng = lead_rng
        self.emergency_rng = emergency_rng
        self.log = log
        self.on_hand = stock.initial
        self.on_order = 0
        self.backorders: deque[Claim] = deque()
        self.stats = StoreStats()
        self._t_last = 0.0
        self._review()

    # --- bookkeeping --------------------------------------------------------------
    def _accrue(self) -> None:
        now = self.env.now
        dt = now - self._t_last
        if dt > 0.0:
            self.stats.on_hand_area += self.on_hand * dt
            self.stats.backorder_area += len(self.backorders) * dt
            if self.book is not None and self.on_hand:
                self.book.over(on_hand_key(self.bearing_id), self._t_last, now, self.on_hand)
            self._t_last = now

    def _issued(self) -> None:
        self.stats.issued += 1
        if self.book is not None:
            self.book.at(issued_key(self.bearing_id), self.env.now)

    @property
    def inventory_position(self) -> int:
        """On hand + on order − backorders."""
        return self.on_hand + self.on_order - len(self.backorders)

    def _fill(self, claim: Claim) -> None:
        self.on_hand -= 1
        self._issued()
        claim.filled = True
        if claim.notify is not None:
            claim.notify()

    # --- requests -----------------------------------------------------------------
    def demand(
        self, unit: str, position: str, notify: Callable[[], None] | None, failure: bool = False
    ) -> Claim:
        """Request one spare for ``unit``/``position``; backorder it if the shelf is empty.

        For a ``failure`` that finds the shelf empty, the emergency order (if
        any) is placed before the reorder review.
        """
        self._accrue()
        self.stats.demands += 1
        claim = Claim(notify)
        if self.on_hand > 0:
            self.on_hand -= 1
            self._issued()
            claim.filled = True
        else:
            self.stats.stockouts += 1
            self.backorders.append(claim)
            if self.log is not None:
                self.log(self.env.now, unit, position, "stockout")
            if failure:
                self.expedite(claim, unit, position)
        self._review()
        return claim

    def try_issue(self) -> bool:
        """Issue a spare only if one is on the shelf now (opportunistic changes never wait)."""
        if self.on_hand <= 0:
            return False
        self._accrue()
        self.stats.demands += 1
        self.on_hand -= 1
        self._issued()
        self._review()
        return True

    def expedite(self, claim: Claim, unit: str, position: str) -> bool:
        """Place an emergency order for a waiting failure; False when none is possible."""
        lead = self.stock.emergency_lead_time
        if lead is None or claim.filled or claim.expedited:
            return False
        assert self.emergency_rng is not None
        claim.expedited = True
        self.stats.emergency_orders += 1
        if self.book is not None:
            self.book.at(emergency_key(self.bearing_id), self.env.now)
        self._place(1, lead.sample(self.emergency_rng), claim, "emergency_order", unit, position)
        return True

    # --- orders -------------------------------------------------------------------
    def _review(self) -> None:
        s, big_s = self.stock.reorder_point, self.stock.order_up_to
        position = self.inventory_position
        if position <= s and big_s > position:
            self.stats.orders += 1
            self._place(big_s - position, self.stock.lead_time.sample(self.lead_rng), None,
                        "order", "", self.bearing_id)

    def _place(
        self, qty: int, lead_h: float, claim: Claim | None, kind: str, unit: str, position: str
    ) -> None:
        self.on_order += qty
        self.stats.ordered_units += qty
        if self.book is not None:
            self.book.at(ordered_key(self.bearing_id), self.env.now, qty)
        if self.log is not None:
            self.log(self.env.now, unit, position, kind)
        arrival = self.env.timeout(lead_h)
        arrival.callbacks.append(_Delivery(self, qty, claim))

    def _deliver(self, qty: int, claim: Claim | None) -> None:
        self._accrue()
        self.on_order -= qty
        self.on_hand += qty
        if self.log is not None:
            self.log(self.env.now, "", self.bearing_id, "delivery")
        if claim is not None and not claim.filled:
            self.backorders.remove(claim)
            self._fill(claim)
        while self.on_hand > 0 and self.backorders:
            self._fill(self.backorders.popleft())

    def finish(self, horizon_h: float) -> StoreStats:
        """Close the time averages at the horizon and return the counters."""
        self._accrue()
        st = self.stats
        st.on_hand_end = self.on_hand
        st.backorders_end = len(self.backorders)
        st.on_order_end = self.on_order
        return st


class _Delivery:
    """Callback delivering an order when its lead time has passed."""

    __slots__ = ("store", "qty", "claim")

    def __init__(self, store: SpareStore, qty: int, claim: Claim | None) -> None:
        self.store = store
        self.qty = qty
        self.claim = claim

    def __call__(self, _event: Any) -> None:
        self.store._deliver(self.qty, self.claim)
