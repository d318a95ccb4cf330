"""Running a sweep: serially, or on dask.distributed (a local cluster on 127.0.0.1 or a
running scheduler), keeping every finished task and gathering the results.

A sweep that was interrupted resumes where it stopped; one that is extended (more values)
reuses the points it already has. A part is reused only when it was recorded for exactly the
task's inputs (design, the files it refers to, measure, options, seed, version) and its
numbers match their checksum; otherwise it is rejected and computed again. The result says
how many parts were reused, rejected and computed.
"""

from __future__ import annotations

import sys
from contextlib import contextmanager, nullcontext
from dataclasses import dataclass
from pathlib import Path

from thzarray.app.design import DesignError, parse_design
from thzarray.app.netcdf import write_netcdf
from thzarray.app.output import check_writable
from thzarray.app.sweep.spec import Sweep
from thzarray.app.sweep.store import gather, inspect_part, output_paths, write_part

__all__ = ["SweepResult", "run_serial", "run_sweep"]


@dataclass(frozen=True, eq=False)
class SweepResult:
    """A finished sweep: the gathered Dataset, where it was written, what was (re)used.

    ``computed`` counts every task computed in this run, ``rejected`` those of them whose
    part existed but was recorded for other inputs or failed its checksum (recomputed),
    ``reused`` the parts taken as they were.
    """

    dataset: object
    path: Path
    parts: Path
    computed: int
    reused: int
    rejected: int = 0

    def summary(self) -> dict:
        ds = self.dataset
        return {"sweep": ds.attrs["sweep"], "file": str(self.path), "parts": str(self.parts),
                "tasks": self.computed + self.reused, "computed": self.computed,
                "reused": self.reused, "rejected": self.rejected,
                "recomputed": self.rejected, "dims": dict(ds.sizes),
                "variables": sorted(ds.data_vars)}

    def describe(self) -> str:
        """One line: tasks, reused, rejected (recomputed) and newly computed parts."""
        return (f"{self.computed + self.reused} tasks: {self.reused} reused, {self.rejected} "
                f"rejected and recomputed, {self.computed - self.rejected} computed new")


@dataclass(frozen=True)
class _Failure:
    problems: tuple


def _compute(data, path, compute, options, seed):
    """Run one task (on a worker); bad input comes back as a _Failure, not an exception."""
    try:
        return compute(parse_design(data, path), seed, **options)
    except DesignError as exc:
        return _Failure(tuple(exc.problems))
    except ValueError as exc:
        return _Failure(tuple(str(exc).splitlines()))


def _serial(sweep, pending):
    for task in pending:
        measure, options = sweep.choice(task.measure)
        yield task, _compute(task.data, sweep.design.path, measure.compute, options, task.seed)


@contextmanager
def _client(scheduler, n_workers, connect_timeout):
    import logging

    from distributed import Client, LocalCluster

    if scheduler is not None:
        try:
            client = Client(scheduler, timeout=connect_timeout)
        except (OSError, TypeError, ValueError) as exc:
            raise ValueError(f"scheduler = {scheduler!r}: cannot connect ({exc}); allowed: the "
                             "address of a running dask scheduler, e.g. "
                             "tcp://127.0.0.1:8786") from None
        with client:
            yield client
        return
    # Loopback only, dashboard on a free loopback port; one thread per worker process and
    # one numba thread each, so that n_workers processes use n_workers cores.
    with LocalCluster(n_workers=n_workers, threads_per_worker=1, processes=True,
                      host="127.0.0.1", dashboard_address="127.0.0.1:0",
                      silence_logs=logging.ERROR, env={"NUMBA_NUM_THREADS": "1"}) as cluster, \
            Client(cluster) as client:
        yield client


@contextmanager
def _distributed(sweep, pending, scheduler, n_workers, connect_timeout):
    from distributed import as_completed

    with _client(scheduler, n_workers, connect_timeout) as client:
        futures = {}
        for task in pending:
            measure, options = sweep.choice(task.measure)
            fut = client.submit(_compute, task.data, sweep.design.path, measure.compute,
                                options, task.seed,
                                key=f"thzarray-sweep-{task.key}", pure=False)
            futures[fut] = task

        def results():
            for fut in as_completed(list(futures)):
                yield futures.pop(fut), fut.result()

        try:
            yield results()
        finally:
            client.cancel(list(futures))


def _progress(total, initial, name, enabled):
    from tqdm import tqdm

    return tqdm(total=total, initial=initial, desc=name, unit="task", file=sys.stderr,
                disable=not (enabled and sys.stderr.isatty()))


def _execute(sweep, out_dir, force, recompute, progress, runner):
    final, parts = output_paths(sweep, out_dir)
    check_writable(final, force)  # refuse before computing anything
    tasks = list(sweep.tasks())
    status = {t.slot: ("missing" if recompute else inspect_part(parts / f"{t.slot}.npz",
                                                                 t.key)[0]) for t in tasks}
    pending = [t for t in tasks if recompute or status[t.slot] != "ok"]
    rejected = sum(1 for t in pending if status[t.slot] == "rejected")
    reused = len(tasks) - len(pending)
    run = runner(pending) if pending else nullcontext(())
    with _progress(len(tasks), reused, sweep.name, progress) as bar, run as results:
        parts.mkdir(parents=True, exist_ok=True)
        for task, out in results:
            if isinstance(out, _Failure):
                raise DesignError([f"task ({sweep.describe(task)}): {p}" for p in out.problems])
            _check_result(sweep, task, out)
            write_part(out, parts / f"{task.slot}.npz", task.key, sweep.describe(task))
            bar.update(1)
    dataset = gather(sweep, parts, tasks)
    write_netcdf(dataset, final, force)
    return SweepResult(dataset, final, parts, len(pending), reused, rejected)


def _check_result(sweep, task, out):
    import xarray as xr

    if not isinstance(out, xr.Dataset):
        raise TypeError(f"measure {task.measure!r} returned {type(out).__name__}; allowed: an "
                        "xarray.Dataset")
    taken = {a.key for a in sweep.axes} | {"seed"}
    clash = taken & (set(out.dims) | set(out.variables))
    if clash:
        raise ValueError(f"measure {task.measure!r} uses the name(s) {sorted(clash)} of the "
                         "sweep's own dimensions; allowed: other names")


def run_serial(sweep: Sweep, out_dir, *, force: bool = False, recompute: bool = False,
               progress: bool = True) -> SweepResult:
    """Run a sweep in this process, one task after another (the reference for run_sweep).

    Parameters and returns as for :func:`run_sweep`, without the cluster.
    """
    return _execute(sweep, out_dir, force, recompute, progress,
                    lambda pending: nullcontext(_serial(sweep, pending)))


def run_sweep(sweep: Sweep, out_dir, *, scheduler: str | None = None, n_workers: int = 2,
              force: bool = False, recompute: bool = False, progress: bool = True,
              connect_timeout: float = 10.0) -> SweepResult:
    """Run a sweep on dask.distributed, keeping every finished task, and gather the results.

    Parameters
    ----------
    sweep : Sweep
    out_dir : path
        Directory of ``<name>.nc`` and ``<name>.parts/``.
    scheduler : str, optional
        Address of a running dask scheduler (e.g. ``tcp://10.0.0.5:8786``); by default a
        local cluster of ``n_workers`` processes on 127.0.0.1 is started and closed.
    n_workers : int
        Worker processes of the local cluster, 1 to 256.
    force : bool
        Overwrite an existing ``<name>.nc``. Finished parts are reused either way.
    recompute : bool
        Compute every task again, replacing its part.
    progress : bool
        Show a progress bar of finished tasks on stderr when it is a terminal.
    connect_timeout : float
        Seconds to wait for the scheduler given by ``scheduler``.

    Returns
    -------
    SweepResult
        ``dataset``: variables of shape (axis values..., [seed], measure dims...), one
        coordinate per varied key (SI values, ``units`` attribute).
    """
    if scheduler is None and (not isinstance(n_workers, int) or isinstance(n_workers, bool)
                              or not 1 <= n_workers <= 256):
        raise ValueError(f"n_workers = {n_workers!r} is not allowed; allowed: an integer from "
                         "1 to 256")
    return _execute(sweep, out_dir, force, recompute, progress,
                    lambda pending: _distributed(sweep, pending, scheduler, n_workers,
                                                 connect_timeout))
