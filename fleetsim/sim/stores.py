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
* **Order ahead** (``Stock.order_ahead``): planned changes are known before
  they fall due (age dues, block dates). The engine announces each one
  (:meth:`SpareStore.plan_ahead`: unit, position, due calendar hour); the
  store orders one spare for it ``Stock.order_ahead_h`` before the due date
  (at once when that is already past) and keeps it for that change: it is
  outside the inventory position, so the (s, S) stock serves the rest of the
  demand. The planned demand takes its own spare (at once when it has
  arrived; otherwise a free spare from the shelf, and its own, when it
  comes, joins the free stock; with neither it is a stock-out and waits for
  its own spare). An announcement whose change does not happen (the position was
  renewed before it, skipped at the block date, or announced again) is
  released: its spare, on the shelf or on its way, joins the free stock.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable
from typing import Any

import numpy as np
import simpy
from simpy.core import URGENT

from fleetsim.scenario.model import Scenario, Stock
from fleetsim.sim.streams import Streams
from fleetsim.sim.tally import (
    BearingTally,
    emergency_key,
    issued_key,
    on_hand_key,
    ordered_key,
)
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

    __slots__ = ("filled", "notify", "expedited", "ahead")

    def __init__(self, notify: Callable[[], None] | None, filled: bool = False) -> None:
        self.filled = filled
        self.notify = notify
        self.expedited = False
        self.ahead: Ahead | None = None  # the spare ordered ahead that it waits for


#: The claim every request to unlimited supply gets: filled at once, never changed.
FILLED = Claim(None, filled=True)


class Ahead:
    """One spare ordered ahead for one announced planned change.

    Attributes
    ----------
    state
        ``"planned"`` (not ordered yet), ``"on_order"``, ``"on_shelf"`` (kept
        for its change), ``"used"`` or ``"released"`` (joins the free stock).
    claim
        The planned demand waiting for it, if any.
    """

    __slots__ = ("state", "claim")

    def __init__(self) -> None:
        self.state = "planned"
        self.claim: Claim | None = None


class StoreStats:
    """Counters of one bearing kind's store over a replication."""

    __slots__ = (
        "demands", "issued", "stockouts", "orders", "emergency_orders", "ordered_units",
        "ahead_orders", "own_spare", "own_late", "on_hand_area", "backorder_area", "on_hand_end", "backorders_end",
        "on_order_end",
    )  # fmt: skip

    def __init__(self) -> None:
        self.ahead_orders = 0  # orders placed ahead for announced planned changes
        self.own_spare = 0  # planned demands served by their own spare ordered ahead
        self.own_late = 0  # of those, the ones that waited for it (stock-outs)
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
    order_ahead = False
    __slots__ = ("bearing_id", "stats", "env", "book", "_issued")

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
        """Issue a spare at once (the claim returned is the one shared filled claim:
        nothing ever changes a claim of unlimited supply)."""
        self.issue(self.env.now if self.env is not None else 0.0)
        return FILLED

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

    def plan_ahead(self, unit: str, position: str, due_h: float) -> None:
        """Nothing to order ahead: the shelf never runs empty."""

    def release(self, unit: str, position: str) -> None:
        """Nothing was ordered ahead."""

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
    # (slots: every demand reads and writes these)
    __slots__ = ("env", "book", "bearing_id", "stock", "lead_rng", "emergency_rng", "log",
                 "on_hand", "on_order", "backorders", "order_ahead", "ahead", "kept",
                 "kept_on_order", "stats", "_t_last", "_levels", "_issued_j", "_on_hand_j")

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
        self.order_ahead = stock.order_ahead
        self.ahead: dict[tuple[str, str], Ahead] = {}  # announced planned changes
        self.kept = 0  # spares on the shelf kept for their planned change
        self.kept_on_order = 0  # spares ordered ahead and on their way, kept for their change
        self.stats = StoreStats()
        self._t_last = 0.0
        self._levels = (stock.reorder_point, stock.order_up_to)  # (s, S)
        # the year book's journals of spares issued and of spare-hours on the shelf
        self._issued_j = book.journal(issued_key(bearing_id)) if book is not None else None
        self._on_hand_j = book.weighted_journal(on_hand_key(bearing_id)) if book is not None else None
        self._review()

    # --- bookkeeping --------------------------------------------------------------
    def _accrue(self) -> None:
        now = self.env.now
        dt = now - self._t_last
        if dt > 0.0:
            shelf = self.on_hand + self.kept
            self.stats.on_hand_area += shelf * dt
            self.stats.backorder_area += len(self.backorders) * dt
            if self._on_hand_j is not None and shelf:
                self._on_hand_j.extend((self._t_last, now, shelf))
            self._t_last = now

    def _issued(self) -> None:
        self.stats.issued += 1
        if self._issued_j is not None:
            self._issued_j.append(self.env.now)

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
        if not failure and self.ahead:
            ahead = self.ahead.pop((unit, position), None)
            if ahead is not None:
                claim = Claim(notify)
                self._take_ahead(ahead, claim, unit, position)
                return claim
        if self.on_hand > 0:
            self.on_hand -= 1
            self._issued()
            self._review()
            return FILLED  # a claim filled at once is never changed: the shared one
        claim = Claim(notify)
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

    # --- ordering ahead for planned changes ----------------------------------------
    def plan_ahead(self, unit: str, position: str, due_h: float) -> None:
        """Announce the next planned change of ``unit``/``position``, due at calendar hour ``due_h``.

        Replaces (releases) an earlier announcement of the same position. With
        ``order_ahead`` off this does nothing.
        """
        if not self.order_ahead:
            return
        self.release(unit, position)
        ahead = Ahead()
        self.ahead[(unit, position)] = ahead
        wait = due_h - self.stock.order_ahead_h - self.env.now
        if wait <= 0.0:
            self._order_ahead(ahead, unit, position)
        else:
            self.env.timeout(wait).callbacks.append(_AheadOrder(self, ahead, unit, position))

    def release(self, unit: str, position: str) -> None:
        """The announced change of ``unit``/``position`` will not happen: free its spare."""
        ahead = self.ahead.pop((unit, position), None) if self.ahead else None
        if ahead is None:
            return
        state = ahead.state
        ahead.state = "released"
        if state == "on_order":
            self.kept_on_order -= 1
            self.on_order += 1  # on its way to the free stock: in the inventory position now
        elif state == "on_shelf":
            self._accrue()
            self.kept -= 1
            self.on_hand += 1
            self._serve_backorders()

    def _order_ahead(self, ahead: Ahead, unit: str, position: str) -> None:
        if ahead.state != "planned":
            return  # released before its order date
        ahead.state = "on_order"
        self.kept_on_order += 1
        self.stats.orders += 1
        self.stats.ahead_orders += 1
        self.stats.ordered_units += 1
        if self.book is not None:
            self.book.at(ordered_key(self.bearing_id), self.env.now, 1)
        if self.log is not None:
            self.log(self.env.now, unit, position, "order_ahead")
        arrival = _EarlyArrival(self.env, self.stock.lead_time.sample(self.lead_rng))
        arrival.callbacks.append(_AheadDelivery(self, ahead))

    def _deliver_ahead(self, ahead: Ahead) -> None:
        self._accrue()
        if self.log is not None:
            self.log(self.env.now, "", self.bearing_id, "delivery")
        if ahead.state == "released":  # counted on order since its release
            self.on_order -= 1
            self.on_hand += 1
            self._serve_backorders()
            return
        self.kept_on_order -= 1
        if ahead.claim is not None:
            claim = ahead.claim
            ahead.state = "used"
            claim.ahead = None
            self._issued()
            claim.filled = True
            if claim.notify is not None:
                claim.notify()
        else:
            ahead.state = "on_shelf"
            self.kept += 1

    def _take_ahead(self, ahead: Ahead, claim: Claim, unit: str, position: str) -> None:
        """A planned demand meets the spare ordered ahead for it (a free spare if its own is late)."""
        if ahead.state == "on_shelf":
            ahead.state = "used"
            self.kept -= 1
            self.stats.own_spare += 1
            self._issued()
            claim.filled = True
            return
        if self.on_hand > 0:  # its own spare is late: take a free one, free the late one
            if ahead.state == "planned":
                ahead.state = "released"  # never ordered: nothing on its way
            else:
                ahead.state = "released"
                self.kept_on_order -= 1
                self.on_order += 1  # arrives into the free stock
            self.on_hand -= 1
            self._issued()
            claim.filled = True
            self._review()
            return
        self.stats.stockouts += 1
        self.stats.own_spare += 1
        self.stats.own_late += 1
        if self.log is not None:
            self.log(self.env.now, unit, position, "stockout")
        if ahead.state == "planned":  # due earlier than announced: order now
            self._order_ahead(ahead, unit, position)
        ahead.claim = claim
        claim.ahead = ahead

    # --- orders -------------------------------------------------------------------
    def _review(self) -> None:
        s, big_s = self._levels
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
            if claim.ahead is not None:  # it waited for its own spare: that one goes free
                claim.ahead.claim = None
                claim.ahead.state = "released"
                self.kept_on_order -= 1
                self.on_order += 1
                claim.ahead = None
            else:
                self.backorders.remove(claim)
            self._fill(claim)
        self._serve_backorders()

    def _serve_backorders(self) -> None:
        while self.on_hand > 0 and self.backorders:
            self._fill(self.backorders.popleft())

    def finish(self, horizon_h: float) -> StoreStats:
        """Close the time averages at the horizon and return the counters."""
        self._accrue()
        st = self.stats
        st.on_hand_end = self.on_hand + self.kept
        st.backorders_end = len(self.backorders)
        st.on_order_end = self.on_order + self.kept_on_order
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


class _EarlyArrival(simpy.Event):
    """A timeout processed before the other events of its instant (SimPy's URGENT priority):
    a spare ordered ahead that arrives at the moment its change falls due is in time."""

    def __init__(self, env: simpy.Environment, delay_h: float) -> None:
        super().__init__(env)
        self._ok = True
        self._value = None
        env.schedule(self, URGENT, delay_h)


class _AheadOrder:
    """Callback placing the order for an announced planned change on its order date."""

    __slots__ = ("store", "ahead", "unit", "position")

    def __init__(self, store: SpareStore, ahead: Ahead, unit: str, position: str) -> None:
        self.store = store
        self.ahead = ahead
        self.unit = unit
        self.position = position

    def __call__(self, _event: Any) -> None:
        self.store._order_ahead(self.ahead, self.unit, self.position)


class _AheadDelivery:
    """Callback delivering a spare ordered ahead."""

    __slots__ = ("store", "ahead")

    def __init__(self, store: SpareStore, ahead: Ahead) -> None:
        self.store = store
        self.ahead = ahead

    def __call__(self, _event: Any) -> None:
        self.store._deliver_ahead(self.ahead)


def build_stores(scenario: Scenario, env: Any, streams: Streams, book: YearBook,
                 log: Log | None) -> dict[str, SpareStore | UnlimitedSupply]:
    """The store of every bearing kind of ``scenario``, in bearing-id order.

    A bearing with a stock entry gets a :class:`SpareStore` drawing its lead
    times from its own streams (index = its place in the sorted ids); the rest
    unlimited supply. ``env`` is the clock the stores run on: SimPy's
    environment, or anything with ``now`` and ``timeout(delay_h)`` whose
    callbacks are fired at ``now + delay_h`` (:mod:`fleetsim.sim.coupled`).
    """
    bearing_ids = sorted(
        {p.bearing_id for m in scenario.machines for p in m.positions} | set(scenario.stores)
    )
    stores: dict[str, SpareStore | UnlimitedSupply] = {}
    for b, bid in enumerate(bearing_ids):
        stock = scenario.stores.get(bid)
        if stock is None:
            stores[bid] = UnlimitedSupply(bid, env, book)
        else:
            emergency = streams.bearing(b, emergency=True) if stock.emergency_lead_time else None
            stores[bid] = SpareStore(env, bid, stock, streams.bearing(b), emergency, log, book)
    return stores


def store_counts(stats: dict[str, StoreStats]) -> dict[str, int]:
    """The tally's store counts (``stockouts``, ``orders``, ``emergency_orders``), summed."""
    return {name: sum(getattr(s, name) for s in stats.values())
            for name in ("stockouts", "orders", "emergency_orders")}


def bearing_tallies(stats: dict[str, StoreStats]) -> dict[str, BearingTally]:
    """One :class:`~fleetsim.sim.tally.BearingTally` per store: issues and fill rates.

    The stock fill rate leaves out the planned demands met by their own spare
    ordered ahead (and their stock-outs).
    """
    return {
        b: BearingTally(issued=float(st.issued),
                        fill_rate=1.0 - st.stockouts / st.demands if st.demands else 1.0,
                        stock_demands=float(st.demands - st.own_spare),
                        stock_fill_rate=(1.0 - (st.stockouts - st.own_late) / (st.demands - st.own_spare)
                                         if st.demands > st.own_spare else 1.0))
        for b, st in stats.items()
    }
