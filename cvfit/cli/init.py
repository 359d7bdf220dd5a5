"""``cvfit init FOLDER [--out NAME.toml] [--table]``: write a first, commented manifest for
the exports in a folder.

The reading and the text are :mod:`cvfit.io.init_manifest`'s; this module finds the
folder, leaves out the files cvfit wrote itself, never replaces a file, and prints what
was written and what is still to fill in.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from cvfit.errors import InputError, printable

_CMD = "<command line>"
#: The files table ``--table`` writes beside the manifest.
TABLE_NAME = "titration.csv"

INIT_DESCRIPTION = """\
Write FOLDER/series.toml, a commented manifest for the exports in FOLDER (*.csv, *.txt,
*.tsv, *.dat, *.asc; not its sub-folders, nor files cvfit wrote there), listed in natural
order (L2 before L10). Each file is read as 'cvfit run' reads it; the comments above its
entry say how (encoding, delimiter, decimal mark, lines skipped above the data, the
columns taken and their units, the scan rate found). A file the reader refuses is listed
commented out with the reason.

From the file names: concentrations 5mM, 250uM, 250µM, 0.1M, 0p5mM -> ligand_M (mol/L);
blank, free, noL, no_ligand, 0mM -> ligand_M = 0; added volumes 0.25uL, 25 µL, 0.5mL ->
added_mL (mL, with a [titration] table to fill in); add_3 -> addition 3 (its added_mL to
fill in); scan rates 100mVs, 50 mV_s, 0.1Vs -> scan_rate_V_s when the file gives none.
A number is read only where it starts a word of the name and carries a unit; a name
that says two things (1mM_5mM, 2_5mM, blank_5mM) gives nothing.

Whatever the names do not give is written as "FILL IN": 'cvfit run' refuses the manifest
while any is left, listing them with the line of the first. The command prints the list.
"""

INIT_EPILOG = """\
files table (--table, or [series] files_table = "NAME.csv" in any manifest): one row per
  file, in order; header cells are [[voltammogram]] keys (case ignored): file (required),
  ligand_M or added_mL, and optional scan_rate_V_s, label, exclude, pH, temperature_C,
  resistance_ohm, rotation_rate_rpm, cycle, anodic_current ...; an empty cell is "not
  given"; UTF-8 with or without a byte-order mark, comma- or semicolon-separated (then a
  decimal comma is read too). Each cell is checked as the key is in the TOML; an error
  names the table, the line and the column. Not together with [[voltammogram]] tables.

never overwrites: an existing manifest (or files table) is an error; write another with
  --out OTHER.toml.
exit status: 0 written; 2 bad input (no such folder, no exports in it, a file exists).
"""


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "init",
        help="write a commented series.toml for the exports in a folder",
        description=INIT_DESCRIPTION,
        epilog=INIT_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument(
        "folder", metavar="FOLDER", help="the folder holding the exported voltammograms"
    )
    p.add_argument(
        "--out",
        metavar="NAME.toml",
        default="series.toml",
        help="manifest file name, in FOLDER (default: series.toml); never replaced",
    )
    p.add_argument(
        "--table",
        action="store_true",
        help=f"list the files in FOLDER/{TABLE_NAME} (one row each: file, ligand_M or "
        "added_mL, scan_rate_V_s; spreadsheet-friendly) and point the manifest at it "
        "([series] files_table)",
    )
    p.set_defaults(handler=handle)


def _skip_reason(name: str) -> str | None:
    """Why a file in the folder is not an export: one cvfit wrote (None: an export)."""
    from cvfit.cli.batch import SUMMARY_STEM
    from cvfit.report.output_names import is_output_name

    if name.startswith(SUMMARY_STEM):
        return "a batch summary cvfit wrote"
    if is_output_name(name):
        return "an output file name of cvfit run"
    return None


def _folder(text: str) -> Path:
    folder = Path(text)
    if not folder.exists():
        raise InputError("folder not found; check the path", source=text)
    if not folder.is_dir():
        raise InputError("this is not a folder; name the folder holding the exports", source=text)
    from cvfit.report.ownership import MARKER_NAME

    if (folder / MARKER_NAME).exists():
        raise InputError(
            "this is an output folder cvfit wrote; name the folder holding the exports",
            source=text,
        )
    return folder


def _targets(folder: Path, out: str, table: bool) -> tuple[Path, Path | None]:
    if Path(out).name != out or not out.endswith(".toml"):
        raise InputError(
            f"--out {out!r}: give a file name ending in .toml (it is written in the folder)",
            source=_CMD,
            key="--out",
        )
    targets = (folder / out, folder / TABLE_NAME if table else None)
    for path in targets:
        if path is not None and (path.exists() or path.is_symlink()):
            raise InputError(
                "exists; cvfit init never replaces a file (there is no --force): "
                "write another with --out OTHER.toml, or edit this one",
                source=str(path),
            )
    return targets


def _write_new(path: Path, text: str) -> None:
    """Write *text* into a new file ("x": an existing one, even one made meanwhile, is
    never replaced)."""
    try:
        with open(path, "x", encoding="utf-8", newline="\n") as f:
            f.write(text)
    except FileExistsError:
        raise InputError("exists; cvfit init never replaces a file", source=str(path)) from None


def handle(args: argparse.Namespace) -> int:
    from cvfit.io.init_manifest import find_exports, manifest_texts, survey_export

    folder = _folder(args.folder)
    manifest, table = _targets(folder, args.out, args.table)
    names, skipped = find_exports(folder, skip=_skip_reason)
    if not names:
        left = f" ({len(skipped)} left out as cvfit's own)" if skipped else ""
        raise InputError(
            "no exports in this folder (*.csv, *.txt, *.tsv, *.dat, *.asc)"
            f"{left}; name the folder holding the exported voltammograms",
            source=args.folder,
        )
    surveys = [survey_export(folder, n) for n in names]
    title = folder.resolve().name or "series"
    texts = manifest_texts(surveys, title=title, table_name=TABLE_NAME if table else None)
    if table is not None and texts.table is not None:
        _write_new(table, texts.table)
    _write_new(manifest, texts.manifest)
    refused = [s for s in surveys if s.refused is not None]
    out = sys.stdout.write
    listed = f"{len(surveys) - len(refused)} file(s)"
    where = f" and {table}" if table is not None else ""
    out(f"wrote {printable(manifest)}{printable(where)}: {listed} in natural order")
    out(f", {len(refused)} refused by the reader (commented out)\n" if refused else "\n")
    for name, why in skipped:
        out(f"  left out {printable(name)}: {why}\n")
    out(f'still to fill in ({len(texts.to_fill)}), marked "FILL IN":\n')
    for item in texts.to_fill:
        out(f"  {printable(item)}\n")
    out(f"then: cvfit run {printable(manifest)}\n")
    return 0
