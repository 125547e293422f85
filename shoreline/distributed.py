"""The time reduction on Dask: the table tasks run on a cluster, their sums come back in order.

The tables of :mod:`shoreline.reduce` are sums over time per wave point; the record is cut
into fixed time chunks and each task sums the chunk of a block of wave points
(:data:`shoreline.reduce.TIME_CHUNK_STEPS` steps, the same boundaries wherever it runs). This
module only lends reduce.py a *mapper* that runs those tasks on ``dask.distributed``:
scheduling, moving the data and the results, restarting a worker that dies and running its
tasks again are Dask's. The sums are added in the tasks' order where the run started, so a
run on a cluster gives the same floats as one in a single process (byte-identical
``transects.csv``), on workers of the same kind of machine and numpy.

Three ways to run (``shoreline run``):

- neither ``--workers`` nor ``--scheduler`` (nor ``[run] scheduler``): in this process, no Dask
  needed;
- ``--workers N``: a local cluster of N worker processes (one thread each) for this run;
- ``--scheduler ADDRESS`` or ``[run] scheduler``: an existing cluster; its workers need this
  package installed and the record's files at the same paths.

Dask is an optional extra (``pip install 'longshore-screen[dask]'``): a plain install stays
lean, and only national or regional studies need it.
"""

from __future__ import annotations

import logging
from collections.abc import Callable, Iterator, Sequence
from contextlib import contextmanager
from typing import Any

from shoreline.errors import ClusterError, one_line

__all__ = ["DEFAULT_TIMEOUT_S", "DaskMapper", "cluster"]

#: Default wait for an existing scheduler to answer [s] (``[run] scheduler_timeout_s``).
DEFAULT_TIMEOUT_S = 10.0

_INSTALL = "pip install 'longshore-screen[dask]'"


class DaskMapper:
    """A mapper for :mod:`shoreline.reduce` that runs the tasks on a Dask client.

    ``mapper(func, tasks)`` submits every task at once (Dask schedules them over the workers,
    earlier tasks first) and yields the results in the tasks' order, releasing each from the
    cluster once it is taken; the caller adds them in that order. A worker that dies is
    replaced and its tasks run again by Dask itself (up to ``distributed.scheduler.allowed-
    failures`` times per task); past that, or if the cluster goes away, the run stops with a
    :class:`shoreline.errors.ClusterError`.

    Attributes
    ----------
    client : distributed.Client
    threads_per_task : int
        Threads a task uses for its own chunks: 1, as each worker runs one task per thread.
    """

    threads_per_task = 1

    def __init__(self, client: Any):
        self.client = client

    def __call__(self, func: Callable[[Any], Any], tasks: Sequence[Any]) -> Iterator[Any]:
        """Yield ``func(task)`` for every task, in order, computed on the cluster."""
        from distributed import KilledWorker

        futures = self.client.map(func, list(tasks), pure=False)
        try:
            for future in futures:
                result = future.result()
                future.release()
                yield result
        except KilledWorker as exc:
            raise ClusterError(
                f"a Dask worker died while running the time reduction, and again on every "
                f"retry ({one_line(exc)}); the workers may be short of memory: fewer --workers "
                "or a smaller [waves] chunk_steps"
            ) from None
        except (OSError, TimeoutError) as exc:
            raise ClusterError(f"lost the Dask cluster during the run ({one_line(exc)})") from None
        finally:
            pending = [f for f in futures if not f.done()]
            if pending:
                self.client.cancel(pending)

    def __repr__(self) -> str:
        return f"DaskMapper({self.client.scheduler.address})"


@contextmanager
def cluster(
    workers: int | None = None,
    scheduler: str | None = None,
    timeout_s: float = DEFAULT_TIMEOUT_S,
) -> Iterator[DaskMapper | None]:
    """The mapper of a run: None in-process, or one on a local or an existing Dask cluster.

    Parameters
    ----------
    workers : int, optional
        Start a local cluster of this many worker processes (one thread each) for the run.
    scheduler : str, optional
        Address of an existing scheduler (``tcp://host:8786``); wins over ``workers``.
    timeout_s : float
        How long to wait for the scheduler to answer [s].

    Raises
    ------
    ClusterError
        If Dask is not installed, the scheduler does not answer within ``timeout_s``, or the
        local cluster cannot start.
    """
    if not workers and not scheduler:
        yield None
        return
    try:
        from distributed import Client, LocalCluster
    except ImportError:
        what = "--scheduler" if scheduler else "--workers"
        raise ClusterError(f"{what} runs on Dask, which is not installed: {_INSTALL}") from None
    local = None
    try:
        if scheduler:
            client = Client(scheduler, timeout=f"{timeout_s}s", set_as_default=False)
        else:
            local = LocalCluster(
                n_workers=int(workers),
                threads_per_worker=1,
                processes=True,
                dashboard_address=None,
                silence_logs=logging.ERROR,
            )
            client = Client(local, set_as_default=False)
    except (OSError, TimeoutError, ValueError) as exc:
        if local is not None:
            local.close()
        if scheduler:
            raise ClusterError(
                f"cannot reach the Dask scheduler at {scheduler!r} within {timeout_s:g} s "
                f"({one_line(exc)}); check the address and that the scheduler is running, or "
                "run without --scheduler"
            ) from None
        raise ClusterError(f"cannot start a local Dask cluster ({one_line(exc)})") from None
    try:
        yield DaskMapper(client)
    finally:
        client.close()
        if local is not None:
            local.close()
