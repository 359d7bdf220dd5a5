"""Hostile-input campaign: run ``cvfit run`` on broken series and count how each one ends.

Every case is a real ``cvfit run`` in a subprocess with a timeout, built from a small valid
series that ``cvfit simulate --series`` writes first. A case ends in one of:

- ``clean``: exit 2 and exactly one line on stderr (``cvfit: error: ...``), no traceback, no
  raw control character (a batch: exit 2, its summary, no internal error);
- ``accepted``: exit 0 (a case that is odd but valid, such as a 1 MB title);
- ``internal``: exit 1, a traceback, a death by a signal, or any other exit status;
- ``unclean``: exit 2 but not one harmless line;
- ``hang``: still running at the timeout (then killed);
- ``input changed``: an input file differs afterwards (checked for every case).

Usage::

    python scripts/fuzz_inputs.py [--random N] [--seed S] [--timeout SECONDS] [--jobs N]

The exit status is 0 when every case was clean or accepted and no input changed, else 1.
"""

from __future__ import annotations

import argparse
import hashlib
import os
import random
import resource
import shutil
import signal
import socket
import stat
import subprocess
import sys
import tempfile
import time
from collections import Counter
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from pathlib import Path

CVFIT = [sys.executable, "-m", "cvfit"]
DATA = [f"titr_{k:02d}.csv" for k in range(5)]
TEN_MIB_LINE = b"1.0," * (10 * 2**18)
DATA2 = f'file = "{DATA[2]}"'


@dataclass
class Case:
    """One hostile case: a name, a builder that breaks a copy of the series, what it runs."""

    name: str
    build: Callable[[Path], list[str]]  # folder -> arguments after "cvfit"
    expect_ok: bool = False  # exit 0 is the right answer
    batch: bool = False
    limit_file_size: int | None = None


@dataclass
class Outcome:
    case: str
    kind: str
    detail: str = ""
    seconds: float = 0.0
    extra: dict = field(default_factory=dict)


# --- building blocks ------------------------------------------------------------------------


def make_base(root: Path) -> Path:
    base = root / "base"
    subprocess.run(
        [
            *CVFIT,
            "simulate",
            "--series",
            "--out",
            str(base),
            "--e-half",
            "0.10",
            "--ligand-M",
            "0,1e-3,1e-2,3e-2,0.1",
            "--log-beta-ox",
            "4.0,7.5",
            "--log-beta-red",
            "2.0",
            "--noise",
            "0.01",
            "--seed",
            "1",
        ],  # fmt: skip
        check=True,
        capture_output=True,
    )
    return base


def copy_base(base: Path, folder: Path) -> Path:
    shutil.copytree(base, folder)
    return folder / "series.toml"


def edit_manifest(manifest: Path, old: str, new: str, count: int = 1) -> None:
    text = manifest.read_text(encoding="utf-8")
    assert old in text, old
    manifest.write_text(text.replace(old, new, count), encoding="utf-8")


def run_args(manifest: Path | str, out: Path | str) -> list[str]:
    return ["run", str(manifest), "--out", str(out), "--quiet", "--jobs", "1"]


def regular_digests(folder: Path) -> dict[str, str]:
    """Hashes of the regular files under *folder* (links not followed, outputs skipped)."""
    found = {}
    for dirpath, dirnames, filenames in os.walk(folder):
        dirnames[:] = [d for d in dirnames if not d.startswith(("out", ".out"))]
        for name in filenames:
            p = Path(dirpath) / name
            if stat.S_ISREG(os.lstat(p).st_mode):
                found[str(p.relative_to(folder))] = hashlib.sha256(p.read_bytes()).hexdigest()
    return found


# --- the named cases (each from the list the campaign found) -------------------------------


def named_cases(base: Path) -> list[Case]:
    def with_data(name: str, mutate: Callable[[Path], None], *, ok: bool = False) -> Case:
        def build(folder: Path) -> list[str]:
            manifest = copy_base(base, folder)
            mutate(folder / DATA[2])
            return run_args(manifest, folder / "out")

        return Case(name, build, expect_ok=ok)

    def with_manifest(name: str, old: str, new: str, *, ok: bool = False) -> Case:
        def build(folder: Path) -> list[str]:
            manifest = copy_base(base, folder)
            edit_manifest(manifest, old, new)
            return run_args(manifest, folder / "out")

        return Case(name, build, expect_ok=ok)

    def special_data(name: str, make: Callable[[Path], None]) -> Case:
        def build(folder: Path) -> list[str]:
            manifest = copy_base(base, folder)
            (folder / DATA[2]).unlink()
            make(folder / DATA[2])
            return run_args(manifest, folder / "out")

        return Case(name, build)

    def special_manifest(name: str, make: Callable[[Path], str]) -> Case:
        def build(folder: Path) -> list[str]:
            folder.mkdir()
            return run_args(make(folder), folder / "out")

        return Case(name, build)

    def make_socket(p: Path) -> None:
        s = socket.socket(socket.AF_UNIX)
        s.bind(str(p))
        s.close()

    def loop(p: Path) -> None:
        os.symlink(p.name + ".b", p)
        os.symlink(p.name, str(p) + ".b")

    def deep_arrays(folder: Path) -> str:
        (folder / "deep.toml").write_text(
            "[series]\nelectrons = 1\ntitle = " + "[" * 100_000 + "]" * 100_000 + "\n"
        )
        return str(folder / "deep.toml")

    def deep_inline(folder: Path) -> str:
        (folder / "deep.toml").write_text(
            "[series]\nelectrons = 1\nx = " + "{a = " * 5_000 + "1" + "}" * 5_000 + "\n"
        )
        return str(folder / "deep.toml")

    def deep_tables(folder: Path) -> str:
        (folder / "deep.toml").write_text("[" + ".".join(["a"] * 20_000) + "]\nb = 1\n")
        return str(folder / "deep.toml")

    def fifo_manifest(folder: Path) -> str:
        os.mkfifo(folder / "series.toml")
        return str(folder / "series.toml")

    def loop_manifest(folder: Path) -> str:
        loop(folder / "series.toml")
        return str(folder / "series.toml")

    def big_manifest(folder: Path) -> str:
        (folder / "big.toml").write_text("[series]\nelectrons = 1\n" + "#" * 2**21 + "\n")
        return str(folder / "big.toml")

    def random_manifest(folder: Path) -> str:
        (folder / "noise.toml").write_bytes(random.Random(7).randbytes(4096))
        return str(folder / "noise.toml")

    def newline_name(folder: Path) -> str:
        p = folder / "bad\nname\x1b[31m.toml"
        p.write_text("[series]\nelectrons = \n", encoding="utf-8")
        return str(p)

    def undecodable_name(folder: Path) -> str:
        p = Path(os.fsdecode(os.fsencode(folder) + b"/caf\xe9\xff.toml"))
        p.write_text("[series]\nelectrons = 1\n", encoding="utf-8")
        return str(p)

    def sparse_big(p: Path) -> None:
        with open(p, "r+b") as fh:
            fh.truncate(64 * 2**20 + 1)

    title = 'title = "simulated titration"'
    cases = [
        # hangs
        with_data("data: one 10 MiB line, no newline", lambda p: p.write_bytes(TEN_MIB_LINE)),
        with_data(
            "data: a 1 MB line after the header",
            lambda p: p.write_bytes(b"time_s,potential_V,current_A\n" + b"1.0," * 250_000),
        ),
        special_data("data: a FIFO", lambda p: os.mkfifo(p)),
        special_manifest("manifest: a FIFO", fifo_manifest),
        # internal errors where the input is at fault
        special_data("data: a symbolic link loop", loop),
        special_manifest("manifest: a symbolic link loop", loop_manifest),
        special_data("data: a link to /dev/zero", lambda p: os.symlink("/dev/zero", p)),
        special_data("data: a link to /dev/urandom", lambda p: os.symlink("/dev/urandom", p)),
        special_data("data: a socket", make_socket),
        special_data("data: a folder", lambda p: p.mkdir()),
        special_manifest("manifest: /dev/zero", lambda f: "/dev/zero"),
        special_manifest("manifest: /dev/null", lambda f: "/dev/null"),
        special_manifest("manifest: a folder", lambda f: str(f)),
        special_manifest("manifest: arrays nested 100 000 deep", deep_arrays),
        special_manifest("manifest: inline tables nested 5 000 deep", deep_inline),
        special_manifest("manifest: a table 20 000 keys deep", deep_tables),
        special_manifest("manifest: 4 KiB of random bytes", random_manifest),
        with_manifest("title: 1 MB", title, 'title = "' + "Zn titration " * 80_000 + '"', ok=True),
        with_manifest(
            "title: control characters",
            title,
            'title = "a\\u001b[31mred\\nnext\\u202eline\\u0007"',
            ok=True,
        ),
        # limits
        with_data("data: 64 MiB + 1 byte (sparse)", sparse_big),
        with_data(
            "data: 64 MB of one-byte fields, 32 000 columns",
            lambda p: p.write_bytes(b"E,I\n" + (b"1," * 32_000 + b"\n") * 1_000),
        ),
        special_manifest("manifest: 2 MiB", big_manifest),
        # messages
        special_manifest("manifest name: newline and escape", newline_name),
        special_manifest("manifest name: undecodable bytes", undecodable_name),
        with_manifest("key: escape sequence", "[series]\n", '[series]\n"k\\u001b[2J" = 1\n'),
        with_manifest("data name: newline and bidi control", DATA2, 'file = "a\\nb\\u202e.csv"'),
        with_manifest(
            "value: escape in a unit",
            "[series]\n",
            '[import]\ncurrent_unit = "\\u001b[2J"\n[series]\n',
        ),
        with_manifest("value: a NUL in a file name", DATA2, 'file = "a\\u0000b"'),
        with_manifest("value: 1 MB file name", DATA2, 'file = "' + "x" * 2**20 + '"'),
    ]
    cases += environment_cases(base)
    cases += batch_cases(base)
    return cases


def environment_cases(base: Path) -> list[Case]:
    def parent_is_file(folder: Path) -> list[str]:
        manifest = copy_base(base, folder)
        (folder / "a_file").write_text("x")
        return run_args(manifest, folder / "a_file" / "out")

    def under_proc(folder: Path) -> list[str]:
        return run_args(copy_base(base, folder), "/proc/cvfit-fuzz/out")

    def foreign_out(folder: Path) -> list[str]:
        manifest = copy_base(base, folder)
        (folder / "out").mkdir()
        (folder / "out" / "notes.txt").write_text("mine")
        return run_args(manifest, folder / "out")

    def out_is_input_folder(folder: Path) -> list[str]:
        return run_args(copy_base(base, folder), folder)

    def size_limit(folder: Path) -> list[str]:
        return run_args(copy_base(base, folder), folder / "out")

    return [
        Case("out: parent is a file", parent_is_file),
        Case("out: under /proc", under_proc),
        Case("out: holds a file of the user's", foreign_out),
        Case("out: the input folder", out_is_input_folder),
        Case("out: file-size limit 30 kB (ulimit -f)", size_limit, limit_file_size=30_000),
    ]


def batch_cases(base: Path) -> list[Case]:
    def batch(folder: Path) -> list[str]:
        good = copy_base(base, folder / "good")
        bad = copy_base(base, folder / "long_line")
        (bad.parent / DATA[1]).write_bytes(b"1," * 5_000_000)
        os.mkfifo(folder / "fifo.toml")
        fifo = str(folder / "fifo.toml")
        return ["run", str(good), str(bad), fifo, "--out", str(folder / "out")]

    def build(folder: Path) -> list[str]:
        folder.mkdir()
        return batch(folder)

    return [Case("batch: good, 10 MB line and a FIFO manifest", build, batch=True)]


# --- random corruptions -------------------------------------------------------------------


def _mutate_bytes(data: bytes, rng: random.Random) -> bytes:
    kind = rng.randrange(9)
    n = len(data)
    if kind == 0:
        return data[: rng.randrange(n)]
    if kind == 1:
        at = rng.randrange(n)
        return data[:at] + rng.randbytes(rng.randrange(1, 200)) + data[at:]
    if kind == 2:
        out = bytearray(data)
        for _ in range(rng.randrange(1, 50)):
            out[rng.randrange(n)] = rng.randrange(256)
        return bytes(out)
    if kind == 3:
        return data.replace(b",", rng.choice([b";", b"\t", b" ", b",,", b""]))
    if kind == 4:
        lines = data.split(b"\n")
        rng.shuffle(lines)
        return b"\n".join(lines)
    if kind == 5:
        return data.replace(b"\n", rng.choice([b"\r", b"\r\n", b"\n\n", b"\x00"]))
    if kind == 6:
        return data.decode("latin-1").encode(rng.choice(["utf-16", "utf-32", "utf-16-be"]))
    if kind == 7:
        cell = rng.choice([b"nan", b"inf", b"1e999", b"-", b"9" * 400, b"\xff\xfe"])
        return data.replace(b"\n", b"\n" + cell + b",", rng.randrange(1, 20))
    return data.split(b"\n", 1)[0] + b"\n" * rng.randrange(1, 4)


def random_cases(base: Path, n: int, seed: int) -> list[Case]:
    rng = random.Random(seed)
    cases = []
    for k in range(n):
        target = "series.toml" if k % 3 == 0 else rng.choice(DATA)
        sub_seed = rng.randrange(2**32)

        def build(folder: Path, target=target, sub_seed=sub_seed) -> list[str]:
            manifest = copy_base(base, folder)
            p = folder / target
            p.write_bytes(_mutate_bytes(p.read_bytes(), random.Random(sub_seed)))
            return run_args(manifest, folder / "out")

        cases.append(Case(f"random #{k}: {target}", build, expect_ok=None))  # type: ignore
    return cases


# --- running and judging -----------------------------------------------------------------


def judge(case: Case, proc: subprocess.CompletedProcess | None, seconds: float) -> Outcome:
    if proc is None:
        return Outcome(case.name, "hang", f"killed after {seconds:.0f} s", seconds)
    err, code = proc.stderr, proc.returncode
    first = err.splitlines()[0][:160] if err else ""
    if "Traceback" in err or code not in (0, 2) or "internal error" in err + proc.stdout:
        return Outcome(case.name, "internal", f"exit {code}: {first}", seconds)
    if code == 0:
        return Outcome(case.name, "accepted", "", seconds)
    if case.batch:
        ok = "bad input" in proc.stdout and not any(c in err for c in "\x1b\x07")
        return Outcome(case.name, "clean" if ok else "unclean", first, seconds)
    lines = err.splitlines()
    one_line = len(lines) == 1 and lines[0].startswith("cvfit: error: ")
    raw = any(ch in err.rstrip("\n") for ch in "\x1b\x07\r\x00\u202e")
    if one_line and not raw:
        return Outcome(case.name, "clean", first, seconds)
    return Outcome(case.name, "unclean", repr(err[:200]), seconds)


def run_case(case: Case, root: Path, index: int, timeout: float) -> Outcome:
    folder = root / f"case{index:03d}"
    args = case.build(folder)
    folder.mkdir(exist_ok=True)
    before = regular_digests(folder)
    preexec = None
    if case.limit_file_size is not None:
        limit = case.limit_file_size

        def preexec() -> None:
            resource.setrlimit(resource.RLIMIT_FSIZE, (limit, limit))

    start = time.monotonic()
    try:
        proc = subprocess.run(
            [*CVFIT, *args],
            cwd=folder,
            capture_output=True,
            text=True,
            errors="surrogateescape",
            timeout=timeout,
            stdin=subprocess.DEVNULL,
            preexec_fn=preexec,
            start_new_session=True,
        )
    except subprocess.TimeoutExpired:
        proc = None
    seconds = time.monotonic() - start
    outcome = judge(case, proc, seconds)
    after = regular_digests(folder)  # outputs may be added; no input may change or go
    if outcome.kind != "hang" and any(after.get(name) != h for name, h in before.items()):
        outcome = Outcome(case.name, "input changed", outcome.detail, seconds)
    if outcome.kind in ("accepted",) and case.expect_ok is False:
        outcome = Outcome(case.name, "accepted (expected a refusal)", "", seconds)
    if case.expect_ok is True and outcome.kind == "clean":
        outcome = Outcome(case.name, "refused (expected to run)", outcome.detail, seconds)
    return outcome


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--random", type=int, default=72, help="random corruptions (default 72)")
    ap.add_argument("--seed", type=int, default=2026)
    ap.add_argument("--timeout", type=float, default=60.0, help="seconds before a hang")
    ap.add_argument("--jobs", type=int, default=2, help="cases run at once (default 2)")
    ap.add_argument("--keep", action="store_true", help="keep the case folders")
    ap.add_argument("--verbose", action="store_true", help="print every case")
    args = ap.parse_args(argv)
    if hasattr(signal, "SIGPIPE"):
        signal.signal(signal.SIGPIPE, signal.SIG_DFL)
    root = Path(tempfile.mkdtemp(prefix="cvfit-fuzz-"))
    try:
        base = make_base(root)
        cases = named_cases(base) + random_cases(base, args.random, args.seed)
        with ThreadPoolExecutor(max_workers=max(1, args.jobs)) as pool:
            outcomes = list(
                pool.map(lambda ic: run_case(ic[1], root, ic[0], args.timeout), enumerate(cases))
            )
    finally:
        if not args.keep:
            shutil.rmtree(root, ignore_errors=True)
    counts = Counter(o.kind for o in outcomes)
    bad = [o for o in outcomes if o.kind not in ("clean", "accepted")]
    for o in outcomes if args.verbose else bad:
        print(f"{o.kind:>14}  {o.seconds:5.1f} s  {o.case}  {o.detail}".rstrip())
    slowest = max(outcomes, key=lambda o: o.seconds)
    listed = ("internal", "hang", "unclean", "input changed")
    other = len(bad) - sum(counts[k] for k in listed)
    print(
        f"cases tried: {len(outcomes)}; clean errors: {counts['clean']}; accepted: "
        f"{counts['accepted']}; internal errors: {counts['internal']}; hangs: {counts['hang']}; "
        f"unclean errors: {counts['unclean']}; inputs changed: {counts['input changed']}; "
        f"other: {other}; slowest case {slowest.seconds:.1f} s ({slowest.case})"
    )
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
