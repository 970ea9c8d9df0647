"""The ``[policy]`` table and per-position ``policy = {...}`` overrides.

Each kind takes only its own keys (an age policy with ``inspection_every`` is an
error rather than silently ignored):

* ``run-to-failure``: nothing else.
* ``age``: ``interval`` (operating hours since the last renewal), optional
  ``opportunistic_share``.
* ``block``: ``interval`` (calendar time), ``block_scope`` (``"machine"`` or
  ``"position"``), optional ``opportunistic_share`` and ``skip_younger_than``
  (calendar time: the modified block rule, see :class:`~fleetsim.scenario.model.Policy`).
* ``condition``: ``inspection_every`` (calendar time), ``detection``
  (probability per inspection), ``respond_within``.

The P-F interval is not a policy key: it belongs to the failure process and is
given per position, per bearing or in ``[life]`` (``pf_interval``).
"""

from __future__ import annotations

from typing import Any

from fleetsim.scenario.model import Policy
from fleetsim.scenario.reader import Table

#: Policy fields and the keys they are read from.
_FIELD_KEYS = {
    "kind": "kind", "interval_h": "interval", "block_scope": "block_scope",
    "inspection_every_h": "inspection_every", "detection": "detection",
    "respond_within_h": "respond_within", "opportunistic_share": "opportunistic_share",
    "skip_younger_than_h": "skip_younger_than",
}

#: Keys each policy kind takes.
POLICY_KEYS: dict[str, tuple[str, ...]] = {
    "run-to-failure": ("kind",),
    "age": ("kind", "interval", "opportunistic_share"),
    "block": ("kind", "interval", "block_scope", "opportunistic_share", "skip_younger_than"),
    "condition": ("kind", "inspection_every", "detection", "respond_within"),
}
ALL_POLICY_KEYS = tuple(dict.fromkeys(k for keys in POLICY_KEYS.values() for k in keys))


def read_policy(data: Any, path: str, source: str) -> Policy:
    """Validate a policy table found at key path ``path`` of file ``source``."""
    head = Table(data, path, source, ALL_POLICY_KEYS + ("pf_interval",))
    if head.has("pf_interval"):
        raise head.error(
            "pf_interval",
            "the P-F interval belongs to the failure process, not to the policy: give "
            "pf_interval on the position, the [[bearing]] or in [life]",
        )
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
        return t.build(
            Policy, _FIELD_KEYS,
            kind=kind,
            interval_h=t.quantity("interval", "time", positive=True),
            block_scope=t.text("block_scope", "machine", choices=("machine", "position")),
            opportunistic_share=share,
            skip_younger_than_h=t.quantity("skip_younger_than", "time", 0.0),
        )
    if not t.has("inspection_every"):
        raise t.error(
            "inspection_every",
            "missing required key 'inspection_every': a condition policy needs its "
            "inspection interval, e.g. inspection_every = '30 d'",
        )
    return t.build(
        Policy, _FIELD_KEYS,
        kind="condition",
        inspection_every_h=t.quantity("inspection_every", "time", positive=True),
        detection=t.probability("detection", 1.0, what="a detection probability"),
        respond_within_h=t.quantity("respond_within", "time", 0.0),
    )
