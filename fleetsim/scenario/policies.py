"""The ``[policy]`` table and per-position ``policy = {...}`` overrides.

Each kind takes only its own keys (an age policy with ``inspection_every`` is an
error rather than silently ignored):

* ``run-to-failure``: nothing else.
* ``age``: ``interval`` (operating hours since the last renewal), optional
  ``opportunistic_share``.
* ``block``: ``interval`` (calendar time), ``block_scope`` (``"machine"`` or
  ``"position"``), optional ``opportunistic_share``.
* ``condition``: ``inspection_every`` (calendar time), ``pf_interval``
  (duration), ``detection`` (probability per inspection), ``respond_within``.
"""

from __future__ import annotations

from typing import Any

from fleetsim.scenario.model import Policy
from fleetsim.scenario.reader import Table

#: Keys each policy kind takes.
POLICY_KEYS: dict[str, tuple[str, ...]] = {
    "run-to-failure": ("kind",),
    "age": ("kind", "interval", "opportunistic_share"),
    "block": ("kind", "interval", "block_scope", "opportunistic_share"),
    "condition": ("kind", "inspection_every", "pf_interval", "detection", "respond_within"),
}
ALL_POLICY_KEYS = tuple(dict.fromkeys(k for keys in POLICY_KEYS.values() for k in keys))


def read_policy(data: Any, path: str, source: str) -> Policy:
    """Validate a policy table found at key path ``path`` of file ``source``."""
    head = Table(data, path, source, ALL_POLICY_KEYS)
    kind = head.text("kind", choices=POLICY_KEYS)
    takes = POLICY_KEYS[kind]
    for key in head.data:
        if key not in takes:
            others = ", ".join(k for k in takes if k != "kind") or "no other keys"
            raise head.error(key, f"{key!r} does not apply to kind = {kind!r} (it takes {others})")
    t = Table(data, path, source, takes)
    if kind == "run-to-failure":
        return Policy(kind="run-to-failure")
    if kind in ("age", "block"):
        if not t.has("interval"):
            clock = "operating hours" if kind == "age" else "calendar time"
            raise t.error(
                "interval",
                f"missing required key 'interval': {'an' if kind == 'age' else 'a'} {kind} "
                "policy needs its replacement "
                f"interval ({clock}), e.g. interval = '20000 h'",
            )
        share = t.probability("opportunistic_share", None, what="a share of the interval")
        if share is not None and share == 0.0:
            raise t.error("opportunistic_share", "expected a share of the interval > 0, got 0")
        return Policy(
            kind=kind,
            interval_h=t.quantity("interval", "time", positive=True),
            block_scope=t.text("block_scope", "machine", choices=("machine", "position")),
            opportunistic_share=share,
        )
    if not t.has("inspection_every"):
        raise t.error(
            "inspection_every",
            "missing required key 'inspection_every': a condition policy needs its "
            "inspection interval, e.g. inspection_every = '30 d'",
        )
    return Policy(
        kind="condition",
        inspection_every_h=t.quantity("inspection_every", "time", positive=True),
        pf_interval=t.duration("pf_interval", positive=True),
        detection=t.probability("detection", 1.0, what="a detection probability"),
        respond_within_h=t.quantity("respond_within", "time", 0.0),
    )
