"""Regular elevation grids: the ``Grid`` container and ESRI ASCII grid files.

An ESRI ASCII grid (``.asc``) holds a short header (``ncols``, ``nrows``,
``xllcorner`` or ``xllcenter``, ``yllcorner`` or ``yllcenter``, ``cellsize``,
optional ``NODATA_value``) followed by ``nrows`` rows of ``ncols`` values, the
northernmost row first. Its coordinate reference system lives in a ``.prj``
sidecar of the same stem holding WKT.
"""

from __future__ import annotations

import logging
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from numpy.typing import ArrayLike, NDArray
from pyproj import CRS

from thrustmap.errors import InputError, ParameterError
from thrustmap.io.atomic import atomic_paths

__all__ = ["Grid", "read_ascii_grid", "write_ascii_grid"]

log = logging.getLogger(__name__)

Float = NDArray[np.float64]


@dataclass(eq=False)
class Grid:
    """A north-up regular grid of square cells in a projected CRS.

    Parameters
    ----------
    values : array_like
        2-D array (rows from north to south, columns from west to east); NaN
        marks nodata.
    x0, y0 : float
        Upper-left (north-west) corner of the grid, CRS units (metres).
    cell : float
        Cell size, metres; positive.
    crs : pyproj.CRS, str, int or None
        Coordinate reference system, anything ``pyproj.CRS.from_user_input``
        takes; ``None`` when unknown.

    Raises
    ------
    ParameterError
        When ``values`` is not 2-D or ``cell`` is not a positive number.

    Examples
    --------
    >>> g = Grid([[1.0, 2.0], [3.0, 4.0]], x0=0.0, y0=200.0, cell=100.0, crs="EPSG:32633")
    >>> g.bounds
    (0.0, 0.0, 200.0, 200.0)
    >>> g.x_centers.tolist(), g.y_centers.tolist()
    ([50.0, 150.0], [150.0, 50.0])
    """

    values: Float
    x0: float
    y0: float
    cell: float
    crs: CRS | None = None

    def __post_init__(self) -> None:
        self.values = np.asarray(self.values, dtype=float)
        if self.values.ndim != 2 or 0 in self.values.shape:
            raise ParameterError(
                f"Grid values must be a non-empty 2-D array, got shape {self.values.shape}"
            )
        self.x0, self.y0, self.cell = float(self.x0), float(self.y0), float(self.cell)
        if not (np.isfinite(self.cell) and self.cell > 0):
            raise ParameterError(
                f"Grid cell size must be a positive number of metres, got {self.cell}"
            )
        if not (np.isfinite(self.x0) and np.isfinite(self.y0)):
            raise ParameterError(f"Grid corner must be finite, got ({self.x0}, {self.y0})")
        if self.crs is not None:
            self.crs = CRS.from_user_input(self.crs)

    @property
    def shape(self) -> tuple[int, int]:
        """(rows, columns)."""
        return self.values.shape

    @property
    def bounds(self) -> tuple[float, float, float, float]:
        """(xmin, ymin, xmax, ymax) of the grid's outer cell edges."""
        rows, cols = self.shape
        return (self.x0, self.y0 - rows * self.cell, self.x0 + cols * self.cell, self.y0)

    @property
    def x_centers(self) -> Float:
        """Easting of each column's cell centres, west to east."""
        return self.x0 + (np.arange(self.shape[1]) + 0.5) * self.cell

    @property
    def y_centers(self) -> Float:
        """Northing of each row's cell centres, north to south."""
        return self.y0 - (np.arange(self.shape[0]) + 0.5) * self.cell

    def centers(self) -> tuple[Float, Float]:
        """2-D arrays of cell-centre eastings and northings, shaped like ``values``.

        Examples
        --------
        >>> x, y = Grid(np.zeros((2, 3)), x0=0, y0=20, cell=10).centers()
        >>> x[0].tolist(), y[:, 0].tolist()
        ([5.0, 15.0, 25.0], [15.0, 5.0])
        """
        return np.meshgrid(self.x_centers, self.y_centers)

    def sample(self, x: ArrayLike, y: ArrayLike) -> Float:
        """Bilinear interpolation of the grid at points (vectorised).

        Values are interpolated between cell centres; within half a cell of the
        outer edge the edge cells are extended. Points outside the grid, and
        points whose interpolation touches a nodata cell, give NaN.

        Parameters
        ----------
        x, y : array_like
            Coordinates in the grid's CRS; broadcast together.

        Returns
        -------
        ndarray
            Interpolated values, shaped like the broadcast inputs.

        Examples
        --------
        >>> g = Grid([[0.0, 10.0], [20.0, 30.0]], x0=0, y0=20, cell=10)
        >>> g.sample([10.0, 5.0, 99.0], [10.0, 15.0, 0.0]).tolist()
        [15.0, 0.0, nan]
        """
        xb, yb = np.broadcast_arrays(np.asarray(x, dtype=float), np.asarray(y, dtype=float))
        rows, cols = self.shape
        xmin, ymin, xmax, ymax = self.bounds
        inside = (xb >= xmin) & (xb <= xmax) & (yb >= ymin) & (yb <= ymax)
        fc = np.clip((xb - self.x0) / self.cell - 0.5, 0.0, cols - 1.0)
        fr = np.clip((self.y0 - yb) / self.cell - 0.5, 0.0, rows - 1.0)
        fc = np.where(inside, fc, 0.0)
        fr = np.where(inside, fr, 0.0)
        c0 = np.minimum(np.floor(fc).astype(np.intp), max(cols - 2, 0))
        r0 = np.minimum(np.floor(fr).astype(np.intp), max(rows - 2, 0))
        c1 = np.minimum(c0 + 1, cols - 1)
        r1 = np.minimum(r0 + 1, rows - 1)
        tc = fc - c0
        tr = fr - r0
        out = np.zeros(xb.shape)
        touched_nodata = ~inside
        for r, c, w in (
            (r0, c0, (1.0 - tr) * (1.0 - tc)),
            (r0, c1, (1.0 - tr) * tc),
            (r1, c0, tr * (1.0 - tc)),
            (r1, c1, tr * tc),
        ):
            v = self.values[r, c]
            nodata = np.isnan(v)
            # a nodata neighbour with zero weight (a point on a cell-centre line) does not count
            touched_nodata |= nodata & (w > 0)
            out += np.where(nodata, 0.0, v) * w
        return np.where(touched_nodata, np.nan, out)


_HEADER_KEYS = (
    "ncols",
    "nrows",
    "xllcorner",
    "xllcenter",
    "yllcorner",
    "yllcenter",
    "cellsize",
    "nodata_value",
)


def _header_error(path: Path, line: int, key: str, message: str) -> InputError:
    return InputError(f"line {line}: {message}", source=str(path), field=key)


def _read_header(path: Path, lines: list[str]) -> tuple[dict[str, float], int]:
    header: dict[str, float] = {}
    n = 0
    for n, text in enumerate(lines, start=1):
        parts = text.split()
        if not parts:
            continue
        key = parts[0].lower()
        if key not in _HEADER_KEYS:
            try:
                float(key)
            except ValueError:
                pass
            else:
                return header, n - 1
            raise _header_error(
                path,
                n,
                parts[0],
                f"unknown header key {parts[0]!r}; expected one of ncols, nrows, xllcorner/xllcenter, "
                "yllcorner/yllcenter, cellsize, NODATA_value",
            )
        if len(parts) != 2:
            raise _header_error(
                path, n, key, f"expected '{parts[0]} <number>', got {text.strip()!r}"
            )
        if key in header:
            raise _header_error(path, n, key, f"header key {parts[0]!r} given twice")
        try:
            header[key] = float(parts[1])
        except ValueError:
            raise _header_error(
                path, n, key, f"{parts[0]} must be a number, got {parts[1]!r}"
            ) from None
        if key in ("ncols", "nrows") and not (header[key] >= 1 and header[key] == int(header[key])):
            raise _header_error(
                path, n, key, f"{parts[0]} must be a positive integer, got {parts[1]!r}"
            )
        if key == "cellsize" and not header[key] > 0:
            raise _header_error(path, n, key, f"cellsize must be positive, got {parts[1]!r}")
    return header, n


def read_ascii_grid(path: str | os.PathLike) -> Grid:
    """Read an ESRI ASCII grid and its ``.prj`` sidecar.

    Parameters
    ----------
    path : path-like
        The ``.asc`` file. The CRS is read from the file of the same stem with
        suffix ``.prj`` (WKT); without one the grid's ``crs`` is ``None`` and a
        message is logged.

    Returns
    -------
    Grid
        Values with the file's nodata value replaced by NaN.

    Raises
    ------
    InputError
        For a malformed header (the message names the file, the line and the
        key), a wrong number of values, or an unreadable ``.prj``.
    FileNotFoundError
        When ``path`` does not exist.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "g.asc"
    >>> _ = p.write_text("ncols 2\\nnrows 1\\nxllcorner 0\\nyllcorner 0\\ncellsize 10\\n"
    ...                  "NODATA_value -9999\\n1 -9999\\n")
    >>> g = read_ascii_grid(p)
    >>> g.values.tolist(), g.y0, g.crs is None
    ([[1.0, nan]], 10.0, True)
    """
    path = Path(path)
    lines = path.read_text(encoding="ascii", errors="replace").splitlines()
    header, n_header = _read_header(path, lines)
    last = n_header + 1
    for key in ("ncols", "nrows", "cellsize"):
        if key not in header:
            raise _header_error(path, last, key, f"header lacks {key!r}")
    for axis in ("x", "y"):
        if (f"{axis}llcorner" in header) == (f"{axis}llcenter" in header):
            raise _header_error(
                path,
                last,
                f"{axis}llcorner",
                f"header needs exactly one of {axis}llcorner and {axis}llcenter",
            )
    rows, cols, cell = int(header["nrows"]), int(header["ncols"]), header["cellsize"]
    # *llcenter gives the centre of the lower-left cell, *llcorner its outer corner.
    xll = header["xllcorner"] if "xllcorner" in header else header["xllcenter"] - 0.5 * cell
    yll = header["yllcorner"] if "yllcorner" in header else header["yllcenter"] - 0.5 * cell
    try:
        data = np.array(" ".join(lines[n_header:]).split(), dtype=float)
    except ValueError as exc:
        raise InputError(
            f"grid values after line {n_header} must be numbers ({exc})", source=str(path)
        ) from None
    if data.size != rows * cols:
        raise InputError(
            f"expected nrows x ncols = {rows} x {cols} = {rows * cols} values after line "
            f"{n_header}, found {data.size}",
            source=str(path),
        )
    values = data.reshape(rows, cols)
    if "nodata_value" in header:
        values[values == header["nodata_value"]] = np.nan
    prj = path.with_suffix(".prj")
    crs = None
    if prj.exists():
        try:
            crs = CRS.from_user_input(prj.read_text(encoding="utf-8").strip())
        except Exception as exc:  # pyproj raises its own CRSError type
            raise InputError(f"cannot read the CRS: {exc}", source=str(prj)) from None
    else:
        log.info("%s has no .prj sidecar; the grid's CRS is unknown", path)
    return Grid(values, x0=xll, y0=yll + rows * cell, cell=cell, crs=crs)


def write_ascii_grid(
    path: str | os.PathLike, grid: Grid, *, overwrite: bool = False, fmt: str = "%.17g"
) -> Path:
    """Write a grid as an ESRI ASCII grid plus a ``.prj`` sidecar (ESRI WKT), atomically.

    Parameters
    ----------
    path : path-like
        Output ``.asc`` path; the ``.prj`` goes beside it (written only when
        the grid has a CRS).
    grid : Grid
        The grid; NaN cells are written as the nodata value -9999 (or a lower
        value absent from the data).
    overwrite : bool
        Replace existing files. Keyword only.
    fmt : str
        printf-style format of each value; the default keeps every digit.

    Returns
    -------
    Path
        The ``.asc`` path written.

    Raises
    ------
    OutputExistsError
        When the ``.asc`` or ``.prj`` exists and ``overwrite`` is false.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "g.asc"
    >>> g = Grid([[1.5, np.nan]], x0=0, y0=10, cell=10, crs="EPSG:32633")
    >>> _ = write_ascii_grid(p, g)
    >>> back = read_ascii_grid(p)
    >>> back.values.tolist(), back.crs.to_epsg()
    ([[1.5, nan]], 32633)
    """
    path = Path(path)
    nodata = -9999.0
    while np.any(grid.values == nodata):
        nodata = nodata * 10.0 - 9.0
    xmin, ymin, _, _ = grid.bounds
    rows, cols = grid.shape
    header = (
        f"ncols {cols}\nnrows {rows}\nxllcorner {xmin!r}\nyllcorner {ymin!r}\n"
        f"cellsize {grid.cell!r}\nNODATA_value {nodata:.0f}\n"
    )
    values = np.where(np.isnan(grid.values), nodata, grid.values)
    targets = [path] + ([path.with_suffix(".prj")] if grid.crs is not None else [])
    with atomic_paths(*targets, overwrite=overwrite) as temps:
        with open(temps[0], "w", encoding="ascii", newline="\n") as fh:
            fh.write(header)
            np.savetxt(fh, values, fmt=fmt, delimiter=" ")
        if grid.crs is not None:
            # ESRI WKT is what .prj readers expect; CRSs it cannot express fall back to WKT2.
            wkt = grid.crs.to_wkt("WKT1_ESRI") or grid.crs.to_wkt()
            temps[1].write_text(wkt, encoding="utf-8")
    log.debug("wrote %s (%d x %d cells of %g m)", path, rows, cols, grid.cell)
    return path
