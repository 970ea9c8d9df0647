"""Dask clusters for studies: one connection, and one local cluster, per study.

A study that names a cluster (``cluster="local"`` or a scheduler address) runs
its replications as Dask tasks. :func:`study_cluster` opens the cluster once
and every variant of the study reuses it: a ``"local"`` cluster
(``distributed.LocalCluster``, one single-threaded worker process per
``workers``) is started once and closed when the study ends; an address
connects to a scheduler that is already running, with its own workers, and
leaves it running.

An address is ``tcp://HOST:PORT``, ``tls://HOST:PORT`` or ``HOST:PORT``, as
``dask scheduler`` prints it. Dask (``distributed``) is imported only here
and only when a cluster is asked for; it comes with the ``cluster`` extra.
"""

from __future__ import annotations

import logging
import re
import warnings
from collections.abc import Iterator
from contextlib import contextmanager
from typing import TYPE_CHECKING, Any

from fleetsim.errors import InputError

if TYPE_CHECKING:
    from distributed import Client

#: The ``cluster`` value that starts a Dask cluster on this machine for the study.
LOCAL = "local"
#: How long to wait for a scheduler given by address before giving up (seconds).
CONNECT_TIMEOUT_S = 10

_ADDRESS = re.compile(
    r"^(?:(?:tcp|tls)://)?(?:[A-Za-z0-9](?:[A-Za-z0-9.-]*[A-Za-z0-9])?|\[[0-9A-Fa-f:.]+\]):(\d{1,5})$"
)
_EXPECTED = "expected 'local' or a Dask scheduler address such as tcp://127.0.0.1:8786"


def check_cluster(cluster: object, where: str = "cluster") -> str:
    """The cluster setting, or an :class:`InputError` at ``where``.

    Parameters
    ----------
    cluster
        ``"local"`` or a scheduler address (``tcp://HOST:PORT``,
        ``tls://HOST:PORT`` or ``HOST:PORT``, port 1–65535).
    where
        What the user wrote it in (``"--cluster"`` on the command line).

    Returns
    -------
    str
        The setting, unchanged.
    """
    if not isinstance(cluster, str):
        raise InputError(where, f"{_EXPECTED}, got {cluster!r}")
    if cluster == LOCAL:
        return cluster
    m = _ADDRESS.match(cluster)
    if m is None or not 1 <= int(m.group(1)) <= 65535:
        raise InputError(where, f"{_EXPECTED}, got {cluster!r}")
    return cluster


class DaskCluster:
    """An open Dask client, and the local cluster behind it if this study started one.

    Made by :func:`study_cluster`; pass it as ``cluster`` to
    :func:`fleetsim.study.run_study`, :func:`~fleetsim.study.compare` or
    :func:`~fleetsim.study.run_replications` to run several studies on it.
    """

    def __init__(self, client: Client, local: Any | None, setting: str) -> None:
        self.client = client
        self.local = local
        self.setting = setting

    @property
    def address(self) -> str:
        """The scheduler's address."""
        return str(self.client.scheduler.address)

    def close(self) -> None:
        """Close the connection, and the local cluster if this study started it."""
        try:
            self.client.close()
        finally:
            if self.local is not None:
                self.local.close()


def open_cluster(cluster: str, workers: int = 1, where: str = "cluster") -> DaskCluster:
    """Start a local Dask cluster of ``workers`` processes, or connect to a scheduler.

    Raises
    ------
    InputError
        At ``where``: a malformed setting, Dask not installed, or no scheduler
        answering at the address within :data:`CONNECT_TIMEOUT_S` seconds.
    """
    check_cluster(cluster, where)
    try:
        from distributed import Client, LocalCluster
    except ImportError:
        raise InputError(
            where, "Dask is not installed; install fleetsim with the 'cluster' extra"
        ) from None
    if cluster == LOCAL:
        with warnings.catch_warnings():
            # Without a dashboard the scheduler still opens an HTTP port (8787 first, any
            # free port next): that another program holds 8787 is no news to the user.
            warnings.filterwarnings("ignore", "Port .* is already in use", UserWarning)
            local = LocalCluster(
                n_workers=workers, threads_per_worker=1, processes=True, dashboard_address=None,
                silence_logs=logging.ERROR,  # no log lines on the user's terminal
            )
        try:
            return DaskCluster(Client(local), local, cluster)
        except BaseException:
            local.close()
            raise
    try:
        client = Client(cluster, timeout=f"{CONNECT_TIMEOUT_S}s")
    except OSError as exc:  # refused, unknown host, or timed out (TimeoutError is an OSError)
        raise InputError(
            where, f"cannot reach the Dask scheduler at {cluster!r} ({type(exc).__name__}: {exc})"
        ) from None
    return DaskCluster(client, None, cluster)


@contextmanager
def study_cluster(
    cluster: str | DaskCluster | None, workers: int = 1, where: str = "cluster"
) -> Iterator[DaskCluster | None]:
    """The cluster of one study, open for the ``with`` block.

    None stays None (no Dask); an open :class:`DaskCluster` is used as it is
    and left open (its owner closes it); a setting is opened here and closed
    at the end of the block.
    """
    if cluster is None or isinstance(cluster, DaskCluster):
        yield cluster
        return
    opened = open_cluster(cluster, workers, where)
    try:
        yield opened
    finally:
        opened.close()
