"""A pilot series' ``results.json`` as a source of a plan's noise and rough constants.

``[design] from_results`` names the results of a pilot run; the plan takes from it the
median per-file E½ standard error of the fitted files and, when ``[expect]`` gives no
constants, the fitted constants with their 95 % intervals as ranges. The file is read as
``cvfit run`` reads its inputs (a regular file of bounded size, :mod:`cvfit.io.limits`) and
every record the plan uses is checked for its shape: a file that is not a cvfit
results.json, or has been edited into another shape, is one :class:`InputError`.
"""

from __future__ import annotations

import json
import math
from pathlib import Path
from typing import Any

from cvfit.errors import InputError
from cvfit.io.limits import MAX_DATA_FILE_BYTES, read_regular_file

__all__ = ["read_pilot", "pilot_noise", "pilot_constants", "MAX_PILOT_BYTES"]

#: Largest pilot results.json read, bytes (a 2 000-file series writes some 10 MB).
MAX_PILOT_BYTES = MAX_DATA_FILE_BYTES

_KEY = "design.from_results"


def _err(src: str, message: str) -> InputError:
    return InputError(f"{_KEY}: {message}", source=src, key=_KEY)


def read_pilot(src: str, path_text: Any) -> dict[str, Any]:
    """The pilot results.json named by *path_text* (relative to the plan file *src*)."""
    if not isinstance(path_text, str) or not path_text:
        raise _err(src, "from_results must be the path of a results.json (a string)")
    path = Path(path_text)
    if not path.is_absolute():
        path = Path(src).parent / path
    try:
        raw = read_regular_file(
            path,
            limit=MAX_PILOT_BYTES,
            what="pilot results.json",
            missing="the pilot results.json does not exist; check the path",
            folder="this is a folder; name the pilot's results.json",
        )
    except InputError as exc:  # named in the plan: the plan file, the key, then the pilot
        raise _err(src, f"{path}: {exc.message}") from None
    try:
        data = json.loads(raw.decode("utf-8-sig"))
    except UnicodeDecodeError:
        raise _err(src, f"{path} is not UTF-8 text, not a cvfit results.json") from None
    except json.JSONDecodeError as exc:
        raise _err(src, f"{path} is not JSON ({exc.msg}, line {exc.lineno})") from None
    except RecursionError:
        raise _err(src, f"{path} is nested too deeply to be a cvfit results.json") from None
    if not isinstance(data, dict) or not isinstance(data.get("fit"), dict):
        raise _err(src, f"{path} is not a cvfit results.json (no 'fit' record)")
    return {**data, "path": str(path)}


def _finite(x: object) -> bool:
    return isinstance(x, int | float) and not isinstance(x, bool) and math.isfinite(x)


def _shape_error(src: str, pilot: dict[str, Any], what: str) -> InputError:
    return _err(src, f"{pilot['path']}: {what}; is this a results.json that cvfit wrote?")


def pilot_noise(src: str, pilot: dict[str, Any]) -> float:
    """The median E½ standard error of the pilot's fitted files, V."""
    records = pilot.get("voltammograms", [])
    if not isinstance(records, list) or not all(isinstance(v, dict) for v in records):
        raise _shape_error(src, pilot, "'voltammograms' is not a list of records")
    errs = sorted(
        float(v["E_half_stderr_V"])
        for v in records
        if v.get("used_in_fit") is True and _finite(v.get("E_half_stderr_V"))
        and v["E_half_stderr_V"] > 0
    )  # fmt: skip
    if not errs:
        raise _err(
            src,
            f"{pilot['path']} has no per-file E½ standard errors of fitted files; give "
            "E_half_stderr_V instead",
        )
    mid = len(errs) // 2
    return errs[mid] if len(errs) % 2 else 0.5 * (errs[mid - 1] + errs[mid])


def _quantity(
    src: str, pilot: dict[str, Any], q: object, name: str
) -> tuple[float, list[float] | None]:
    """(value, ci95 or None) of a fitted quantity record."""
    if not isinstance(q, dict) or not _finite(q.get("value")):
        raise _shape_error(src, pilot, f"the pilot fit has no finite value of {name}")
    ci = q.get("ci95")
    if ci is None:
        return float(q["value"]), None
    if not (isinstance(ci, list) and len(ci) == 2):
        raise _shape_error(src, pilot, f"the 95 % interval of {name} is not a [low, high] pair")
    if not all(c is None or _finite(c) for c in ci):
        raise _shape_error(src, pilot, f"the 95 % interval of {name} holds a non-number")
    whole = all(c is not None for c in ci)
    return float(q["value"]), [float(c) for c in ci] if whole else None


def pilot_constants(src: str, pilot: dict[str, Any]) -> dict[str, Any]:
    """[expect] keys from a pilot fit: values, and the 95 % intervals as ranges."""
    fit = pilot["fit"]
    out: dict[str, Any] = {}
    if fit.get("model") == "lingane":
        for key in ("log10_beta_ratio", "delta_ligands"):
            out[key], ci = _quantity(src, pilot, fit.get(key), key)
            if ci is not None:
                out[f"{key}_range"] = ci
    elif fit.get("model") == "stepwise":
        betas = fit.get("log10_beta") or []
        if not isinstance(betas, list) or not betas:
            raise _err(src, "the pilot stepwise fit has no constants")
        pairs = [_quantity(src, pilot, b, f"log10_beta_{j}") for j, b in enumerate(betas, 1)]
        form = "log10_beta_" + ("ox" if fit.get("fitted_state") == "ox" else "red")
        out[form] = [v for v, _ in pairs]
        if all(ci is not None for _, ci in pairs):
            out[f"{form}_range"] = [ci for _, ci in pairs]
        fixed = fit.get("fixed_log10_beta") or []
        if not isinstance(fixed, list) or not all(_finite(x) for x in fixed):
            raise _shape_error(src, pilot, "'fixed_log10_beta' is not a list of numbers")
        if fixed:
            other = "log10_beta_red" if form.endswith("ox") else "log10_beta_ox"
            out[other] = [float(x) for x in fixed]
            out["known_form"] = other[-3:].lstrip("_")
    else:
        raise _err(src, "the pilot results.json has no fitted model")
    return out
