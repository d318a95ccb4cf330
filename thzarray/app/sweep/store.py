"""Finished sweep tasks on disk: one part file per task, and the gathered Dataset.

Each finished task is kept as one small ``.npz`` file under ``<out>/<name>.parts/``,
written atomically and named by the task's slot (:class:`~thzarray.app.sweep.spec.Task`).
Its header records the task's key (the hash of everything the result depends on) and a
SHA-256 checksum of its names, shapes, types and numbers. A part that is missing is computed;
one that is cut short, of another layout, of another key (an input changed) or whose numbers
no longer match their checksum is *rejected* and computed again.
The parts are gathered into one labelled :class:`xarray.Dataset` (a dimension per varied
key with SI coordinates and units, ``seed`` for Monte-Carlo measures, then the measure's own
dimensions).
"""

from __future__ import annotations

import hashlib
import json
import re
import zipfile
from pathlib import Path

import numpy as np

from thzarray._version import __version__
from thzarray.app.output import atomic_path
from thzarray.app.sweep.spec import PART_FORMAT, Sweep

__all__ = ["gather", "inspect_part", "output_paths", "read_part", "write_part"]


def _slug(name):
    return re.sub(r"[^a-z0-9]+", "_", name.lower()).strip("_") or "sweep"


def output_paths(sweep: Sweep, out_dir) -> tuple[Path, Path]:
    """The gathered netCDF file and the directory of finished parts."""
    out_dir = Path(out_dir)
    slug = _slug(sweep.name)
    return out_dir / f"{slug}.nc", out_dir / f"{slug}.parts"


def _jsonable(obj):
    if isinstance(obj, np.generic):
        return obj.item()
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    raise TypeError(f"attribute value {obj!r} cannot be stored; allowed: numbers, strings")


def _checksum(entries, arrays) -> str:
    """SHA-256 of the variables' description and of every array's type, shape and bytes."""
    h = hashlib.sha256(json.dumps(entries, sort_keys=True, default=_jsonable).encode())
    for a in arrays:
        a = np.ascontiguousarray(a)
        h.update(f"{a.dtype.str}{a.shape}".encode())
        h.update(a.tobytes() if a.dtype.kind != "O" else repr(a.tolist()).encode())
    return h.hexdigest()


def write_part(dataset, path: Path, key: str, task: str):
    """One task's Dataset as .npz: its arrays plus a JSON header of names, dims, attrs, the
    task's key and the checksum of the numbers."""
    arrays, entries = {}, []
    for i, (name, var) in enumerate(dataset.variables.items()):
        arrays[f"a{i}"] = np.asarray(var.values)
        entries.append({"name": name, "dims": list(var.dims), "attrs": dict(var.attrs),
                        "coord": name in dataset.coords})
    header = {"format": PART_FORMAT, "key": key, "task": task, "variables": entries,
              "checksum": _checksum(entries, arrays.values())}
    arrays["header"] = np.array(json.dumps(header, default=_jsonable))
    with atomic_path(path, force=True) as tmp, open(tmp, "wb") as fh:
        np.savez(fh, **arrays)


def inspect_part(path: Path, key: str):
    """(status, Dataset or None) of a task's part: status ``"missing"`` (no file),
    ``"rejected"`` (unreadable, cut short, of another layout, recorded for other inputs, or
    numbers that do not match their checksum) or ``"ok"``."""
    import xarray as xr

    if not Path(path).is_file():
        return "missing", None
    try:
        with open(path, "rb") as fh, np.load(fh, allow_pickle=False) as npz:
            header = json.loads(str(npz["header"]))
            if header.get("key") != key or header.get("format") != PART_FORMAT:
                return "rejected", None
            items = [(e, npz[f"a{i}"]) for i, e in enumerate(header["variables"])]
    except (OSError, ValueError, KeyError, TypeError, AttributeError, EOFError,
            zipfile.BadZipFile):
        return "rejected", None  # cut short or of another layout: computed again
    entries = [e for e, _ in items]
    if header.get("checksum") != _checksum(entries, [a for _, a in items]):
        return "rejected", None
    try:
        coords = {e["name"]: (e["dims"], a, e["attrs"]) for e, a in items if e["coord"]}
        data = {e["name"]: (e["dims"], a, e["attrs"]) for e, a in items if not e["coord"]}
        return "ok", xr.Dataset(data, coords=coords)
    except (KeyError, TypeError, ValueError):
        return "rejected", None


def read_part(path: Path, key: str):
    """The Dataset of a finished task, or None when missing or rejected (:func:`inspect_part`)."""
    return inspect_part(path, key)[1]


def gather(sweep: Sweep, parts: Path, tasks=None):
    """Stack the finished parts of a sweep into one labelled Dataset (all must exist).

    Returns
    -------
    xarray.Dataset
        Each measure variable has dimensions (varied keys..., ``seed`` if the measure runs
        per seed, the measure's own dimensions).
    """
    import xarray as xr

    tasks = list(sweep.tasks()) if tasks is None else tasks
    seed_pos = {s: i for i, s in enumerate(sweep.seeds)}
    arrays, dims, attrs, coords, owner, expected = {}, {}, {}, {}, {}, {}
    for task in tasks:
        part = read_part(parts / f"{task.slot}.npz", task.key)
        if part is None:
            raise ValueError(f"part of task ({sweep.describe(task)}) is missing from "
                             f"{str(parts)!r}; allowed: run the sweep to finish it")
        seeded = task.seed is not None
        where = task.index + ((seed_pos[task.seed],) if seeded else ())
        for name, coord in part.coords.items():
            if name not in coords:
                coords[name] = coord
            elif not np.array_equal(coords[name].values, coord.values):
                raise ValueError(f"measure {task.measure!r} at ({sweep.describe(task)}) gives "
                                 f"coordinate {name!r} other values than before; allowed: the "
                                 "same coordinates at every point")
        names = expected.setdefault(task.measure, set(part.data_vars))
        if set(part.data_vars) != names:
            raise ValueError(f"measure {task.measure!r} at ({sweep.describe(task)}) gives "
                             f"variables {sorted(part.data_vars)}, before {sorted(names)}; "
                             "allowed: the same variables at every point")
        for name, var in part.data_vars.items():
            if owner.setdefault(name, task.measure) != task.measure:
                raise ValueError(f"variable {name!r} is made by measures {owner[name]!r} and "
                                 f"{task.measure!r}; allowed: one measure per variable name")
            if name not in arrays:
                lead = sweep.shape + ((len(sweep.seeds),) if seeded else ())
                arrays[name] = np.zeros(lead + var.shape, dtype=var.dtype)
                axis_dims = tuple(a.key for a in sweep.axes) + (("seed",) if seeded else ())
                dims[name] = axis_dims + var.dims
                attrs[name] = dict(var.attrs)
            arrays[name][where] = var.values
    for axis in sweep.axes:
        coords[axis.key] = (axis.key, axis.values,
                            {"units": axis.unit, "long_name": axis.doc or axis.key,
                             "key": axis.key})
    if any("seed" in d for d in dims.values()):
        coords["seed"] = ("seed", np.array(sweep.seeds, dtype=np.int64),
                          {"long_name": "seed of numpy.random.default_rng"})
    attrs_ds = {"sweep": sweep.name, "description": sweep.description,
                "design": sweep.design.name,
                "measures": ", ".join(m.name for m, _ in sweep.measures),
                "thzarray_version": __version__, "source": "thzarray parameter sweep"}
    for measure, options in sweep.measures:
        for key, value in options.items():
            if value is not None:
                attrs_ds[f"{measure.name}.{key}"] = value
    return xr.Dataset({n: (dims[n], arrays[n], attrs[n]) for n in arrays}, coords=coords,
                      attrs=attrs_ds)
