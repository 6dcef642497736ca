"""Equation-of-state tables on a grid of the user's choosing, computed on Dask, written as NetCDF or Zarr.

The question this module answers: a group wants every ThermoState field on its
own (log rho, log T) grid, for its own composition and physics options, as a
file its own code can read. ``thermoplane table`` is this module behind the
command line; :mod:`app.cluster` says where the chunks are computed.

The table is an :class:`xarray.Dataset` with coordinates ``log_rho`` and
``log_T`` and one variable per field, each a Dask array of square chunks.
One :func:`dask.array.map_blocks` task per chunk calls
:func:`thermoplane.physics.evaluate` once for every field of that chunk; the
fields are slices of that one result. Writing streams chunk by chunk, so only
the chunks in flight (a few per worker) are ever in memory, whatever the size
of the table.
"""

from __future__ import annotations

import json
import math
import os
import shutil
import uuid
from importlib import metadata

import numpy as np

from ..physics.composition import Composition
from ..physics.eos import FIELD_DESCRIPTIONS, FIELD_UNITS, ThermoState, evaluate, validate_options
from . import cluster

__all__ = ["FIELDS", "DEFAULT_CHUNK", "MAX_POINTS_PER_AXIS", "axis", "build", "write", "version"]

#: Every field a table can hold, in ThermoState order.
FIELDS = tuple(ThermoState.__dataclass_fields__)
#: Points per side of a chunk: 256 x 256 points x 32 fields x 8 bytes = 17 MB per chunk in flight.
DEFAULT_CHUNK = 256
#: Most points along one axis (a 100 000 x 100 000 table would be 2.5 PB).
MAX_POINTS_PER_AXIS = 100_000
_SOURCE = "thermoplane_chunks"
_FORMATS = {".nc": "netcdf", ".nc4": "netcdf", ".zarr": "zarr"}


def version() -> str:
    """The installed Thermoplane version (importlib.metadata), or "unknown" when run from a bare tree."""
    try:
        return metadata.version("thermoplane")
    except metadata.PackageNotFoundError:
        return "unknown"


def axis(name: str, values) -> np.ndarray:
    """An evenly spaced axis from (LO, HI, N) given as text or numbers.

    Raises
    ------
    ValueError
        LO or HI not a finite number, N not a whole number in [1, 100 000], LO >= HI with N > 1,
        or LO != HI with N = 1; the message names the option.
    """
    lo_text, hi_text, n_text = (str(v).strip() for v in values)
    opt = f"--{name.replace('_', '-')}"
    try:
        lo, hi = float(lo_text), float(hi_text)
    except ValueError:
        raise ValueError(f"{opt} LO HI N: LO and HI must be numbers, got {lo_text!r} {hi_text!r}") from None
    if not (math.isfinite(lo) and math.isfinite(hi)):
        raise ValueError(f"{opt} LO HI N: LO and HI must be finite, got {lo_text} {hi_text}")
    try:
        n = int(n_text)
    except ValueError:
        raise ValueError(f"{opt} LO HI N: N must be a whole number of points, got {n_text!r}") from None
    if not 1 <= n <= MAX_POINTS_PER_AXIS:
        raise ValueError(f"{opt} LO HI N: N must be between 1 and {MAX_POINTS_PER_AXIS:,}, got {n}")
    if n == 1 and lo != hi:
        raise ValueError(f"{opt} LO HI N: with N = 1 give LO = HI, got {lo_text} {hi_text}")
    if n > 1 and not lo < hi:
        raise ValueError(f"{opt} LO HI N: LO must be below HI, got {lo_text} {hi_text}")
    return np.linspace(lo, hi, n)


def _block(log_rho, log_T, comp, fields, physics):
    """The fields at one chunk, stacked on a leading axis: shape (len(fields), n_rho, n_T)."""
    state = evaluate(10.0 ** log_rho, 10.0 ** log_T, comp, **physics)
    shape = np.broadcast_shapes(log_rho.shape, log_T.shape)
    return np.stack([np.broadcast_to(np.asarray(getattr(state, f), dtype=float), shape) for f in fields])


def _attr(value):
    return str(value).lower() if isinstance(value, bool) else value


def build(comp: Composition, log_rho, log_T, fields=None, chunk: int = DEFAULT_CHUNK, **physics):
    """The table as a lazy xarray Dataset (nothing is computed until it is written or loaded).

    Parameters
    ----------
    comp : Composition
    log_rho, log_T : array_like
        log10 density (g cm^-3) and temperature (K) of the grid, 1-D each.
    fields : iterable of str, optional
        ThermoState fields to keep (default: all of :data:`FIELDS`).
    chunk : int
        Points per side of a chunk.
    **physics
        Physics options of :func:`thermoplane.physics.evaluate`.

    Returns
    -------
    xarray.Dataset
        Dimensions ``(log_rho, log_T)``; one float64 variable per field with
        ``units`` and ``description`` attributes; global attributes
        ``composition`` (as --mix text), ``mu``, ``mu_e``, ``physics_<option>``
        for every physics option, ``physics`` (all of them as JSON),
        ``thermoplane_version``.

    Raises
    ------
    ValueError
        An unknown field or physics option, a chunk below 1, or a non-1-D axis.
    """
    import dask.array as da
    import xarray as xr

    from .batch import composition_text

    if not isinstance(comp, Composition):
        raise ValueError(f"comp must be a Composition, got {type(comp).__name__}")
    options = validate_options(**physics)
    names = list(FIELDS if fields is None else dict.fromkeys(fields))
    unknown = [f for f in names if f not in FIELDS]
    if unknown or not names:
        raise ValueError(f"unknown field {unknown[0]!r}; fields are {', '.join(FIELDS)}" if unknown
                         else "give at least one field")
    chunk = int(chunk)
    if chunk < 1:
        raise ValueError(f"chunk must be at least 1 point, got {chunk}")
    x = np.asarray(log_rho, dtype=float)
    y = np.asarray(log_T, dtype=float)
    if x.ndim != 1 or y.ndim != 1 or not x.size or not y.size:
        raise ValueError("log_rho and log_T must be non-empty 1-D arrays")
    xs = da.from_array(x, chunks=chunk)[:, None]
    ys = da.from_array(y, chunks=chunk)[None, :]
    stacked = da.map_blocks(_block, xs, ys, comp=comp, fields=tuple(names), physics=options,
                            chunks=((len(names),),) + xs.chunks[:1] + ys.chunks[1:], new_axis=0,
                            dtype=float, meta=np.empty((0, 0, 0)), name=f"thermoplane-eos-{uuid.uuid4().hex}")
    data_vars = {name: (("log_rho", "log_T"), stacked[i],
                        {"units": FIELD_UNITS[name], "description": FIELD_DESCRIPTIONS[name]})
                 for i, name in enumerate(names)}
    coords = {"log_rho": ("log_rho", x, {"units": "log10(g cm^-3)", "description": "log10 of the density"}),
              "log_T": ("log_T", y, {"units": "log10(K)", "description": "log10 of the temperature"})}
    attrs = {"title": "Equation-of-state table computed by Thermoplane",
             "composition": composition_text(comp), "mu": comp.mu, "mu_e": comp.mu_e,
             **{f"physics_{k}": _attr(v) for k, v in options.items()},
             "physics": json.dumps(options), "thermoplane_version": version()}
    ds = xr.Dataset(data_vars, coords=coords, attrs=attrs)
    # write() computes whole chunks of ``stacked``; the variable names tell it whether ds is still this table
    ds.encoding[_SOURCE] = {"array": stacked, "fields": names, "keys": {n: ds[n].data.name for n in names}}
    return ds


def output_format(path: str) -> str:
    """"netcdf" or "zarr" from the output name; ValueError for anything else."""
    ext = os.path.splitext(os.fspath(path).rstrip("/" + os.sep))[1].lower()
    if ext not in _FORMATS:
        raise ValueError(f"the output {os.fspath(path)!r} must end in .nc (NetCDF) or .zarr (Zarr)")
    return _FORMATS[ext]


def _writable(path: str, fmt: str) -> None:
    parent = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(parent):
        raise ValueError(f"cannot write {path!r}: the directory {parent!r} does not exist")
    if fmt == "netcdf" and os.path.isdir(path):
        raise ValueError(f"cannot write {path!r}: it is a directory")
    if fmt == "zarr" and os.path.exists(path):
        marks = (".zgroup", "zarr.json", ".zattrs")
        if not os.path.isdir(path) or not any(os.path.exists(os.path.join(path, m)) for m in marks):
            raise ValueError(f"{path!r} exists and is not a Zarr store; choose another name")


class _NetCDFTarget:
    """A NetCDF file being filled chunk by chunk: coordinates and attributes by xarray, variables by h5netcdf."""

    def __init__(self, ds, path: str, chunks: tuple[int, int]):
        import h5netcdf
        import xarray as xr

        xr.Dataset(coords=ds.coords, attrs=ds.attrs).to_netcdf(path, engine="h5netcdf")
        with h5netcdf.File(path, "a") as f:
            for name, var in ds.data_vars.items():
                v = f.create_variable(name, var.dims, "f8", chunks=chunks, fillvalue=np.nan)
                v.attrs.update(var.attrs)
        # the chunks go in through h5py, the library under h5netcdf (a tenth of the cost per write)
        import h5py
        self.file = h5py.File(path, "r+")
        self.vars = [self.file[name] for name in ds.data_vars]

    def put(self, region, block: np.ndarray) -> None:
        for v, values in zip(self.vars, block):
            v[region] = values

    def close(self) -> None:
        self.file.close()


class _ZarrTarget:
    """A Zarr store laid out by xarray (metadata and coordinates), its chunks filled by zarr."""

    def __init__(self, ds, path: str, chunks: tuple[int, int]):
        import zarr

        ds.to_zarr(path, mode="w", zarr_format=2, consolidated=True, compute=False)
        group = zarr.open_group(path, mode="r+", zarr_format=2)
        self.vars = [group[name] for name in ds.data_vars]

    def put(self, region, block: np.ndarray) -> None:
        for v, values in zip(self.vars, block):
            v[region] = values

    def close(self) -> None:
        pass


def write(ds, path, workers: int | None = None, scheduler: str | None = None, progress: bool = False) -> str:
    """Compute the table chunk by chunk on Dask and write it here; returns the format written.

    Every chunk of the table is one Dask computation (the map_blocks task that
    evaluates all fields of the chunk, and the slices of it); at most two
    chunks per worker thread are in flight, and each is written to the file
    by this process as soon as it arrives, so memory holds a few chunks
    whatever the size of the table. NetCDF: coordinates and attributes by
    xarray's h5netcdf engine, the variables (chunked like the table, NaN
    fill) filled through h5netcdf. Zarr: laid out by xarray (format 2,
    consolidated metadata), chunks filled through zarr. The file is written
    under a hidden name beside ``path`` and renamed when complete, so a
    failed or interrupted run never leaves a half table under the requested
    name. With ``scheduler`` the workers compute and this machine writes.

    Raises
    ------
    ValueError
        A name not ending in .nc or .zarr, a missing directory, an existing
        non-Zarr directory, an unreachable scheduler.
    """
    import dask
    from distributed import wait

    path = os.path.abspath(os.fspath(path).rstrip("/" + os.sep))
    fmt = output_format(path)
    _writable(path, fmt)
    folder, name = os.path.split(path)
    tmp = os.path.join(folder, f".{name}.partial-{os.getpid()}")
    arrays = [var.data for var in ds.data_vars.values()]
    row_chunks, col_chunks = arrays[0].chunks
    source = ds.encoding.get(_SOURCE)
    if not (source and source["fields"] == list(ds.data_vars) and source["array"].chunks[1:] == arrays[0].chunks
            and all(ds[n].data.name == source["keys"][n] for n in ds.data_vars)):
        source = None                 # a Dataset changed since build(): compute its variables' own chunks
    starts_r, starts_c = np.cumsum((0,) + row_chunks), np.cumsum((0,) + col_chunks)
    blocks = [(i, j) for i in range(len(row_chunks)) for j in range(len(col_chunks))]
    with cluster.client(workers, scheduler) as c:
        in_flight = max(2, 2 * sum(c.nthreads().values()))
        target = None
        try:
            target = (_NetCDFTarget if fmt == "netcdf" else _ZarrTarget)(ds, tmp, (row_chunks[0], col_chunks[0]))
            pending, done, todo = {}, 0, list(reversed(blocks))
            if progress:
                cluster.progress_line(0, len(blocks), "chunks")
            while todo or pending:
                while todo and len(pending) < in_flight:
                    i, j = todo.pop()
                    if source is not None:    # one map_blocks chunk: every field from one evaluate()
                        fields = source["array"].blocks[:, i, j]
                    else:
                        fields = dask.delayed(np.stack)([a.blocks[i, j] for a in arrays])
                    pending[c.compute(fields)] = (i, j)
                finished = wait(list(pending), return_when="FIRST_COMPLETED").done
                for fut in finished:
                    i, j = pending.pop(fut)
                    region = (slice(starts_r[i], starts_r[i + 1]), slice(starts_c[j], starts_c[j + 1]))
                    target.put(region, fut.result())
                    fut.release()
                    done += 1
                    if progress:
                        cluster.progress_line(done, len(blocks), "chunks")
            target.close()
        except BaseException:
            if target is not None:
                target.close()
            _remove(tmp)
            raise
    if os.path.isdir(path):
        shutil.rmtree(path)
    os.replace(tmp, path)
    return fmt


def _remove(path: str) -> None:
    if os.path.isdir(path):
        shutil.rmtree(path, ignore_errors=True)
    elif os.path.exists(path):
        os.remove(path)
