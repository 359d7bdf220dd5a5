"""How a manifest key is declared, checked and described: one definition, three uses.

Every key of the manifest is one :class:`Key` in a :class:`Table`
(:mod:`cvfit.io.manifest_keys` holds them all). From that one declaration come

* the loader's checks (:func:`clean_values`, :func:`clean_record`): type, range, allowed
  values, required keys and keys that need another; each failure a one-line
  :class:`~cvfit.errors.InputError` naming the key and saying what to write;
* the JSON Schema of the manifest and the key tables of docs/manifest.md
  (:mod:`cvfit.io.manifest_reference` writes them from the same keys).

The records the manifest travels in stay typed frozen dataclasses; :func:`bind` ties a
record to its table once, at import, and fails at once when a field has no key, a key no
field, or the record's defaults are not what the table can hold — so the record, the
checks, the schema and the docs cannot drift apart.
"""

from __future__ import annotations

import json
import math
from collections.abc import Mapping
from dataclasses import MISSING, dataclass, fields, replace
from dataclasses import field as dc_field
from typing import Any, Literal

from cvfit.errors import InputError

__all__ = [
    "Key",
    "Table",
    "bind",
    "clean_value",
    "clean_values",
    "clean_record",
    "toml_text",
    "phrase",
    "NO_DEFAULT",
    "PLACEHOLDER",
]

#: What a key holds. ``number``: a finite number (float); ``integer``: a whole number (an
#: integral float such as 2.0 counts, as JSON Schema's "integer" counts it); ``text``;
#: ``flag``: true or false; ``choice``: one of ``choices`` (or an alias of one);
#: ``choices``: a list of them; ``numbers``: a non-empty list of finite numbers;
#: ``window``: ``[low, high]`` with low < high; ``column``: a header text or a 0-based
#: index; ``cycle``: a whole number >= 1 or "last".
Kind = Literal[
    "number", "integer", "text", "flag", "choice", "choices", "numbers", "window", "column",
    "cycle",
]  # fmt: skip


class _NoDefault:
    def __repr__(self) -> str:
        return "NO_DEFAULT"


#: What :attr:`Key.default` holds for a required key (and before :func:`bind`).
NO_DEFAULT: Any = _NoDefault()
#: The value ``cvfit init`` writes where the user must fill one in; refused by every key
#: with its own message.
PLACEHOLDER = "FILL IN"


def placeholders(data: Mapping[str, Any]) -> list[tuple[str, str, str, int | None]]:
    """Every value of a parsed manifest still :data:`PLACEHOLDER`, in the file's order:
    (key path, table, key, 1-based index of an array table's entry or None)."""
    out: list[tuple[str, str, str, int | None]] = []
    for name, table in data.items():
        entries = table if isinstance(table, list) else [table]
        for k, entry in enumerate(entries, start=1):
            if not isinstance(entry, Mapping):
                continue
            index = k if isinstance(table, list) else None
            where = f"{name}[{k}]" if index else name
            out += [(f"{where}.{key}", name, key, index)
                    for key, value in entry.items() if value == PLACEHOLDER]  # fmt: skip
    return out


#: What a check returns for a value it refuses.
_BAD: Any = object()
#: Longest rendering of a wrong value in a message (a huge list is cut).
_SHOWN_CHARS = 60


@dataclass(frozen=True)
class Key:
    """One manifest key.

    Attributes
    ----------
    name : str
        The key as written in the manifest.
    kind : Kind
        What it holds (see :data:`Kind`).
    meaning : str
        One line: what it is and what it does (the schema's description and the docs).
    unit : str
        Unit of a number ("" for a pure number).
    low, high : float or None
        Range of a number or whole number; ``open_low`` / ``open_high`` exclude the bound,
        ``nonzero`` excludes 0.
    nonempty : bool
        A text key that, when given, must not be blank (it is optional all the same).
    choices : tuple of str
        Allowed values of a ``choice`` or ``choices`` key.
    aliases : mapping of str to str
        Other accepted spellings of a choice and the choice each one means.
    required : bool
        The table must give it.
    needs : str
        Another key of the same table that must be given with this one.
    field : str or None
        The record field holding it (None: the key's own name; "": no field — the loader
        reads it).
    default_text : str
        The default in words, for the docs, where the record's default says too little.
    hint : str
        What to do, appended to a range or type error.
    """

    name: str
    kind: Kind
    meaning: str
    unit: str = ""
    low: float | None = None
    high: float | None = None
    open_low: bool = False
    open_high: bool = False
    nonzero: bool = False
    nonempty: bool = False
    choices: tuple[str, ...] = ()
    aliases: Mapping[str, str] = dc_field(default_factory=dict)
    required: bool = False
    needs: str = ""
    field: str | None = None
    default_text: str = ""
    hint: str = ""
    #: The record's default, filled in by :func:`bind` (NO_DEFAULT: the key is required).
    default: Any = dc_field(default_factory=lambda: NO_DEFAULT)

    @property
    def attribute(self) -> str:
        """The record field that holds the key."""
        return self.name if self.field is None else self.field


@dataclass(frozen=True)
class Table:
    """One table of the manifest: ``[name]``, or ``[[name]]`` when ``array``.

    ``includes`` names a table whose keys are also valid here (a ``[[voltammogram]]`` may
    give any ``[import]`` key for its own file).
    """

    name: str
    meaning: str
    keys: tuple[Key, ...]
    array: bool = False
    required: bool = False
    includes: tuple[Table, ...] = ()

    def __post_init__(self) -> None:
        names = [k.name for k in self.all_keys]
        if len(set(names)) != len(names):
            raise ValueError(f"[{self.name}] declares a key twice")

    @property
    def all_keys(self) -> tuple[Key, ...]:
        """Its own keys, then those of the included tables."""
        return self.keys + tuple(k for t in self.includes for k in t.keys)

    @property
    def names(self) -> tuple[str, ...]:
        """The valid key names, in declaration order."""
        return tuple(k.name for k in self.all_keys)

    def key(self, name: str) -> Key:
        return next(k for k in self.all_keys if k.name == name)


def toml_text(value: object) -> str:
    """*value* as the manifest would spell it (strings in double quotes, true/false)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, float):
        return "nan" if math.isnan(value) else repr(value) if math.isfinite(value) else (
            "inf" if value > 0 else "-inf")  # fmt: skip
    if isinstance(value, list | tuple):
        return "[" + ", ".join(toml_text(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{k} = {toml_text(v)}" for k, v in value.items()) + "}"
    return repr(value)


def _shown(value: object) -> str:
    text = toml_text(value)
    return text if len(text) <= _SHOWN_CHARS else text[: _SHOWN_CHARS - 1] + "…"


def _or(words: tuple[str, ...], last: str = " or ") -> str:
    quoted = [toml_text(w) for w in words]
    return quoted[0] if len(quoted) == 1 else ", ".join(quoted[:-1]) + last + quoted[-1]


def _bounds(key: Key, noun: str) -> str:
    """*noun* ("a number", "a whole number") with the key's range and unit, in words."""
    unit = f" {key.unit}" if key.unit else ""
    low, high = key.low, key.high
    if low is not None and high is not None:
        if key.open_low and key.open_high:
            return f"{noun} strictly between {low:g} and {high:g}{unit}"
        if low == -high:
            return f"{noun} within ±{high:g}{unit}"
        return f"{noun} {low:g}–{high:g}{unit}"
    if low is not None:
        if low == 0 and key.open_low:
            return f"{noun.replace('a ', 'a positive ', 1)}" + (f" ({key.unit})" if unit else "")
        if key.kind == "integer" and low == 1:
            return "a positive whole number"
        return f"a finite {noun[2:]} >= {low:g}{unit}"
    if high is not None:
        return f"a finite {noun[2:]} <= {high:g}{unit}"
    return f"a finite {noun[2:]}" + (f" ({key.unit})" if unit else "")


def phrase(key: Key) -> str:
    """What the key must be, in words (the part after "must be")."""
    kind = key.kind
    if kind == "number":
        return _bounds(key, "a non-zero number" if key.nonzero else "a number")
    if kind == "integer":
        return _bounds(key, "a whole number")
    if kind == "text":
        return "a non-empty text string" if key.required or key.nonempty else "a text string"
    if kind == "flag":
        return "true or false"
    if kind == "choice":
        return _or(key.choices)
    if kind == "choices":
        return f"a list of {_or(key.choices, ' and/or ')}"
    if kind == "numbers":
        return "a non-empty list of finite numbers, e.g. [4.2]"
    if kind == "window":
        return f"a list of two potentials [low, high] in {key.unit or 'V'} with low < high"
    if kind == "column":
        return "a column header text or a 0-based column index"
    return 'a whole number >= 1 or "last"'  # cycle


def _whole(value: object) -> object:
    if isinstance(value, float) and value.is_integer():
        return int(value)
    return value


def _in_range(key: Key, x: float) -> bool:
    if not math.isfinite(x) or (key.nonzero and x == 0):
        return False
    if key.low is not None and (x < key.low or (key.open_low and x == key.low)):
        return False
    return key.high is None or not (x > key.high or (key.open_high and x == key.high))


def _checked(key: Key, value: object) -> object:
    """The value cleaned for the record, or ``_BAD`` when it is not acceptable."""
    kind = key.kind
    if kind in ("number", "integer"):
        v = _whole(value) if kind == "integer" else value
        if not isinstance(v, int | float) or isinstance(v, bool):
            return _BAD
        if kind == "integer" and not isinstance(v, int):
            return _BAD
        return (float(v) if kind == "number" else v) if _in_range(key, float(v)) else _BAD
    if kind == "text":
        blank_ok = not (key.required or key.nonempty)
        ok = isinstance(value, str) and (blank_ok or bool(value.strip()))
        return value if ok else _BAD
    if kind == "flag":
        return value if isinstance(value, bool) else _BAD
    if kind == "choice":
        if not isinstance(value, str):
            return _BAD
        if value in key.aliases:
            return key.aliases[value]
        return value if value in key.choices else _BAD
    if kind == "choices":
        if not isinstance(value, list | tuple):
            return _BAD
        ok = all(isinstance(x, str) and x in key.choices for x in value)
        return tuple(dict.fromkeys(value)) if ok else _BAD
    if kind in ("numbers", "window"):
        if not isinstance(value, list | tuple) or len(value) != 2 and kind == "window":
            return _BAD
        if not value or not all(
            isinstance(x, int | float) and not isinstance(x, bool) and math.isfinite(x)
            for x in value
        ):
            return _BAD
        out = tuple(float(x) for x in value)
        return out if kind == "numbers" or out[0] < out[1] else _BAD
    if kind == "column":
        v = _whole(value)
        if isinstance(v, str) and v.strip():
            return v
        return v if isinstance(v, int) and not isinstance(v, bool) and v >= 0 else _BAD
    v = _whole(value)  # cycle
    if v == "last" or (isinstance(v, int) and not isinstance(v, bool) and v >= 1):
        return v
    return _BAD


def clean_value(key: Key, value: object) -> object:
    """*value* of *key* checked and cleaned (None stays None unless the key is required).

    Raises
    ------
    InputError
        One line: the key, what it must be, what it was, and the key's hint.
    """
    if value is None:
        if key.required:
            raise InputError(f"{key.name} is required: give {phrase(key)}", key=key.name)
        return None
    if value == PLACEHOLDER:
        raise InputError(
            f"{key.name} is still {toml_text(PLACEHOLDER)}: give {phrase(key)}", key=key.name
        )
    out = _checked(key, value)
    if out is _BAD:
        hint = f"; {key.hint}" if key.hint else ""
        raise InputError(
            f"{key.name} must be {phrase(key)}, got {_shown(value)}{hint}", key=key.name
        )
    return out


def _clean(values: Mapping[str, object], keys: tuple[Key, ...]) -> dict[str, object]:
    by_name = {k.name: k for k in keys}
    out = {name: clean_value(by_name[name], value) for name, value in values.items()}
    for key in keys:
        if key.needs and out.get(key.name) is not None and out.get(key.needs) is None:
            raise InputError(
                f"{key.name} is given without {key.needs}; add {key.needs} or remove {key.name}",
                key=key.name,
            )
    return out


def clean_values(values: Mapping[str, object], table: Table) -> dict[str, object]:
    """The given keys of *table* checked and cleaned, and every ``needs`` satisfied."""
    return _clean(values, table.all_keys)


def clean_record(record: object, table: Table) -> None:
    """Check and clean, in place, the fields of a frozen record that hold *table*'s own
    keys (called from the record's ``__post_init__``)."""
    keys = tuple(k for k in table.keys if k.field != "")
    given = {k.name: getattr(record, k.attribute) for k in keys}
    cleaned = _clean(given, keys)
    for key in keys:
        object.__setattr__(record, key.attribute, cleaned[key.name])


def bind(record: type, table: Table, *, extra: tuple[str, ...] = ()) -> Table:
    """*table* with each key's default taken from *record*'s field, after checking that
    the two match: every field (but *extra*) holds a key, every key of the table's own
    (but those the loader reads) has a field, and each default is a value the key accepts.

    Raises
    ------
    TypeError
        At import, on any mismatch: a programming error, not bad input.
    """
    by_name = {f.name: f for f in fields(record)}
    held = {k.attribute for k in table.keys if k.field != ""}
    missing = set(by_name) - held - set(extra)
    unknown = held - set(by_name)
    if missing or unknown:
        raise TypeError(
            f"{record.__name__} and [{table.name}] differ: fields without a key "
            f"{sorted(missing)}, keys without a field {sorted(unknown)}"
        )
    keys = []
    for key in table.keys:
        if key.field == "":
            keys.append(key)
            continue
        f = by_name[key.attribute]
        default = f.default if f.default is not MISSING else (
            f.default_factory() if f.default_factory is not MISSING else NO_DEFAULT)  # fmt: skip
        if default is not NO_DEFAULT and default is not None:
            if clean_value(key, default) != default:
                raise TypeError(f"{record.__name__}.{f.name}: default {default!r} fails its key")
        if (default is NO_DEFAULT) != key.required:
            raise TypeError(f"{record.__name__}.{f.name}: required only in one of the two")
        keys.append(replace(key, default=default))
    return replace(table, keys=tuple(keys))
