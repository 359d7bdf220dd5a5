"""Where a series' outputs go, and the check that they never replace an input file."""

from __future__ import annotations

from pathlib import Path

from cvfit.errors import InputError
from cvfit.report.ownership import resolved_output_folder

__all__ = ["default_out_dir", "check_outputs_spare_inputs"]


def default_out_dir(manifest_path: Path) -> Path:
    return manifest_path.parent / f"{manifest_path.stem}_cvfit"


def check_outputs_spare_inputs(out_dir: Path, inputs: list[Path], manifest: Path) -> None:
    """Refuse an output folder that holds an input: the folder is replaced whole, so writing
    the outputs would overwrite (or remove) the input file.

    Raises
    ------
    InputError
        An input lies in *out_dir*, or *out_dir* is a symbolic link loop.
    """
    real_out = resolved_output_folder(out_dir).resolve()
    for p in inputs:
        real = p.resolve()
        if real_out in real.parents:
            raise InputError(
                f"writing the outputs into {out_dir} would overwrite the input file {real}, "
                "which lies in that folder (cvfit replaces its output folder whole); choose "
                "another --out folder",
                source=str(manifest),
                key="--out",
            )
