"""Import the voltammograms of a series in several worker processes.

Reading and parsing the text exports is most of the work of a large series; the records
come back to the calling process (pickled NumPy arrays) and go to
``analyse_series(manifest, records=...)``, which then reads nothing itself.
"""

from __future__ import annotations

from concurrent.futures import ProcessPoolExecutor
from dataclasses import fields
from typing import Any

from ..errors import InputError
from ..voltammogram import Voltammogram
from .manifest import Manifest, VoltammogramEntry
from .reader import read_voltammogram

__all__ = ["read_series_records"]

# (message, source, line, key) of an InputError: sent back as plain data, because the
# exception's keyword-only constructor does not survive pickling.
_ErrorParts = tuple[str, str | None, int | None, str | None]


def _read_entry(entry: VoltammogramEntry) -> dict[str, Any] | _ErrorParts:
    """The record's fields (its metadata as a plain dict, which pickles), or the error."""
    try:
        v = read_voltammogram(entry.file, entry.import_options, scan_rate_V_s=entry.scan_rate_V_s)
    except InputError as exc:
        return (exc.message, exc.source, exc.line, exc.key)
    payload = {f.name: getattr(v, f.name) for f in fields(v)}
    payload["metadata"] = dict(v.metadata)
    return payload


def read_series_records(manifest: Manifest, *, jobs: int) -> dict[str, Voltammogram]:
    """Read every voltammogram of *manifest* with *jobs* worker processes.

    Parameters
    ----------
    manifest : Manifest
        A loaded manifest.
    jobs : int
        Worker processes (>= 1; 1 reads in this process).

    Returns
    -------
    dict of str to Voltammogram
        Keyed by the entries' ``name``, as ``analyse_series(records=...)`` takes them.

    Raises
    ------
    InputError
        The error of the first bad file in manifest order — the one a serial run reports.
    """
    if jobs < 1:
        raise InputError(f"--jobs must be at least 1, got {jobs}", source="<command line>")
    entries = list(manifest.voltammograms)
    if jobs == 1 or len(entries) < 2:
        outcomes = [_read_entry(e) for e in entries]
    else:
        chunk = max(1, len(entries) // (4 * jobs))
        with ProcessPoolExecutor(max_workers=min(jobs, len(entries))) as pool:
            outcomes = list(pool.map(_read_entry, entries, chunksize=chunk))
    records: dict[str, Voltammogram] = {}
    for entry, got in zip(entries, outcomes, strict=True):
        if isinstance(got, tuple):
            message, source, line, key = got
            raise InputError(message, source=source, line=line, key=key)
        records[entry.name] = Voltammogram(**got)
    return records
