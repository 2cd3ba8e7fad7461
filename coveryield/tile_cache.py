r"""On-disk cache of simulated tile results, keyed by everything that decides them.

Reading a climate file and simulating every tile is most of the time a comparison takes; the
result depends only on

* the bytes of the climate file (SHA-256),
* the catchment (station, area, routing and interception settings), the zones (shares, climate
  adjustments, soils) and every parameter of the covers used, in tile order,
* coveryield's own source files (a code change invalidates every entry) and the versions of
  Python, numpy and numba.

A canonical JSON text of all of that, hashed with SHA-256, names the entry. Plan shares are not
part of the key: any plan over the same tiles is a weighted sum of the same tile results. The
entry also keeps the mixed results of the plan file's plans (keyed by their tile weights), so an
unchanged comparison needs neither the daily loop nor the routing kernel, nor loading either.

Where
-----
``$COVERYIELD_CACHE_DIR/tiles`` when that variable is set, else ``tiles`` in the user's cache
folder (``platformdirs.user_cache_dir("coveryield")``: ``~/.cache/coveryield`` on Linux,
``~/Library/Caches/coveryield`` on macOS, ``%LOCALAPPDATA%\coveryield\Cache`` on Windows).
Nothing is ever written next to a user's data. ``coveryield cache`` shows the folder and its
size; ``coveryield cache --clear`` empties it; ``coveryield compare --no-cache`` neither reads
nor writes it.

How
---
One ``.npz`` file per entry: plain arrays and one JSON text (no pickles, so loading a planted
file cannot run code). It is written to a temporary file in the same folder, then renamed, so a
reader sees a whole entry or none. An entry that cannot be read or does not match its key is
ignored with a :class:`TileCacheWarning` and replaced by a fresh simulation; a cache that cannot
be written only costs a warning. Entries above :data:`MAX_ENTRY_BYTES` are not stored (a
simulation is then about as fast as reading them back), and after each store the least recently
used entries beyond :data:`MAX_TOTAL_BYTES` are deleted.

Warnings raised while the tiles were simulated (e.g. an assumption about a missing climate
column) are kept with the entry and raised again on every hit, so a cached run says what an
uncached one says.
"""

from __future__ import annotations

import builtins
import dataclasses
import hashlib
import importlib
import json
import os
import sys
import tempfile
import time
import warnings
from importlib import metadata
from pathlib import Path

import numpy as np

#: Environment variable naming the cache root folder (the tile cache is its ``tiles`` folder).
CACHE_DIR_VARIABLE = "COVERYIELD_CACHE_DIR"
#: Version of the entry layout; bump when the way entries are written changes.
ENTRY_FORMAT = 1
#: Entries larger than this are not stored [bytes].
MAX_ENTRY_BYTES = 256 * 1024**2
#: After a store, the least recently used entries beyond this total are deleted [bytes].
MAX_TOTAL_BYTES = 1024**3
#: Temporary files older than this are left-overs of an interrupted write [s].
STALE_TEMPORARY_S = 3600.0
_SUFFIX = ".npz"
_TEMPORARY_PREFIX = ".partial-"
_META = "__meta__"
_PACKAGE_DIR = Path(__file__).resolve().parent


class TileCacheWarning(UserWarning):
    """The tile cache could not be read or written; the comparison went on without it."""


def default_cache_folder() -> Path:
    """Folder of the tile cache: ``$COVERYIELD_CACHE_DIR/tiles`` or the user cache folder's."""
    root = os.environ.get(CACHE_DIR_VARIABLE, "").strip()
    if not root:
        import platformdirs

        root = platformdirs.user_cache_dir("coveryield", appauthor=False)
    return Path(root).expanduser() / "tiles"


class TileCache:
    """Simulated tile results on disk, one file per set of inputs that decide them.

    Parameters
    ----------
    folder : path, optional
        Folder of the entries (default :func:`default_cache_folder`); created on first store.
    """

    def __init__(self, folder: str | os.PathLike | None = None):
        self.folder = Path(folder) if folder is not None else default_cache_folder()

    def __repr__(self) -> str:
        return f"TileCache({str(self.folder)!r})"

    # ---- keys -------------------------------------------------------------------------------

    def key(self, plan_file) -> str:
        """SHA-256 (hex) naming the tile results of a plan file.

        Parameters
        ----------
        plan_file : coveryield.plans.PlanFile
            The catchment, zones, covers and plans.

        Returns
        -------
        str
            64 hexadecimal digits.

        Raises
        ------
        OSError
            If the climate file cannot be read.
        """
        return hashlib.sha256(key_text(plan_file).encode()).hexdigest()

    def path(self, key: str) -> Path:
        """File of the entry named ``key``."""
        return self.folder / f"{key}{_SUFFIX}"

    # ---- reading and writing ------------------------------------------------------------------

    def load(self, key: str) -> CachedTiles | None:
        """Entry stored under ``key``, or None (missing, or unreadable with a warning)."""
        path = self.path(key)
        try:
            with np.load(path, allow_pickle=False) as stored:
                arrays = {name: stored[name] for name in stored.files}
        except (FileNotFoundError, NotADirectoryError):  # no such entry (or no such folder)
            return None
        except Exception as exc:  # any damage: a truncated zip, a bad header, no permission
            _note(f"tile cache entry {path} is unreadable ({_reason(exc)}); simulating again")
            return None
        try:
            meta = json.loads(str(arrays.pop(_META)))
            if meta.get("format") != ENTRY_FORMAT or meta.get("key") != key:
                raise ValueError("it belongs to other inputs")
            entry = _entry_from(arrays, meta)
        except Exception as exc:
            _note(f"tile cache entry {path} is unusable ({_reason(exc)}); simulating again")
            return None
        _touch(path)
        return entry

    def store(self, key: str, entry: CachedTiles) -> Path | None:
        """Write an entry under ``key``, atomically; warn and return None on failure.

        Returns
        -------
        pathlib.Path or None
            The file written, or None when nothing was stored.
        """
        try:
            arrays, meta = _entry_to(entry)
        except TypeError as exc:
            _note(f"tile results not cached ({exc})")
            return None
        if sum(a.nbytes for a in arrays.values()) > MAX_ENTRY_BYTES:
            return None  # large catchments: simulating is about as fast as reading back
        meta.update(format=ENTRY_FORMAT, key=key)
        arrays[_META] = np.array(json.dumps(meta))
        path = self.path(key)
        try:
            self.folder.mkdir(parents=True, exist_ok=True)
            _write_atomically(path, arrays)
        except OSError as exc:
            _note(
                f"could not write the tile cache in {self.folder} ({_reason(exc)}); "
                "results are not cached"
            )
            return None
        self.prune(keep=path)
        return path

    # ---- housekeeping -------------------------------------------------------------------------

    def entries(self) -> list[Path]:
        """Entry files, least recently used first."""
        try:
            found = [p for p in self.folder.iterdir() if p.suffix == _SUFFIX and p.is_file()]
        except OSError:
            return []
        return sorted(found, key=_mtime)

    def size_bytes(self) -> int:
        """Total size of the entries [bytes]."""
        return sum(_size(p) for p in self.entries())

    def prune(self, keep: Path | None = None, max_total_bytes: int = MAX_TOTAL_BYTES) -> int:
        """Delete left-over temporary files and the least recently used entries over the limit.

        Returns
        -------
        int
            Number of entries deleted.
        """
        now = time.time()
        for path in self._temporaries():
            if now - _mtime(path) > STALE_TEMPORARY_S:
                _unlink(path)
        entries = self.entries()
        total = sum(_size(p) for p in entries)
        deleted = 0
        for path in entries:
            if total <= max_total_bytes:
                break
            if path == keep:
                continue
            total -= _size(path)
            deleted += _unlink(path)
        return deleted

    def clear(self) -> int:
        """Delete every entry (and temporary file) of this cache; return the entries deleted."""
        for path in self._temporaries():
            _unlink(path)
        return sum(_unlink(p) for p in self.entries())

    def _temporaries(self) -> list[Path]:
        try:
            return [p for p in self.folder.iterdir() if p.name.startswith(_TEMPORARY_PREFIX)]
        except OSError:
            return []


@dataclasses.dataclass(frozen=True)
class CachedTiles:
    """What one cache entry holds.

    Attributes
    ----------
    tiles : coveryield.catchment.TileResults
        Every tile's results.
    mixes : dict
        Tile weights (tuple) -> :class:`coveryield.catchment.MixedSeries` of the plans known
        when the entry was written.
    raised : tuple of (str, str)
        Warnings (category, message) raised while the tiles were simulated.
    """

    tiles: object
    mixes: dict
    raised: tuple = ()


def cached_simulation(plan_file, cache: TileCache | None, *, progress: bool = False):
    """Tile results of a plan file and its plans' mixes: from the cache, else simulated.

    Parameters
    ----------
    plan_file : coveryield.plans.PlanFile
        The catchment, zones, covers and plans.
    cache : TileCache or None
        None simulates without reading or writing any cache.
    progress : bool
        Show a progress bar while tiles are prepared.

    Returns
    -------
    tiles : coveryield.catchment.TileResults
        Every tile's results.
    mixes : dict
        Tile weights (tuple) -> MixedSeries of every plan in the file (empty without a cache).

    Notes
    -----
    On a hit, the warnings raised when the tiles were simulated are raised again; plans whose
    shares are new to the entry are mixed and the entry is rewritten with the mixes of the
    file's plans.
    """
    from coveryield import catchment

    if cache is None:
        return catchment.simulate_catchment(plan_file, progress=progress), {}
    try:
        key = cache.key(plan_file)
    except OSError:  # the climate file cannot be read: the simulation reports it properly
        return catchment.simulate_catchment(plan_file, progress=progress), {}
    entry = cache.load(key)
    if entry is None:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            tiles = catchment.simulate_catchment(plan_file, progress=progress)
        raised = tuple(dict.fromkeys(_describe(w) for w in caught))
        entry = CachedTiles(tiles, _plan_mixes(plan_file, tiles, {}), raised)
        cache.store(key, entry)
    else:
        mixes = _plan_mixes(plan_file, entry.tiles, entry.mixes)
        if not mixes.keys() <= entry.mixes.keys():  # shares new to the entry: keep theirs
            entry = dataclasses.replace(entry, mixes=mixes)
            cache.store(key, entry)
    _raise_again(entry.raised)
    return entry.tiles, entry.mixes


def _plan_mixes(plan_file, tiles, known: dict) -> dict:
    """Mixed results of every plan of the file, taken from ``known`` where it has them.

    Mixes of shares no longer in the file are dropped, so an entry does not grow while plans
    are edited.
    """
    from coveryield.catchment import mix_tiles

    mixes = {}
    for shares in plan_file.plans.values():
        weights = tiles.weights(shares)
        key = tuple(weights)
        if key not in mixes:
            mixes[key] = known[key] if key in known else mix_tiles(tiles, weights)
    return mixes


# --------------------------------------------------------------------------------------------
# The key


def key_text(plan_file) -> str:
    """Canonical JSON of every input that decides a plan file's tile results.

    Raises
    ------
    OSError
        If the climate file cannot be read.
    """
    spec = plan_file.catchment
    catchment = spec.model_dump(mode="json")
    catchment["climate"] = file_sha256(spec.climate)
    zones = [
        dict(zone.model_dump(mode="json"), awc_m3_per_m3=zone.awc_m3_per_m3)
        for zone in plan_file.zones
    ]
    covers = [plan_file.covers[name].model_dump(mode="json") for name in plan_file.covers_used()]
    inputs = {
        "entry_format": ENTRY_FORMAT,
        "source": package_source_sha256(),
        "python": sys.version,
        "numpy": np.__version__,
        "numba": _installed_version("numba"),
        "catchment": catchment,
        "zones": zones,
        "covers": covers,
        "adjustments": plan_file.adjustments.model_dump(mode="json"),
    }
    return json.dumps(inputs, sort_keys=True, separators=(",", ":"))


def file_sha256(path: str | os.PathLike) -> str:
    """SHA-256 (hex) of a file's bytes."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


_SOURCE_DIGEST: dict[Path, str] = {}


def package_source_sha256(package_dir: Path = _PACKAGE_DIR) -> str:
    """SHA-256 (hex) of the names and bytes of every source and data file of the package.

    Computed once per process (the source does not change under a running program).
    """
    if package_dir not in _SOURCE_DIGEST:
        digest = hashlib.sha256()
        files = sorted(
            p
            for p in package_dir.rglob("*")
            if p.is_file() and "__pycache__" not in p.parts and p.suffix not in (".pyc", ".pyo")
        )
        for path in files:
            digest.update(path.relative_to(package_dir).as_posix().encode() + b"\0")
            digest.update(path.read_bytes() + b"\0")
        _SOURCE_DIGEST[package_dir] = digest.hexdigest()
    return _SOURCE_DIGEST[package_dir]


def _installed_version(distribution: str) -> str:
    try:
        return metadata.version(distribution)
    except metadata.PackageNotFoundError:
        return "not installed"


# --------------------------------------------------------------------------------------------
# Tile results <-> arrays and JSON


def _entry_to(entry: CachedTiles) -> tuple[dict[str, np.ndarray], dict]:
    """Split an entry into named arrays and a JSON-ready description (TypeError if impossible)."""
    arrays: dict[str, np.ndarray] = {}
    meta = {
        "tiles": _dataclass_to(entry.tiles, "tiles", arrays),
        "mixes": [
            {"weights": list(weights), "mix": _dataclass_to(mix, f"mix{i}", arrays)}
            for i, (weights, mix) in enumerate(entry.mixes.items())
        ],
        "warnings": [list(w) for w in entry.raised],
    }
    return arrays, meta


def _entry_from(arrays: dict[str, np.ndarray], meta: dict) -> CachedTiles:
    """Rebuild an entry from :func:`_entry_to`'s parts."""
    from coveryield.catchment import MixedSeries, TileResults

    return CachedTiles(
        tiles=_dataclass_from(TileResults, meta["tiles"], arrays),
        mixes={
            tuple(float(w) for w in item["weights"]): _dataclass_from(
                MixedSeries, item["mix"], arrays
            )
            for item in meta["mixes"]
        },
        raised=tuple(tuple(w) for w in meta["warnings"]),
    )


def _dataclass_to(obj, prefix: str, arrays: dict[str, np.ndarray]) -> dict:
    """Put a dataclass's arrays into ``arrays`` under ``prefix``; describe the rest as JSON."""
    import pandas as pd

    meta: dict = {"prefix": prefix, "arrays": [], "array_dicts": {}, "dates": {}, "values": {}}
    for f in dataclasses.fields(obj):
        value = getattr(obj, f.name)
        name = f"{prefix}.{f.name}"
        if isinstance(value, np.ndarray):
            if value.dtype.hasobject:
                raise TypeError(f"{f.name} holds Python objects")
            arrays[name] = value
            meta["arrays"].append(f.name)
        elif isinstance(value, pd.DatetimeIndex):
            arrays[name] = value.to_numpy()
            meta["dates"][f.name] = {"name": value.name, "freq": value.freqstr}
        elif (
            isinstance(value, dict)
            and value
            and all(isinstance(v, np.ndarray) and not v.dtype.hasobject for v in value.values())
        ):
            meta["array_dicts"][f.name] = list(value)
            for key, array in value.items():
                arrays[f"{name}.{key}"] = array
        else:
            meta["values"][f.name] = _to_json(value, f.name)
    return meta


def _dataclass_from(cls, meta: dict, arrays: dict[str, np.ndarray]):
    """Rebuild a dataclass of type ``cls`` from :func:`_dataclass_to`'s parts."""
    import pandas as pd

    prefix = meta["prefix"]
    values = {name: _from_json(v) for name, v in meta["values"].items()}
    values.update({name: arrays[f"{prefix}.{name}"] for name in meta["arrays"]})
    values.update(
        {
            name: pd.DatetimeIndex(arrays[f"{prefix}.{name}"], name=info["name"], freq=info["freq"])
            for name, info in meta["dates"].items()
        }
    )
    values.update(
        {
            name: {key: arrays[f"{prefix}.{name}.{key}"] for key in keys}
            for name, keys in meta["array_dicts"].items()
        }
    )
    return cls(**values)


def _to_json(value, where: str):
    """JSON-ready form of plain values; tuples are tagged so they come back as tuples."""
    if isinstance(value, np.generic):
        value = value.item()
    if value is None or isinstance(value, (bool, int, float, str)):
        return value
    if isinstance(value, tuple):
        return {"tuple": [_to_json(v, where) for v in value]}
    if isinstance(value, list):
        return [_to_json(v, where) for v in value]
    if isinstance(value, dict) and all(isinstance(k, str) for k in value):
        return {"dict": {k: _to_json(v, where) for k, v in value.items()}}
    raise TypeError(f"{where} holds a {type(value).__name__}, which the cache cannot store")


def _from_json(value):
    if isinstance(value, list):
        return [_from_json(v) for v in value]
    if isinstance(value, dict):
        if "tuple" in value:
            return tuple(_from_json(v) for v in value["tuple"])
        return {k: _from_json(v) for k, v in value["dict"].items()}
    return value


# --------------------------------------------------------------------------------------------
# Files and warnings


def _write_atomically(path: Path, arrays: dict[str, np.ndarray]) -> None:
    """Write an uncompressed ``.npz`` to a temporary file beside ``path``, then rename it."""
    handle = tempfile.NamedTemporaryFile(
        dir=path.parent, prefix=_TEMPORARY_PREFIX, suffix=_SUFFIX, delete=False
    )
    try:
        with handle:
            np.savez(handle, **arrays)
        os.replace(handle.name, path)
    except BaseException:
        _unlink(Path(handle.name))
        raise


def _describe(caught: warnings.WarningMessage) -> tuple[str, str]:
    return _category_name(caught.category), str(caught.message)


def _category_name(category: type[Warning]) -> str:
    return f"{category.__module__}.{category.__qualname__}"


def _raise_again(raised) -> None:
    """Raise stored warnings again; coveryield's own categories keep their class."""
    for category_name, message in raised:
        warnings.warn(message, _category(category_name), stacklevel=3)


def _category(name: str) -> type[Warning]:
    """Find the warning class named ``name``: coveryield's own or a built-in, else UserWarning.

    Other libraries are not imported only to raise their warnings again.
    """
    module, _, qualname = name.rpartition(".")
    category = None
    if module == "builtins":
        category = getattr(builtins, qualname, None)
    elif module == "coveryield" or module.startswith("coveryield."):
        try:
            category = getattr(importlib.import_module(module), qualname, None)
        except ImportError:
            category = None
    if isinstance(category, type) and issubclass(category, Warning):
        return category
    return UserWarning


def _note(text: str) -> None:
    warnings.warn(text, TileCacheWarning, stacklevel=3)


def _reason(exc: BaseException) -> str:
    return getattr(exc, "strerror", None) or str(exc) or type(exc).__name__


def _touch(path: Path) -> None:
    try:
        os.utime(path)
    except OSError:
        pass


def _mtime(path: Path) -> float:
    try:
        return path.stat().st_mtime
    except OSError:
        return 0.0


def _size(path: Path) -> int:
    try:
        return path.stat().st_size
    except OSError:
        return 0


def _unlink(path: Path) -> int:
    try:
        path.unlink()
    except OSError:
        return 0
    return 1
