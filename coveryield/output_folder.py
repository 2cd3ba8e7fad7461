"""Output folders: checked before any work, filled all or nothing, never over a user's file.

Every writer of coveryield (``compare --out``, the dashboard's exports, and the commands still to
come) goes through this module:

1. :func:`check_output_folder` runs **before any simulation**. It refuses, with one message naming
   the folder or file, a target that is a file, a folder that cannot be written, a non-empty
   folder without ``force``, and, with ``force``, any file it would replace that is an input of
   the run or that coveryield did not write.
2. :meth:`OutputFolder.write` checks again (the folder may have changed while the simulation ran),
   lets a callback fill a hidden staging folder, and only then moves the files into place.

Each folder coveryield fills holds a manifest, :data:`MANIFEST_NAME`, listing every file it
wrote with its size [bytes] and SHA-256 checksum. ``force`` replaces a file only when the manifest
lists it with the same checksum: a file the user made, or edited since, is never replaced. Inputs
are recognised by identity on disk (:func:`os.path.samefile`), not by name, so a climate file
called ``annual.csv`` in the output folder is safe.

New folders get the permissions the user's umask gives (``mkdir`` would give), not the
``drwx------`` of a temporary folder.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import json
import os
import shutil
import tempfile
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path

from coveryield.errors import OutputError

#: The manifest coveryield keeps in every folder it fills.
MANIFEST_NAME = "written-by-coveryield.json"
_MANIFEST_NOTE = (
    "Files coveryield wrote in this folder, with their size and SHA-256 checksum. "
    "`--force` replaces a file only if it is listed here and unchanged; it never replaces "
    "anything else."
)
_STAGING_PREFIX = ".coveryield-staging-"

Inputs = Mapping[str, "str | os.PathLike"]


# ---- small helpers -------------------------------------------------------------------------


def current_umask() -> int:
    """Return the process's file-mode creation mask (read without changing it on Linux)."""
    try:
        with open("/proc/self/status", encoding="ascii") as status:
            for line in status:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)  # elsewhere: the usual set-and-restore
    os.umask(mask)
    return mask


def sha256_of(path: Path) -> str:
    """SHA-256 checksum of a file's bytes, as hex."""
    digest = hashlib.sha256()
    with open(path, "rb") as handle:
        for block in iter(lambda: handle.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def _same_file(a: Path, b: Path) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return False


def _nearest_existing(path: Path) -> Path:
    for candidate in (path, *path.parents):
        if candidate.exists():
            return candidate
    return Path(path.anchor or ".")


def _package_version() -> str:
    from coveryield import __version__

    return __version__


# ---- the manifest --------------------------------------------------------------------------


def read_manifest(folder: Path) -> dict[str, dict]:
    """Files listed in ``folder``'s manifest: name -> {"bytes", "sha256", ...}; {} if none.

    Raises
    ------
    coveryield.errors.OutputError
        If a file of the manifest's name exists but is not a coveryield manifest.
    """
    path = Path(folder) / MANIFEST_NAME
    if not path.exists():
        return {}
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
        files = data["files"]
        if not isinstance(files, dict) or not all(isinstance(v, dict) for v in files.values()):
            raise TypeError("files is not a table of files")
    except (OSError, ValueError, KeyError, TypeError) as exc:
        raise OutputError(
            f"{path}: not a manifest coveryield can read ({exc}); coveryield keeps this file to "
            "know which outputs it wrote: remove it or choose another folder"
        ) from None
    return files


def _entry(path: Path, written: str) -> dict:
    return {"bytes": path.stat().st_size, "sha256": sha256_of(path), "written": written}


def _write_manifest(folder: Path, files: Mapping[str, dict]) -> None:
    data = {
        "written_by": f"coveryield {_package_version()}",
        "note": _MANIFEST_NOTE,
        "files": dict(sorted(files.items())),
    }
    path = folder / MANIFEST_NAME
    fd, tmp = tempfile.mkstemp(prefix=".manifest-", dir=folder)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as handle:
            json.dump(data, handle, indent=1)
            handle.write("\n")
        os.chmod(tmp, 0o666 & ~current_umask())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def _is_ours(path: Path, entry: Mapping | None) -> bool:
    """Whether ``path`` is a file coveryield wrote and nobody changed since."""
    if not entry or not path.is_file() or path.is_symlink():
        return False
    accepted = {entry.get("sha256"), entry.get("sha256_before")} - {None}
    return entry.get("bytes") == path.stat().st_size and sha256_of(path) in accepted


def _files_in(folder: Path) -> list[str]:
    """Every file below ``folder``, as POSIX paths relative to it."""
    return sorted(p.relative_to(folder).as_posix() for p in folder.rglob("*") if p.is_file())


# ---- checking ------------------------------------------------------------------------------


@dataclass(frozen=True)
class OutputFolder:
    """A folder that was checked, ready to be filled with :meth:`write`.

    Build it with :func:`check_output_folder`.

    Attributes
    ----------
    path : pathlib.Path
        The folder.
    names : tuple of str
        Files the writer will put in it (relative paths).
    force : bool
        Replace coveryield's own earlier outputs of the same names.
    inputs : dict
        Role (``"plan file"``, ``"climate file"``, ...) -> path of each input of the run.
    retire : tuple of str
        Files an earlier run may have left that this run does not write (e.g. ``ensemble.csv``
        after a run without an ensemble): removed on writing if coveryield wrote them and
        nobody changed them since, so no stale figure sits beside the new ones.
    """

    path: Path
    names: tuple[str, ...]
    force: bool = False
    inputs: dict[str, Path] = field(default_factory=dict)
    retire: tuple[str, ...] = ()

    def check(self) -> None:
        """Raise :class:`OutputError` (one message) if the folder cannot take the outputs."""
        out = self.path
        if out.is_symlink() and not out.exists():
            raise OutputError(f"{out}: is a broken link; expected a new or empty folder")
        if out.exists() and not out.is_dir():
            raise OutputError(f"{out}: exists and is not a folder; expected a new or empty folder")
        if not out.exists():
            self._check_creatable()
            return
        if not os.access(out, os.W_OK | os.X_OK):
            raise OutputError(f"{out}: cannot write into this folder (permission denied)")
        present = [p.name for p in out.iterdir() if p.name != MANIFEST_NAME]
        if not present:
            return
        if not self.force:
            raise OutputError(
                f"{out}: folder is not empty; choose a new folder, or pass --force to write into "
                f"it anyway (coveryield then replaces only its own earlier outputs, those listed "
                f"in {MANIFEST_NAME}, and never an input)"
            )
        manifest = read_manifest(out)
        for name in self.names:
            self._check_replaceable(out / name, manifest.get(name))

    def _check_creatable(self) -> None:
        anchor = _nearest_existing(self.path.absolute().parent)
        if not anchor.is_dir():
            raise OutputError(f"{self.path}: cannot create it: {anchor} is not a folder")
        if not os.access(anchor, os.W_OK | os.X_OK):
            raise OutputError(f"{self.path}: cannot create it: no permission to write in {anchor}")

    def _check_replaceable(self, target: Path, entry: Mapping | None) -> None:
        if not (target.exists() or target.is_symlink()):
            return
        for role, source in self.inputs.items():
            if _same_file(target, source):
                raise OutputError(
                    f"{target}: is the {role} of this run; --force never replaces an input: "
                    "choose another output folder"
                )
        if target.is_dir() and not target.is_symlink():
            raise OutputError(
                f"{target}: is a folder; coveryield would write a file there: "
                "choose another output folder"
            )
        if not entry:
            raise OutputError(
                f"{target}: coveryield did not write this file (it is not in {MANIFEST_NAME}); "
                "--force replaces only coveryield's own outputs: move the file or choose another "
                "output folder"
            )
        if not _is_ours(target, entry):
            raise OutputError(
                f"{target}: changed since coveryield wrote it (size or checksum differs from "
                f"{MANIFEST_NAME}); --force will not replace an edited file: move it or choose "
                "another output folder"
            )

    # ---- writing ---------------------------------------------------------------------------

    def write(self, fill: Callable[[Path], None]) -> Path:
        """Check again, let ``fill`` write into a staging folder, then move everything in place.

        Parameters
        ----------
        fill : callable
            Called with an empty folder; must write exactly the files in :attr:`names`.

        Returns
        -------
        pathlib.Path
            The output folder.

        Raises
        ------
        coveryield.errors.OutputError
            If the folder cannot take the outputs (nothing is then changed), or writing fails.
        """
        self.check()
        if self.path.exists():
            return self._write_into_existing(fill)
        return write_new_folder(self.path, fill)

    def _write_into_existing(self, fill: Callable[[Path], None]) -> Path:
        out = self.path
        staging = Path(tempfile.mkdtemp(prefix=_STAGING_PREFIX, dir=out))
        try:
            fill(staging)
            written = _files_in(staging)
            if sorted(written) != sorted(self.names):
                raise RuntimeError(f"writer declared {sorted(self.names)} but wrote {written}")
            stamp = _now()
            old = read_manifest(out)
            new = {name: _entry(staging / name, stamp) for name in written}
            interim = {
                **old,
                **{n: {**e, "sha256_before": old.get(n, {}).get("sha256")} for n, e in new.items()},
            }
            _write_manifest(out, interim)  # a failure midway leaves every file replaceable
            for name in written:
                (out / name).parent.mkdir(parents=True, exist_ok=True)
                os.replace(staging / name, out / name)
            for name in self.retire:
                if name not in new and _is_ours(out / name, old.get(name)):
                    (out / name).unlink()
            kept = {n: e for n, e in old.items() if n not in new and _is_ours(out / n, e)}
            _write_manifest(out, {**kept, **new})
        except OutputError:
            raise
        except OSError as exc:
            raise OutputError(f"{out}: writing outputs failed ({exc})") from None
        finally:
            shutil.rmtree(staging, ignore_errors=True)
        return out


def _now() -> str:
    return dt.datetime.now(dt.timezone.utc).isoformat(timespec="seconds")


def check_output_folder(
    path: str | os.PathLike,
    names: Iterable[str],
    *,
    force: bool = False,
    inputs: Inputs | None = None,
    retire: Iterable[str] = (),
) -> OutputFolder:
    """Check, before any work, that ``names`` can be written into the folder ``path``.

    Parameters
    ----------
    path : str or path
        Folder to create, or an existing empty folder; with ``force`` also a folder holding
        coveryield's own earlier outputs.
    names : iterable of str
        Files the writer will put there.
    force : bool
        Allow replacing coveryield's own, unchanged earlier outputs of the same names.
    inputs : mapping, optional
        Role -> path of every input of the run (plan file, climate file, observed flow...);
        never replaced, whatever ``force`` says.
    retire : iterable of str, optional
        coveryield's own earlier outputs that this run does not write; removed when writing
        (only if unchanged since coveryield wrote them).

    Returns
    -------
    OutputFolder
        The checked folder; call :meth:`OutputFolder.write` after the work.

    Raises
    ------
    coveryield.errors.OutputError
        One message naming the folder or file, what is wrong and what to do.
    """
    target = OutputFolder(
        path=Path(path).expanduser(),
        names=tuple(names),
        force=bool(force),
        inputs={role: Path(p) for role, p in (inputs or {}).items() if p is not None},
        retire=tuple(retire),
    )
    target.check()
    return target


def write_new_folder(target: str | os.PathLike, fill: Callable[[Path], None]) -> Path:
    """Create a NEW folder holding what ``fill`` puts in it (and a manifest), all or nothing.

    ``fill`` fills a hidden temporary folder beside ``target``, which is then renamed; on any
    failure the temporary folder is removed and ``target`` does not appear. The folder gets the
    permissions the umask gives.

    Parameters
    ----------
    target : path
        Folder to create; must not exist.
    fill : callable
        Called with the temporary folder's path.

    Returns
    -------
    pathlib.Path
        The new folder.

    Raises
    ------
    coveryield.errors.OutputError
        If ``target`` exists or cannot be written.
    """
    target = Path(target)
    if target.exists() or target.is_symlink():
        raise OutputError(f"{target}: exists already; expected a new folder")
    parent = target.absolute().parent
    try:
        parent.mkdir(parents=True, exist_ok=True)
        staging = Path(tempfile.mkdtemp(prefix=f".{target.name}-", dir=parent))
    except OSError as exc:
        raise OutputError(f"{target}: cannot write here ({exc.strerror or exc})") from None
    try:
        fill(staging)
        stamp = _now()
        _write_manifest(staging, {n: _entry(staging / n, stamp) for n in _files_in(staging)})
        os.chmod(staging, 0o777 & ~current_umask())
        if target.exists():  # appeared while we were writing: rename would replace it if empty
            raise OutputError(f"{target}: appeared while writing; nothing was written")
        os.rename(staging, target)
    except OutputError:
        raise
    except OSError as exc:
        raise OutputError(f"{target}: writing failed ({exc}); nothing was written") from None
    finally:
        shutil.rmtree(staging, ignore_errors=True)
    return target
