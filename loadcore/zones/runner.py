"""Where zone work runs: a local Dask cluster, an existing Dask scheduler, or this process.

The work is a list of independent tasks (one per zone), mapped with ``distributed.Client.map``
and gathered as they finish, so a progress callback moves with every zone. Every task runs with
one BLAS thread (threadpoolctl), in the workers and in this process alike, and the local
cluster starts one single-threaded worker process per core with the BLAS thread variables set
to 1 before the workers start: the matrices of one zone are small, several BLAS pools on few
cores slow each other down, and one thread per task is what makes the results the same bit for
bit wherever they ran.

``distributed`` is imported only when a cluster is used, so ``import loadcore`` stays light.
"""

from __future__ import annotations

import logging
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Any

from loadcore.checks import machine_cores
from loadcore.errors import InputError, clip, quote

log = logging.getLogger(__name__)

Progress = Callable[[int, int, str], None]

#: Environment of a local cluster's worker processes: one BLAS thread each, and one process
#: for any order search inside a zone's fit (the zones are the parallel work).
WORKER_ENV = {
    "OMP_NUM_THREADS": "1",
    "OPENBLAS_NUM_THREADS": "1",
    "MKL_NUM_THREADS": "1",
    "LOADCORE_WORKERS": "1",
}
#: Seconds to wait for a scheduler to answer before giving up.
CONNECT_TIMEOUT_S = 20


@dataclass(frozen=True)
class ClusterChoice:
    """Where to run.

    Parameters
    ----------
    kind : {"local", "address", "none"}
        A local cluster started for the run, an existing scheduler, or this process.
    address : str
        The scheduler's address (``tcp://host:8786``) for ``kind="address"``.
    workers : int
        Local cluster: worker processes (0 = one per core, at most the machine's cores).
    """

    kind: str = "local"
    address: str = ""
    workers: int = 0

    def __post_init__(self) -> None:
        if self.kind not in ("local", "address", "none"):
            raise InputError(
                f"Unknown cluster kind {quote(self.kind)}",
                where="cluster",
                fix="Use 'local', 'none' or a scheduler address",
            )
        if self.kind == "address" and not self.address:
            raise InputError(
                "No scheduler address given", where="--cluster", fix="Give tcp://HOST:PORT"
            )
        cores = machine_cores()
        if not isinstance(self.workers, int) or not 0 <= self.workers <= cores:
            raise InputError(
                f"A local cluster may have 0 to {cores} worker processes on this machine, got "
                f"{quote(self.workers)}",
                where="cluster workers",
                fix=f"Give at most {cores} (0 = one per core)",
            )

    def describe(self) -> str:
        """Where the work runs, in words."""
        if self.kind == "none":
            return "in this process"
        if self.kind == "address":
            return f"on the Dask scheduler at {self.address}"
        return f"on a local Dask cluster of {self.local_workers()} worker process(es)"

    def local_workers(self) -> int:
        return self.workers or machine_cores()


def parse_cluster(text: str | None) -> ClusterChoice:
    """``--cluster``: absent or ``local`` (a local cluster), ``none`` (this process), or a
    scheduler address such as ``tcp://10.0.0.5:8786`` (``host:port`` gets ``tcp://``)."""
    if text is None or not str(text).strip() or str(text).strip().lower() == "local":
        return ClusterChoice("local")
    value = str(text).strip()
    if value.lower() == "none":
        return ClusterChoice("none")
    if "://" not in value:
        if ":" not in value:
            raise InputError(
                f"{quote(value)} is not a scheduler address",
                where="--cluster",
                fix="Give tcp://HOST:PORT (e.g. tcp://10.0.0.5:8786), 'local' or 'none'",
            )
        value = "tcp://" + value
    return ClusterChoice("address", address=value)


def _limited(fn: Callable[[Any], Any], item: Any) -> Any:
    """``fn(item)`` with one BLAS thread (the task every worker runs)."""
    from loadcore.model.workers import one_blas_thread

    with one_blas_thread():
        return fn(item)


def _worker_versions() -> dict[str, str]:
    """Versions of the libraries that decide a fit's numbers, as a worker has them."""
    import numpy
    import pandas
    import scipy
    import statsmodels

    from loadcore.version import __version__

    return {
        "loadcore": __version__,
        "numpy": numpy.__version__,
        "pandas": pandas.__version__,
        "scipy": scipy.__version__,
        "statsmodels": statsmodels.__version__,
    }


def _peak_memory_mb() -> float:
    """This process's peak resident memory, MB (Linux reports kilobytes)."""
    import resource

    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


@dataclass(frozen=True)
class RunReport:
    """How a run went: where it ran, how long the whole took (wall seconds), and the highest
    peak resident memory of a worker process (MB; this process's when run in-process)."""

    where: str
    wall_seconds: float
    workers: int
    worker_peak_mb: float = 0.0


def run_tasks(
    fn: Callable[[Any], Any],
    items: Sequence[Any],
    choice: ClusterChoice,
    *,
    progress: Progress | None = None,
    label: Callable[[Any], str] = str,
) -> tuple[list[Any], RunReport]:
    """``fn`` over ``items`` where ``choice`` says; results in the order of ``items``.

    ``fn`` is a module-level function (the workers import it by name) that returns its result
    rather than raising for a problem in one item. A task that is lost all the same (a worker
    that died) comes back as the exception instance, for the caller to report.

    Raises
    ------
    InputError
        When the scheduler cannot be reached, or its workers run other versions of loadcore or
        of the numerical libraries (their results would not match this machine's).
    """
    started = time.perf_counter()
    items = list(items)
    total = len(items)
    if progress:
        progress(0, total, "")
    if choice.kind == "none":
        out = []
        for i, item in enumerate(items):
            out.append(_limited(fn, item))
            if progress:
                progress(i + 1, total, label(item))
        wall = time.perf_counter() - started
        return out, RunReport(choice.describe(), wall, 1, _peak_memory_mb())
    from distributed import Client, LocalCluster, as_completed

    cluster = None
    try:
        if choice.kind == "local":
            cluster = LocalCluster(
                n_workers=choice.local_workers(),
                threads_per_worker=1,
                processes=True,
                host="127.0.0.1",
                dashboard_address=None,
                silence_logs=logging.ERROR,
                env=dict(WORKER_ENV),
            )
            client = Client(cluster, set_as_default=False)
        else:
            try:
                client = Client(choice.address, timeout=CONNECT_TIMEOUT_S, set_as_default=False)
            except (OSError, TimeoutError, ValueError) as exc:
                raise InputError(
                    f"The Dask scheduler did not answer ({clip(exc)})",
                    where=f"--cluster {choice.address}",
                    fix="Check the address and that the scheduler is running, or use --cluster "
                    "local",
                ) from None
        try:
            workers = len(client.scheduler_info().get("workers", {}))
            if choice.kind == "address":
                _check_versions(client, choice.address)
            futures = client.map(_limited, [fn] * total, items, pure=False)
            index = {f.key: i for i, f in enumerate(futures)}
            out: list[Any] = [None] * total
            done = 0
            with client.as_current():
                for future in as_completed(futures):
                    i = index[future.key]
                    try:
                        out[i] = future.result()
                    except Exception as exc:  # a lost task: the caller reports it for its item
                        log.warning("task for %s was lost: %s", label(items[i]), exc)
                        out[i] = exc
                    done += 1
                    if progress:
                        progress(done, total, label(items[i]))
            wall = time.perf_counter() - started
            try:
                peak = max(client.run(_peak_memory_mb).values(), default=0.0)
            except Exception:  # memory is a figure for the record, never a reason to fail
                peak = 0.0
        finally:
            client.close()
    finally:
        if cluster is not None:
            cluster.close()
    return out, RunReport(choice.describe(), wall, workers, float(peak))


def _check_versions(client: Any, address: str) -> None:
    here = _worker_versions()
    try:
        seen = client.run(_worker_versions)
    except Exception as exc:  # the workers cannot import loadcore, or died
        raise InputError(
            f"The Dask workers cannot run loadcore ({clip(exc)})",
            where=f"--cluster {address}",
            fix="Install this version of loadcore (pip install loadcore==VERSION) on every "
            "worker machine and restart the workers",
        ) from None
    if not seen:
        raise InputError(
            "The Dask scheduler has no workers",
            where=f"--cluster {address}",
            fix="Start workers (dask worker ADDRESS) on machines with loadcore installed",
        )
    for worker, versions in seen.items():
        differ = [
            f"{k} {versions.get(k)} (here {v})" for k, v in here.items() if versions.get(k) != v
        ]
        if differ:
            raise InputError(
                f"A worker runs other versions: {', '.join(differ)}",
                where=f"worker {clip(worker)}",
                fix="Install the same loadcore and library versions on every worker",
            )
