"""Where a series' outputs go, and the check that they never replace an input file."""

from __future__ import annotations

from pathlib import Path

from cvfit.errors import InputError
from cvfit.report.output_names import OUTPUT_NAMES

__all__ = ["default_out_dir", "check_outputs_spare_inputs"]


def default_out_dir(manifest_path: Path) -> Path:
    return manifest_path.parent / f"{manifest_path.stem}_cvfit"


def check_outputs_spare_inputs(out_dir: Path, inputs: list[Path], manifest: Path) -> None:
    """Refuse an output folder where an output would replace an input file."""
    protected = {p.resolve() for p in inputs}
    for name in OUTPUT_NAMES.values():
        target = (out_dir / name).resolve()
        if target in protected:
            raise InputError(
                f"writing {name} into {out_dir} would overwrite the input file {target}; "
                "choose another --out folder",
                source=str(manifest),
                key="--out",
            )
