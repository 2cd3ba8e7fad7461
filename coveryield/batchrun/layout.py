"""The output folder of a batch: plan files, one sub-folder each, completeness, resume record.

Layout of ``OUT``::

    OUT/batch.csv, OUT/batch.parquet   one row per catchment and plan (see :mod:`.rows`)
    OUT/failures.csv                   plan files that could not run, with compare's message
    OUT/README.txt                     what each file holds, units, caution
    OUT/<name>/                        one catchment, exactly as ``compare --out`` writes it
    OUT/.coveryield-batch.json         which inputs each finished catchment was computed from

``<name>`` is the plan file's path relative to the searched folder, without ``.toml`` (the
plain stem for a flat folder). Every catchment folder is written all-or-nothing by
:func:`coveryield.reports.write_outputs`; a folder that is incomplete, or whose plan or
climate file changed since, is redone by ``--resume``. Nothing here computes hydrology.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import uuid
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any

from coveryield.errors import BatchError, OutputError

#: Files a batch writes at the top of OUT.
TABLE_FILES = ("batch.csv", "batch.parquet", "failures.csv", "README.txt")

#: Hidden record of the inputs behind every finished catchment folder (read by --resume).
RECORD_FILE = ".coveryield-batch.json"

_RECORD_FORMAT = 1


# ---- which plan files, which folders ---------------------------------------------------------


def find_plan_files(folder: str | os.PathLike, *, skip: Path | None = None) -> list[Path]:
    """Every ``*.toml`` file under ``folder`` (sub-folders included), sorted by path.

    Hidden files and folders (name starting with ".") are passed over, and so is ``skip`` (the
    batch's own output folder when it lies inside ``folder``).

    Raises
    ------
    coveryield.errors.BatchError
        If ``folder`` is not a folder or holds no plan file.
    """
    root = Path(folder).expanduser()
    if not root.is_dir():
        what = "does not exist" if not root.exists() else "is not a folder"
        raise BatchError(f"{root}: {what}; expected a folder of plan files (*.toml)")
    skip = skip.resolve() if skip is not None else None
    found = []
    for path in sorted(root.rglob("*.toml")):
        relative = path.relative_to(root)
        if any(part.startswith(".") for part in relative.parts) or not path.is_file():
            continue
        if skip is not None and path.resolve().is_relative_to(skip):
            continue
        found.append(path)
    if not found:
        raise BatchError(f"{root}: no plan files (*.toml) found in it or its sub-folders")
    return found


def output_names(paths: Sequence[Path], root: Path | None = None) -> list[str]:
    """Name the sub-folder of OUT for each plan file: its path below ``root``, no ``.toml``.

    Parameters
    ----------
    paths : sequence of Path
        Plan files.
    root : Path, optional
        The searched folder; default: the deepest folder holding all of ``paths``.

    Returns
    -------
    list of str
        Names with "/" between folders (the file's stem when it sits directly in ``root``).

    Raises
    ------
    coveryield.errors.BatchError
        If a file is listed twice, or one name would hold another's folder or a batch table.
    """
    resolved = [Path(p).expanduser().resolve() for p in paths]
    if root is None:
        root = Path(os.path.commonpath([p.parent for p in resolved]))
    root = Path(root).expanduser().resolve()
    names = [p.relative_to(root).with_suffix("").as_posix() for p in resolved]
    owner: dict[str, Path] = {}
    for path, name in zip(paths, names, strict=True):
        if name in owner:
            raise BatchError(
                f"{path}: listed twice (also as {owner[name]}); expected each plan file once"
            )
        if name in TABLE_FILES:
            raise BatchError(
                f"{path}: its output folder {name!r} would take the place of the "
                f"batch table of that name; rename the plan file"
            )
        owner[name] = path
    for name, path in owner.items():
        for parent in Path(name).parents:
            if parent.as_posix() in owner:
                raise BatchError(
                    f"{path}: its output folder {name!r} would lie inside the "
                    f"folder of {owner[parent.as_posix()]}; rename one of them"
                )
    return names


# ---- the record of inputs ----------------------------------------------------------------------


def input_fingerprint(plan_source: Path, climate: Path) -> str:
    """SHA-256 of what a catchment's results depend on: coveryield's version, plan, climate."""
    from coveryield import __version__

    digest = hashlib.sha256(f"coveryield {__version__}\n".encode())
    for path in (plan_source, climate):
        digest.update(Path(path).read_bytes())
    return digest.hexdigest()


def read_record(out: Path) -> dict[str, dict[str, str]]:
    """Finished catchments of an earlier batch in ``out``: name -> plan file, fingerprint, rows."""
    path = out / RECORD_FILE
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
        return dict(data["catchments"])
    except (OSError, ValueError, KeyError, TypeError):
        return {}


def write_record(out: Path, catchments: dict[str, dict[str, str]]) -> None:
    """Replace the record of finished catchments (atomically)."""
    text = json.dumps({"format": _RECORD_FORMAT, "catchments": catchments}, indent=1)
    write_file_atomically(out / RECORD_FILE, lambda path: path.write_text(text, "utf-8"))


# ---- completeness ------------------------------------------------------------------------------


def catchment_files() -> tuple[str, ...]:
    """Names of the files ``compare --out`` writes (with the folder's manifest, if it keeps one)."""
    from coveryield import reports

    manifest = getattr(reports, "MANIFEST_NAME", None)
    return (*reports.OUTPUT_FILES, *([manifest] if manifest else []))


def read_summary(folder: Path) -> dict[str, Any] | None:
    """Read a catchment folder's ``summary.json`` if the folder is complete (else None).

    Complete means: every file ``compare --out`` writes is there and not empty, and the summary
    reads back with its catchment and plans.
    """
    if not folder.is_dir():
        return None
    for name in catchment_files():
        file = folder / name
        if not file.is_file() or file.stat().st_size == 0:
            return None
    try:
        summary = json.loads((folder / "summary.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    complete = (
        isinstance(summary, dict)
        and isinstance(summary.get("catchment"), dict)
        and "name" in summary["catchment"]
        and isinstance(summary.get("plans"), dict)
        and "current" in summary["plans"]
    )
    return summary if complete else None


def _holds_only_ours(folder: Path) -> bool:
    ours = set(catchment_files())
    return all(entry.is_file() and entry.name in ours for entry in folder.iterdir())


def sweep_leftovers(out: Path, names: Sequence[str]) -> list[Path]:
    """Remove hidden folders an interrupted catchment write left beside the catchment folders.

    Only hidden folders holding nothing but files ``compare --out`` writes are removed; run it
    before any write starts.

    Returns
    -------
    list of Path
        The folders removed.
    """
    parents = {(out / name).parent for name in names}
    removed = []
    for parent in sorted(parents):
        if not parent.is_dir():
            continue
        for entry in parent.iterdir():
            if entry.name.startswith(".") and entry.is_dir() and _holds_only_ours(entry):
                shutil.rmtree(entry)
                removed.append(entry)
    return removed


# ---- writing -----------------------------------------------------------------------------------


def write_catchment(result, target: Path) -> Path:
    """Write one catchment's folder exactly as ``compare --out`` does, all or nothing.

    An earlier folder there (incomplete, or from changed inputs) is moved aside, replaced by
    the new one, then removed; if writing fails it is put back.

    Parameters
    ----------
    result : coveryield.comparison.Comparison
        The catchment's comparison.
    target : Path
        ``OUT/<name>``.

    Raises
    ------
    coveryield.errors.OutputError
        If ``target`` holds files coveryield did not write, or cannot be written.
    """
    from coveryield.reports import write_outputs

    target = Path(target)
    if not target.exists():
        return write_outputs(result, target)
    if not target.is_dir() or not _holds_only_ours(target):
        raise OutputError(
            f"{target}: holds files coveryield did not write; expected only "
            f"{', '.join(catchment_files())} (move the others away)"
        )
    aside = target.with_name(f".{target.name}.replaced-{uuid.uuid4().hex[:8]}")
    try:
        os.rename(target, aside)
    except OSError as exc:
        raise OutputError(f"{target}: cannot be replaced ({exc.strerror})") from None
    try:
        write_outputs(result, target)
    except BaseException:
        os.rename(aside, target)
        raise
    shutil.rmtree(aside, ignore_errors=True)
    return target


def write_file_atomically(target: Path, write: Callable[[Path], None]) -> Path:
    """Write a file through a hidden temporary file beside it, then rename it into place.

    The temporary file is created like any other (the user's umask decides its permissions).
    """
    temporary = target.with_name(f".{target.name}-{uuid.uuid4().hex[:8]}.partial")
    try:
        write(Path(temporary))
        os.replace(temporary, target)
    except OSError as exc:
        raise OutputError(
            f"{target}: writing failed ({exc}); the earlier file is unchanged"
        ) from None
    finally:
        if os.path.exists(temporary):
            os.unlink(temporary)
    return target


# ---- the output folder as a whole ----------------------------------------------------------------


def check_out(out: str | os.PathLike, *, resume: bool) -> Path:
    """Check ``out`` before any work starts (nothing is created here).

    Without ``resume`` the folder must be new or empty; with it, new or holding an earlier
    batch (its record file).

    Raises
    ------
    coveryield.errors.OutputError
        If ``out`` is a file, or a folder that holds something else.
    """
    out = Path(out).expanduser()
    if out.exists() and not out.is_dir():
        raise OutputError(f"{out}: exists and is not a folder; expected a folder for the batch")
    if out.is_dir() and any(out.iterdir()):
        if not resume:
            raise OutputError(
                f"{out}: folder is not empty; choose a new folder, or pass "
                "--resume to finish an earlier batch there"
            )
        if not (out / RECORD_FILE).is_file():
            raise OutputError(
                f"{out}: holds no earlier batch ({RECORD_FILE} missing); "
                "expected the OUT folder of an earlier `coveryield batch`"
            )
    return out


def create_out(out: Path) -> Path:
    """Create the batch folder with an empty record, unless it holds one already.

    Raises
    ------
    coveryield.errors.OutputError
        If the folder cannot be created.
    """
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise OutputError(f"{out}: cannot create the batch folder ({exc.strerror})") from None
    if not (out / RECORD_FILE).is_file():
        write_record(out, {})
    return out
