"""A results.json read back into records: ``cvfit.load_results("out/results.json")``.

The constants with their standard errors and 95 % intervals, the per-file E½ rows and the
flags, as frozen records; the whole mapping stays at hand as ``data``. A file that is not
a cvfit results.json is an :class:`~cvfit.errors.InputError` naming it.
"""

from __future__ import annotations

import json
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from cvfit.errors import InputError
from cvfit.flags import Flag

__all__ = ["Constant", "FileRow", "LoadedResults", "load_results"]

#: Keys every results.json carries (the schema's required keys that identify it).
_REQUIRED = ("cvfit_version", "series", "voltammograms", "fit", "flags")


@dataclass(frozen=True)
class Constant:
    """One fitted constant: value, standard error and 95 % interval (None: not measured)."""

    name: str
    value: float | None
    stderr: float | None
    ci95: tuple[float, float] | None


@dataclass(frozen=True)
class FileRow:
    """One file's row: its concentration, the E½ it contributed (V) and its flags."""

    file: str
    label: str | None
    ligand_M: float | None
    E_half_V: float | None
    E_half_stderr_V: float | None
    reversible: bool | None
    used_in_fit: bool | None
    flags: tuple[Flag, ...]


@dataclass(frozen=True)
class LoadedResults:
    """A run read back: the version that wrote it, constants by name, files, flags."""

    path: Path
    cvfit_version: str
    title: str | None
    model: str | None
    constants: dict[str, Constant]
    files: tuple[FileRow, ...]
    flags: tuple[Flag, ...]
    data: dict[str, Any]


def _is_quantity(x: object) -> bool:
    return isinstance(x, Mapping) and "value" in x and "stderr" in x


def _constant(name: str, q: Mapping[str, Any]) -> Constant:
    ci = q.get("ci95")
    return Constant(name, q["value"], q["stderr"], None if ci is None else (ci[0], ci[1]))


def _constants(fit: Mapping[str, Any]) -> dict[str, Constant]:
    """Every quantity of the fit record; item j of a list (log10_beta) as ``name_j``."""
    found = {}
    for key, x in fit.items():
        if _is_quantity(x):
            found[key] = _constant(key, x)
        elif isinstance(x, list) and x and all(_is_quantity(q) for q in x):
            for j, q in enumerate(x, start=1):
                found[f"{key}_{j}"] = _constant(f"{key}_{j}", q)
    return found


def _flags(items: Any) -> tuple[Flag, ...]:
    return tuple(Flag(f["code"], f["message"], f.get("severity", "warning")) for f in items)


def _row(f: Mapping[str, Any]) -> FileRow:
    return FileRow(
        file=f["file"],
        label=f.get("label"),
        ligand_M=f.get("ligand_M"),
        E_half_V=f.get("E_half_V"),
        E_half_stderr_V=f.get("E_half_stderr_V"),
        reversible=f.get("reversible"),
        used_in_fit=f.get("used_in_fit"),
        flags=_flags(f.get("flags") or []),
    )


def load_results(path: str | Path) -> LoadedResults:
    """Read a results.json that cvfit wrote.

    Raises
    ------
    InputError
        When the file cannot be read, is not JSON, or is not a cvfit results.json.
    """
    path = Path(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise InputError(f"cannot read it ({exc.strerror or exc})", source=str(path)) from None
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputError(
            f"not JSON ({exc}); give the results.json of a cvfit run", source=str(path)
        ) from None
    missing = [k for k in _REQUIRED if not isinstance(data, dict) or k not in data]
    if missing:
        raise InputError(
            f"not a cvfit results.json (no {', '.join(missing)}); give the results.json "
            "of a cvfit run",
            source=str(path),
        )
    try:
        fit = data["fit"] or {}
        return LoadedResults(
            path=path,
            cvfit_version=str(data["cvfit_version"]),
            title=(data["series"] or {}).get("title"),
            model=fit.get("model"),
            constants=_constants(fit),
            files=tuple(_row(f) for f in data["voltammograms"]),
            flags=_flags([*data["flags"], *(fit.get("flags") or [])]),
            data=data,
        )
    except (KeyError, TypeError, ValueError, AttributeError, IndexError) as exc:
        raise InputError(
            f"a results.json this cvfit cannot read ({type(exc).__name__}: {exc}); "
            f"it was written by cvfit {data['cvfit_version']}",
            source=str(path),
        ) from None
