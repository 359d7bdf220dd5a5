"""The TOML manifest of a titration series (``schemas/series.schema.json``, ``docs/manifest.md``).

:func:`load_manifest` reads it with :mod:`tomllib`, rejects unknown keys by name (with the
closest valid spelling), checks every value and returns frozen records. Error messages
name the manifest, the line of the offending key where it can be found, and the key path
(``series.electrons``, ``voltammogram[3].file``).
"""

from __future__ import annotations

import difflib
import os
import re
import tomllib
from dataclasses import replace
from pathlib import Path
from typing import Any

from cvfit.errors import InputError
from cvfit.io import files_table as _files_table
from cvfit.io import manifest_keys as _keys
from cvfit.io import manifest_standard as _standard
from cvfit.io import manifest_technique as _technique
from cvfit.io import manifest_titration as _titration
from cvfit.io import manifest_variables as _variables
from cvfit.io.limits import MAX_MANIFEST_BYTES, read_regular_file
from cvfit.io.manifest_records import FitSettings, Manifest, SeriesSettings, VoltammogramEntry
from cvfit.io.manifest_spec import (
    PLACEHOLDER,
    Table,
    bind,
    clean_value,
    clean_values,
    placeholders,
    toml_text,
)
from cvfit.io.options import IMPORT_KEYS, ImportOptions
from cvfit.io.text import decode_utf8, split_lines
from cvfit.reversibility_criteria import ReversibilityCriteria

__all__ = [
    "Manifest",
    "SeriesSettings",
    "FitSettings",
    "VoltammogramEntry",
    "load_manifest",
    "resistance_for",
]

#: Valid key names of each table (derived from the definition; kept for callers).
SERIES_KEYS = _keys.SERIES.names
FIT_KEYS = _keys.FIT.names
REVERSIBILITY_KEYS = _keys.REVERSIBILITY.names
ENTRY_KEYS = _keys.VOLTAMMOGRAM.names
TABLES = tuple(t.name for t in _keys.TABLES)
HALF_WAVE_SOURCES = _keys.HALF_WAVE_SOURCES
GLOBAL_SHARED_NAMES = _keys.GLOBAL_SHARED_NAMES
MAX_COMPLEXES_LIMIT = _keys.MAX_COMPLEXES_LIMIT


class _Locator:
    """Line numbers of tables and keys in the raw TOML text (best effort)."""

    def __init__(self, text: str) -> None:
        self.lines = split_lines(text)

    def _table_start(self, table: str, index: int | None) -> int | None:
        pattern = (
            re.compile(rf"^\s*\[\[\s*{table}\s*\]\]")
            if index is not None
            else re.compile(rf"^\s*\[\s*{table}\s*\]")
        )
        seen = 0
        for k, line in enumerate(self.lines):
            if pattern.match(line):
                seen += 1
                if index is None or seen == index:
                    return k
        return None

    def line(self, table: str | None, key: str | None = None, index: int | None = None):
        start = -1 if table is None else self._table_start(table, index)
        if start is None:
            return None
        if key is None:
            return start + 1
        key_re = re.compile(rf"^\s*[\"']?{re.escape(key)}[\"']?\s*=")
        for k in range(start + 1, len(self.lines)):
            if k > start + 1 and table is not None and re.match(r"^\s*\[", self.lines[k]):
                break
            if table is None and re.match(r"^\s*\[", self.lines[k]):
                break
            if key_re.match(self.lines[k]):
                return k + 1
        return start + 1 if table is not None else None


class _Loader:
    def __init__(self, path: Path, text: str) -> None:
        self.path = path
        self.source = str(path)
        self.where = _Locator(text)
        #: The files table the entries come from (``[series] files_table``), if any.
        self.files: _files_table.FilesTable | None = None

    def fail(self, message: str, keypath: str, line: int | None) -> InputError:
        if self.files is not None and (told := self.files.error(message, keypath)):
            return told  # about a row of the files table: its line and column
        return InputError(f"{keypath}: {message}", source=self.source, line=line, key=keypath)

    def check_keys(self, table: dict, valid: tuple[str, ...], name: str, index: int | None):
        for key in table:
            if key in valid:
                continue
            close = difflib.get_close_matches(key, valid, n=1, cutoff=0.6)
            hint = f"did you mean {close[0]!r}?" if close else "valid keys: " + ", ".join(valid)
            label = f"[[{name}]] #{index}" if index is not None else f"[{name}]"
            if name == "":
                label = "top level"
            raise self.fail(
                f"unknown key {key!r} in {label}; {hint}",
                self.keypath(name, key, index),
                self.where.line(name or None, key, index),
            )

    @staticmethod
    def keypath(table: str, key: str | None, index: int | None) -> str:
        base = f"{table}[{index}]" if index is not None else table
        if not base:
            return key or ""
        return f"{base}.{key}" if key else base

    def table(self, data: dict, name: str) -> dict:
        value = data.get(name, {})
        if not isinstance(value, dict):
            raise self.fail(
                f"must be a table ([{name}]), got {value!r}", name, self.where.line(None, name)
            )
        return value

    def build(self, cls, values: dict, table: str, index: int | None = None):
        try:
            return cls(**values)
        except InputError as exc:
            key = exc.key
            raise self.fail(
                exc.message, self.keypath(table, key, index), self.where.line(table, key, index)
            ) from None

    def require(self, values: dict, key: str, table: str, index: int | None = None) -> None:
        if key not in values:
            raise self.fail(
                "required key is missing; add it to the table",
                self.keypath(table, key, index),
                self.where.line(table, None, index),
            )

    def keys_of(self, raw: dict, table: Table, index: int | None = None) -> dict:
        """*raw* (one table as read) with its keys checked against the definition: no
        unknown key, every required key there."""
        self.check_keys(raw, table.names, table.name, index)
        for key in table.all_keys:
            if key.required:
                self.require(raw, key.name, table.name, index)
        return raw

    def section(self, data: dict, table: Table) -> dict:
        """The ``[table]`` of the manifest, its keys checked (an absent table is empty)."""
        return self.keys_of(self.table(data, table.name), table)


def _fields(values: dict, table: Table) -> dict:
    """*values* keyed by the record fields that hold them (``global`` → ``global_fit``)."""
    return {table.key(k).attribute: v for k, v in values.items()}


def _read(path: Path) -> tuple[str, dict[str, Any]]:
    source = str(path)
    raw = read_regular_file(
        path,
        limit=MAX_MANIFEST_BYTES,
        what="manifest",
        missing="manifest not found; check the path",
        folder="this is a folder; name the manifest .toml file",
    )
    text = decode_utf8(raw, source=source, what="manifest")
    try:
        return text, tomllib.loads(text)
    except RecursionError:
        raise InputError(
            "the TOML is nested too deeply to read (arrays or tables inside one another "
            "hundreds of levels deep); a manifest needs two levels: fix the manifest",
            source=source,
        ) from None
    except tomllib.TOMLDecodeError as exc:
        msg = str(exc)
        m = re.search(r"\(at line (\d+), column (\d+)\)", msg)
        line = int(m.group(1)) if m else None
        what = msg[: m.start()].strip() if m else msg
        if m is None and "(at end of document)" in msg:
            line = max(len(split_lines(text)), 1)
            what = msg.replace("(at end of document)", "at the end of the file").strip()
        col = f" (column {m.group(2)})" if m else ""
        raise InputError(
            f"TOML syntax error{col}: {what}; fix the manifest", source=source, line=line
        ) from None


def load_manifest(path: str | os.PathLike[str]) -> Manifest:
    """Read and check a series manifest.

    Parameters
    ----------
    path : path-like
        The TOML file. Voltammogram files are resolved against its folder.

    Returns
    -------
    Manifest

    Raises
    ------
    InputError
        Missing or unreadable manifest, TOML syntax error, unknown key (with the closest
        valid key), missing required key, wrong type or range, a listed file that does not
        exist, the same file listed twice, or no voltammogram at all.
    """
    p = Path(path)
    text, data = _read(p)
    try:
        return _check(p, text, data)
    except RecursionError:  # a value nested deeply enough to pass tomllib, not our checks
        raise InputError(
            "a value is nested too deeply (arrays inside one another hundreds of levels "
            "deep); fix the manifest",
            source=str(p),
        ) from None


def _check(p: Path, text: str, data: dict[str, Any]) -> Manifest:
    ld = _Loader(p, text)
    folder = p.resolve().parent
    ld.check_keys(data, TABLES, "", None)
    if left := placeholders(data):
        first, in_table, first_key, at = left[0]
        raise ld.fail(
            f"{len(left)} value(s) still {toml_text(PLACEHOLDER)}: "
            f"{', '.join(p[0] for p in left)}; replace each with its value (the comment "
            "beside it says what it is)",
            first,
            ld.where.line(in_table, first_key, at),
        )
    if "series" not in data:
        raise ld.fail(
            "the manifest needs a [series] table with at least electrons = n", "series", None
        )
    titration = _titration.load_titration(ld, data)
    series = dict(ld.section(data, _keys.SERIES))
    where = {"reference_at": series.pop("reference_at", None)}
    files_table = series.pop("files_table", None)
    reference_at = ld.build(_reference_at, where, "series")
    series_settings = ld.build(SeriesSettings, {"title": p.stem, **series}, "series")
    imp = ld.section(data, _keys.IMPORT)
    import_options = ld.build(ImportOptions, imp, "import")
    fit = ld.section(data, _keys.FIT)
    fit_settings = ld.build(FitSettings, _fields(fit, _keys.FIT), "fit")
    rev = ld.section(data, _keys.REVERSIBILITY)
    criteria = ld.build(_criteria, rev, "reversibility")
    standard = _load_standard(ld, data, series_settings)
    points = _variables.load_points(ld, data, fit_settings.model)
    if points and fit_settings.global_fit:
        raise ld.fail(
            "the global curve fit needs a voltammogram for every E½; leave out [[point]] "
            "tables or set global = false",
            "fit.global",
            ld.where.line("fit", "global"),
        )
    technique = _technique.load_technique(
        ld, data, series_settings.technique, fit_settings.global_fit
    )
    entries_raw = data.get("voltammogram")
    if files_table is not None:
        ld.files = _read_files_table(ld, files_table, folder, entries_raw is not None)
        entries_raw = list(ld.files.rows)
    if entries_raw is None and points:
        entries_raw = []  # a series of [[point]] tables only
    elif entries_raw is None or entries_raw == []:
        raise ld.fail(
            "no [[voltammogram]] tables; list at least one file (or E½ values as [[point]] "
            "tables)",
            "voltammogram",
            None,
        )
    if not isinstance(entries_raw, list) or not all(isinstance(e, dict) for e in entries_raw):
        raise ld.fail(
            "write one [[voltammogram]] table (double brackets) per file",
            "voltammogram",
            ld.where.line("voltammogram"),
        )
    entries = []
    seen: dict[tuple[Path, object], int] = {}
    for index, raw in enumerate(entries_raw, start=1):
        ld.keys_of(raw, _keys.VOLTAMMOGRAM, index)
        needs_ligand = _variables.VARIABLE_OF_MODEL[fit_settings.model] == "ligand_M"
        _titration.check_entry(ld, raw, index, titration, needs_ligand=needs_ligand)
        per_file = {k: raw[k] for k in IMPORT_KEYS if k in raw}
        options = ld.build(ImportOptions, {**imp, **per_file}, "voltammogram", index)
        name = raw["file"]
        if not isinstance(name, str) or not name.strip():
            raise ld.fail(
                f"must be a non-empty text string, got {name!r}",
                f"voltammogram[{index}].file",
                ld.where.line("voltammogram", "file", index),
            )
        try:
            resolved = (folder / name).resolve()
        except (RuntimeError, OSError, ValueError):  # a symbolic link loop, a NUL byte
            raise ld.fail(
                f"file {name!r} cannot be resolved (a symbolic link loop or a bad name); "
                "name the data file itself",
                f"voltammogram[{index}].file",
                ld.where.line("voltammogram", "file", index),
            ) from None
        own = _fields({k: v for k, v in raw.items() if k not in IMPORT_KEYS}, _keys.VOLTAMMOGRAM)
        values = {**own, "file": resolved, "import_options": options}
        entry = ld.build(VoltammogramEntry, values, "voltammogram", index)
        key = (resolved, options.cycle)
        if not resolved.is_file() or key in seen:
            # the line is looked up only for the message: scanning the manifest for every
            # entry made loading a 1 000-file manifest quadratic
            file_line = ld.where.line("voltammogram", "file", index)
        if not resolved.is_file():
            if resolved.exists():
                raise ld.fail(
                    f"file {name!r} is not a regular file (a folder, FIFO, device or socket: "
                    f"{resolved}); list the data files themselves",
                    f"voltammogram[{index}].file",
                    file_line,
                )
            raise ld.fail(
                f"file {name!r} not found (looked for {resolved}); check the name, paths are "
                "relative to the manifest's folder",
                f"voltammogram[{index}].file",
                file_line,
            )
        if key in seen:
            raise ld.fail(
                f"file {name!r} is listed twice with the same cycle (also "
                f"voltammogram[{seen[key]}]); list each file once, or each cycle of it once "
                "with its own cycle = N",
                f"voltammogram[{index}].file",
                file_line,
            )
        seen[key] = index
        entries.append(entry)
    entries = _titration.apply_additions(_name_cycles(entries), titration)
    _titration.check_metal_given(ld, entries, series_settings.metal_total_M)
    _variables.check_variable_series(ld, tuple(entries), points, fit_settings.model)
    return Manifest(
        path=p.resolve(),
        folder=folder,
        series=series_settings,
        import_options=import_options,
        fit=fit_settings,
        reversibility=criteria,
        voltammograms=tuple(entries),
        internal_standard=standard,
        points=points,
        reference_at=reference_at,
        technique=technique,
        titration=titration,
    )


def _read_files_table(
    ld: _Loader, name: object, folder: Path, with_entries: bool
) -> _files_table.FilesTable:
    """``[series] files_table``: the rows of the table it names, as [[voltammogram]] tables."""
    line = ld.where.line("series", "files_table")
    try:
        name = clean_value(_keys.SERIES.key("files_table"), name)
    except InputError as exc:
        raise ld.fail(exc.message, "series.files_table", line) from None
    if with_entries:
        raise ld.fail(
            "give the files either in the table or as [[voltammogram]] tables, not both",
            "series.files_table",
            line,
        )
    # named as the manifest is named (relative stays relative); read from its folder
    shown = Path(ld.source).parent / str(name)
    path = shown if shown.resolve() == (folder / str(name)).resolve() else folder / str(name)
    return _files_table.read_files_table(path, _keys.VOLTAMMOGRAM, name=str(name))


def _reference_at(reference_at: object) -> str | None:
    """``[series] reference_at``: kept beside the series settings (the temperature model's)."""
    return clean_value(_keys.SERIES.key("reference_at"), reference_at)  # type: ignore[return-value]


def _criteria(**values: object) -> ReversibilityCriteria:
    """``[reversibility]`` checked here: its record sits below the manifest's layer."""
    return ReversibilityCriteria(**clean_values(values, _keys.REVERSIBILITY))  # type: ignore[arg-type]


def _name_cycles(entries: list[VoltammogramEntry]) -> list[VoltammogramEntry]:
    """Entries of one file listed once per cycle get names that tell them apart
    (``"run.csv [cycle 2]"``); every other entry keeps its file name."""
    count: dict[Path, int] = {}
    for e in entries:
        count[e.file] = count.get(e.file, 0) + 1
    return [
        replace(e, name=f"{e.name} [cycle {e.import_options.cycle}]") if count[e.file] > 1 else e
        for e in entries
    ]


def _load_standard(
    ld: _Loader, data: dict, series: SeriesSettings
) -> _standard.InternalStandard | None:
    """The ``[internal_standard]`` table, checked against ``series.analyte_window_V``."""
    if "internal_standard" not in data:
        return None
    table = ld.section(data, _keys.INTERNAL_STANDARD)
    standard = ld.build(_standard.InternalStandard, table, "internal_standard")
    analyte = series.analyte_window_V
    if analyte is None:
        raise ld.fail(
            "required with [internal_standard]: give the analyte's potential range [low, high] "
            "so that its peaks are not confused with the standard's",
            "series.analyte_window_V",
            ld.where.line("series"),
        )
    if not _standard.windows_apart(analyte, standard.window_V):
        raise ld.fail(
            f"the standard's window {list(standard.window_V)} overlaps "
            f"series.analyte_window_V {list(analyte)}; give two separate potential ranges",
            "internal_standard.window_V",
            ld.where.line("internal_standard", "window_V"),
        )
    return standard


def resistance_for(entry: object, series: object) -> float | None:
    """R_u of one file: its own ``resistance_ohm``, else the series value, else None."""
    own = getattr(entry, "resistance_ohm", None)
    return own if own is not None else getattr(series, "resistance_ohm", None)


#: The definition of the manifest with each key's default read from its record
#: (:func:`cvfit.io.manifest_spec.bind`, which also fails at import when a record and its
#: table differ); the schema and the docs' key tables are made from it.
_IMPORT = bind(ImportOptions, _keys.IMPORT)
DEFINITION: tuple[Table, ...] = (
    bind(SeriesSettings, _keys.SERIES),
    _IMPORT,
    bind(FitSettings, _keys.FIT),
    bind(ReversibilityCriteria, _keys.REVERSIBILITY),
    bind(_standard.InternalStandard, _keys.INTERNAL_STANDARD),
    bind(_technique.TechniqueSettings, _keys.TECHNIQUE, extra=("name",)),
    bind(_titration.TitrationSettings, _keys.TITRATION),
    replace(
        bind(VoltammogramEntry, _keys.VOLTAMMOGRAM, extra=("file", "import_options", "volume_mL")),
        includes=(_IMPORT,),
    ),
    bind(_variables.PointEntry, _keys.POINT, extra=("name",)),
)
