"""The result a chemist looks for first: the constants with their intervals, and what the
reversibility screen left out — in words, not as a yes/no.

One source for the terminal summary (its first lines), the top of the HTML report, the
half-wave figure and the batch table. Every function reads the results.json mapping
(``SeriesResult.to_dict()``), so all of them show the numbers of that file.
"""

from __future__ import annotations

import math
from collections.abc import Mapping, Sequence
from typing import Any, TypeGuard

from cvfit.formatting import format_pm
from cvfit.titration.registry import MODEL_NAMES, model_named

__all__ = [
    "headline_lines",
    "quantity_text",
    "screen_sentence",
    "screen_short",
]

#: Most file names a sentence lists before it says "and k more".
MAX_NAMES = 5


def _finite(x: object) -> TypeGuard[float]:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def quantity_text(q: Mapping[str, Any] | None, *, scale: float = 1.0, unit: str = "") -> str:
    """``"5.4099 ± 0.0054, 95 % CI [5.3950, 5.4248]"`` (the interval in the value's digits).

    An interval side that is not finite (an open interval) shows as ``open``; a missing value
    as ``n/d``.
    """
    q = q or {}
    shown = format_pm(q.get("value"), q.get("stderr"), scale=scale, unit=unit)
    if shown == "n/d":
        return shown
    head = shown.split(" ± ")[0].split(" ")[0]
    digits = len(head.split(".")[1]) if "." in head else 0
    ci = list(q.get("ci95") or [None, None])

    def side(x: object) -> str:
        return f"{x * scale:.{digits}f}" if _finite(x) else "open"

    return f"{shown}, 95 % CI [{side(ci[0])}, {side(ci[1])}]"


def _names(files: Sequence[Mapping[str, Any]]) -> str:
    names = [str(f.get("file")) for f in files]
    if len(names) > MAX_NAMES:
        return ", ".join(names[:MAX_NAMES]) + f" and {len(names) - MAX_NAMES} more"
    return ", ".join(names)


def _was(files: Sequence[object]) -> str:
    return "was" if len(files) == 1 else "were"


def screen_sentence(data: Mapping[str, Any]) -> str:
    """What the reversibility screen found and what became of those files, in one sentence.

    ``"1 of 8 files failed the reversibility screen and was left out of the fit:
    tazine_07.csv."`` — or ``"All 8 files passed the reversibility screen."``
    """
    files, by_hand = _by_hand(data)
    return _screen_of(files, data.get("reference")) + _by_hand_text(by_hand)


def _by_hand(data: Mapping[str, Any]) -> tuple[list[Mapping[str, Any]], list[Mapping[str, Any]]]:
    """The files the screen decided, and those the manifest left out by hand (``exclude``)."""
    files = list(data.get("voltammograms") or [])
    return (
        [f for f in files if not f.get("excluded_by_user")],
        [f for f in files if f.get("excluded_by_user")],
    )


def _by_hand_text(files: Sequence[Mapping[str, Any]]) -> str:
    if not files:
        return ""
    reasons = "; ".join(f"{f.get('file')}: {f.get('excluded_by_user')}" for f in files)
    return f" Left out by hand ({len(files)}): {reasons}."


def _screen_of(
    files: Sequence[Mapping[str, Any]], data_reference: Mapping[str, Any] | None = None
) -> str:
    n = len(files)
    failed = [f for f in files if f.get("reversible") is False]
    unknown = [f for f in files if f.get("reversible") is None]
    if not failed and not unknown:
        return f"All {n} files passed the reversibility screen."
    if failed:
        what = f"{len(failed)} of {n} files failed the reversibility screen"
        if unknown:
            what += f" and {len(unknown)} could not be screened"
    else:
        what = f"{len(unknown)} of {n} files could not be screened for reversibility"
    bad = failed + unknown
    reference = [f for f in bad if not (f.get("ligand_M") or 0) > 0]
    used = [f for f in bad if f.get("used_in_fit") and f not in reference]
    recovered = [f for f in used if f.get("E_half_source") == "curve"]
    approximate = [f for f in used if f.get("E_half_source") == "midpoint"]
    kept = [f for f in used if f not in recovered and f not in approximate]
    left = [f for f in bad if f not in reference and f not in used]
    reversed_sign = [f for f in bad if _sign_reversed(f)]
    if left and not used and not reference and not (failed and unknown) and not reversed_sign:
        return f"{what} and {_was(left)} left out of the fit: {_names(left)}."
    if (
        recovered
        and not left
        and not kept
        and not approximate
        and not reference
        and not (failed and unknown)
    ):
        return (
            f"{what}; E½ of {_names(recovered)} came from a fit of the whole curve, which "
            "rejoined the titration fit."
        )
    pieces = []
    if left:
        pieces.append(f"{_names(left)} {_was(left)} left out of the fit")
    if recovered:
        pieces.append(
            f"E½ of {_names(recovered)} came from a fit of the whole curve, used in the fit"
        )
    if approximate:
        pieces.append(
            f"E½ of {_names(approximate)} came from the peak midpoint with an extra error for "
            "the unknown transfer coefficient, used in the fit"
        )
    if kept:
        pieces.append(
            f"{_names(kept)} {_was(kept)} kept in the fit (exclude_non_nernstian = false)"
        )
    gave = [f for f in reference if _gave_reference(f, data_reference)]
    if gave:
        pieces.append(f"{_names(gave)} still gave E½(s), the ligand-free reference")
    if reversed_sign:
        pieces.append(
            f"{_names(reversed_sign)} {'has' if len(reversed_sign) == 1 else 'have'} no "
            "forward peak but a clean one with the current's sign reversed: set "
            'anodic_current = "negative" in [import] if the files give cathodic current '
            "positive"
        )
    return f"{what}: " + "; ".join(pieces) + "."


def _gave_reference(file: Mapping[str, Any], reference: Mapping[str, Any] | None) -> bool:
    """Whether a ligand-free file that failed the screen still gave E½(s)."""
    if file.get("E_half_V") is None:
        return False
    return reference is None or (
        reference.get("E_half_V") is not None
        and file.get("file") in (reference.get("files") or ())
    )


def _sign_reversed(file: Mapping[str, Any]) -> bool:
    return any(f.get("code") == "CURRENT_SIGN_REVERSED" for f in file.get("flags") or ())


def screen_short(data: Mapping[str, Any]) -> str:
    """The screen's outcome in a table cell: ``"all 8 passed"``, ``"1 of 8 left out"``
    (files left out by hand not counted)."""
    files, _ = _by_hand(data)
    bad = [f for f in files if f.get("reversible") is not True]
    if not bad:
        return f"all {len(files)} passed"
    recovered = [f for f in bad if f.get("used_in_fit") and f.get("E_half_source") == "curve"]
    approximate = [f for f in bad if f.get("used_in_fit") and f.get("E_half_source") == "midpoint"]
    kept = [f for f in bad if f.get("used_in_fit") and f not in recovered + approximate]
    if recovered or kept or approximate:
        parts = [
            f"{len(recovered)} by curve fit" if recovered else "",
            f"{len(approximate)} by midpoint ± α" if approximate else "",
            f"{len(kept)} kept" if kept else "",
        ]
        return f"{len(bad)} of {len(files)} failed, " + ", ".join(p for p in parts if p)
    return f"{len(bad)} of {len(files)} failed, left out"


def _no_constants(data: Mapping[str, Any]) -> str:
    fit = data.get("fit") or {}
    if any(fl.get("code") == "NO_TITRATION" for fl in data.get("flags") or []):
        return "No titration: every file is ligand-free, so the couple is characterised only."
    why = [
        fl
        for fl in [*(data.get("flags") or []), *(fit.get("flags") or [])]
        if fl.get("severity") == "error"
    ]
    reason = f": {why[0].get('message')}" if why else "; see the flags below"
    return f"No constants{reason}."


def constant_lines(fit: Mapping[str, Any]) -> list[str]:
    """The headline constants of a fit mapping: log10(β_ox/β_red) and p − q (Lingane), or
    every log10 β_j (stepwise), or the model's own (``constant_lines`` of a model that has
    them: every pKa, dE½/dT); empty when the fit gave none."""
    model = fit.get("model")
    own = getattr(model_named(model), "constant_lines", None) if model in MODEL_NAMES else None
    if own is not None:
        return list(own(fit))
    betas = [q for q in fit.get("log10_beta") or [] if isinstance(q, Mapping)]
    if betas:
        if all(q.get("value") is None for q in betas):
            return []
        lines = []
        for k, q in enumerate(betas):
            j = q.get("j", k + 1)
            text = f"log10 β{j} = {quantity_text(q)}"
            if q.get("determined") is False:
                text += " (not determined by this ligand range)"
            lines.append(text)
        return lines
    ratio = fit.get("log10_beta_ratio") or {}
    if ratio.get("value") is None:
        return []
    return [
        f"log10(β_ox/β_red) = {quantity_text(ratio)}",
        f"p − q = {quantity_text(fit.get('delta_ligands'))}",
    ]


def headline_lines(data: Mapping[str, Any]) -> list[str]:
    """The first lines of every report: the constants ± standard error with their 95 %
    intervals (stepwise: each overall log10 β_j), the points they rest on, and the screen's
    outcome in words.
    """
    fit = data.get("fit") or {}
    lines = constant_lines(fit)
    if lines:
        n, model = fit.get("n_points"), fit.get("model", "")
        title = model_named(model).title if model in MODEL_NAMES else model
        lines.append(f"({title} fit on {n} files; ± standard error)")
    else:
        lines.append(_no_constants(data))
    lines.append(screen_sentence(data))
    return lines
