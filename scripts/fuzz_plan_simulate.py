"""Second hostile campaign: the planner, the simulator, output folders, concurrency, streams.

Each case is a real ``cvfit`` command in a subprocess with a timeout and a 4 GiB
address-space limit (a runaway case fails instead of taking the machine). Besides how the
command ends (as in ``scripts/fuzz_inputs.py``: ``clean``, ``accepted``, ``internal``,
``unclean``, ``hang``), every case checks that

- every file, folder and link that existed before the run is still there, unchanged
  (``user file lost``), unless the case names a folder that cvfit may replace;
- a run that succeeds prints nothing on stderr but ``cvfit: note:`` lines
  (``warning at exit 0``);
- a series that ``cvfit simulate --series`` writes is one that ``cvfit run`` accepts
  (``series run refuses``);
- no text cell of a CSV that cvfit wrote begins with ``=``, ``+``, ``-`` or ``@``
  (``formula in CSV``).

Two runs that write into one output folder at once are tried ``--rounds`` times (each
round: both succeed and the folder then holds one complete set, else a concurrent-run
failure), and Ctrl-C (SIGINT to the process group) is sent to pooled runs (each must end
with one line, exit 130, and leave no staging folder).

Usage::

    python scripts/fuzz_plan_simulate.py [--rounds N] [--timeout S] [--jobs N] [--only TEXT]

The exit status is 0 when every case ended as it should and every count of harm is 0.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import shutil
import signal
import subprocess
import sys
import tempfile
import time
from collections import Counter
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
from fuzz_folders_streams_cases import all_cases  # noqa: E402
from fuzz_inputs import Outcome, copy_base, make_base, run_args  # noqa: E402
from fuzz_plan_simulate_cases import SIM, Case  # noqa: E402

CVFIT = [sys.executable, "-m", "cvfit"]
#: Address space one case may take, bytes.
MEMORY_LIMIT = 4 * 2**30
#: Kinds of outcome that are right answers (when the case expects them).
GOOD = ("clean", "accepted")


# --- snapshots: what the user had ---------------------------------------------------------


def snapshot(folder: Path, skip: tuple[str, ...] = ()) -> dict[str, str]:
    """Every entry under *folder* (links not followed): file hashes, link targets, folders."""
    import hashlib

    found: dict[str, str] = {}
    for dirpath, dirnames, filenames in os.walk(folder):
        rel_dir = Path(dirpath).relative_to(folder)
        if any(rel_dir.parts[: len(Path(s).parts)] == Path(s).parts for s in skip):
            dirnames[:] = []
            continue
        for name in dirnames + filenames:
            p = Path(dirpath) / name
            rel = str(p.relative_to(folder))
            if rel in skip:
                continue
            if p.is_symlink():
                found[rel] = "link:" + os.readlink(p)
            elif p.is_dir():
                found[rel] = "folder"
            elif p.is_file():
                found[rel] = hashlib.sha256(p.read_bytes()).hexdigest()
            else:
                found[rel] = "special"
    return found


def lost(before: dict[str, str], after: dict[str, str]) -> list[str]:
    return [k for k, v in before.items() if after.get(k) != v]


# --- running and judging -----------------------------------------------------------------


def _limits() -> None:
    resource.setrlimit(resource.RLIMIT_AS, (MEMORY_LIMIT, MEMORY_LIMIT))


def _call(args: list[str], cwd: Path, timeout: float, case: Case):
    env = {**os.environ, **case.env}
    stdout = subprocess.PIPE
    if case.stdout == "broken":
        read, write = os.pipe()
        os.close(read)
        stdout = write
    kw = dict(cwd=cwd, stdin=subprocess.DEVNULL, stderr=subprocess.PIPE, env=env,
              preexec_fn=_limits, start_new_session=True)  # fmt: skip
    if case.stdout == "closed":

        def closing() -> None:
            _limits()
            os.close(1)

        kw["preexec_fn"] = closing
        stdout = None
    p = subprocess.Popen([*CVFIT, *args], stdout=stdout, **kw)
    if case.stdout == "broken":
        os.close(write)
    try:
        out, err = p.communicate(timeout=timeout)
    except subprocess.TimeoutExpired:
        os.killpg(p.pid, signal.SIGKILL)
        p.communicate()
        return None
    decode = lambda b: (b or b"").decode("utf-8", "surrogateescape")  # noqa: E731
    return subprocess.CompletedProcess(p.args, p.returncode, decode(out), decode(err))


def judge(case: Case, proc, seconds: float) -> Outcome:
    if proc is None:
        return Outcome(case.name, "hang", f"killed after {seconds:.0f} s", seconds)
    err, code = proc.stderr, proc.returncode
    first = err.splitlines()[0][:300] if err else ""
    internal = "cvfit: internal error" in err or (case.batch and "internal error" in proc.stdout)
    if "Traceback" in err or code not in (0, 2) or internal:
        return Outcome(case.name, "internal", f"exit {code}: {first}", seconds)
    if code == 0:
        noise = [ln for ln in err.splitlines() if not ln.startswith("cvfit: note: ")]
        if noise:
            return Outcome(case.name, "warning at exit 0", noise[0][:200], seconds)
        return Outcome(case.name, "accepted", "", seconds)
    if case.batch:
        ok = "bad input" in proc.stdout and "internal error" not in proc.stdout
        return Outcome(case.name, "clean" if ok else "unclean", proc.stdout[-200:], seconds)
    lines = err.splitlines()
    if len(lines) == 1 and lines[0].startswith("cvfit: error: "):
        return Outcome(case.name, "clean", first, seconds)
    return Outcome(case.name, "unclean", repr(err[:300]), seconds)


def _formula_cells(folder: Path) -> str | None:
    import csv

    for path in folder.rglob("*.csv"):
        if path.name.startswith("titr_") or path.parent == folder:
            continue
        with open(path, encoding="utf-8", newline="") as fh:
            for row in csv.reader(fh):
                for cell in row:
                    if cell[:1] in ("=", "+", "-", "@"):
                        try:
                            float(cell)
                        except ValueError:
                            return f"{path.name}: {cell[:40]!r}"
    return None


def _series_refused(folder: Path, args: list[str], timeout: float) -> str | None:
    if "--series" not in args:
        return None
    manifest = Path(args[args.index("--out") + 1]) / "series.toml"
    run = [*CVFIT, "run", str(manifest), "--out", str(folder / "check"), "--quiet", "--jobs", "1"]
    try:
        proc = subprocess.run(run, capture_output=True, text=True, timeout=timeout, cwd=folder,
                              preexec_fn=_limits)  # fmt: skip
    except subprocess.TimeoutExpired:
        return f"cvfit run on it did not end in {timeout:g} s"
    return None if proc.returncode == 0 else proc.stderr.strip()[:200]


def run_case(case: Case, root: Path, index: int, timeout: float) -> Outcome:
    try:
        return _run_case(case, root, index, timeout)
    except Exception as exc:  # noqa: BLE001 - a broken case must not stop the campaign
        return Outcome(case.name, "harness error", f"{type(exc).__name__}: {exc}"[:200])


def _run_case(case: Case, root: Path, index: int, timeout: float) -> Outcome:
    folder = root / f"case{index:03d}"
    args = case.build(folder)
    folder.mkdir(exist_ok=True)
    before = snapshot(folder, case.replaceable)
    start = time.monotonic()
    proc = _call(args, folder, timeout, case)
    seconds = time.monotonic() - start
    outcome = judge(case, proc, seconds)
    gone = lost(before, snapshot(folder, case.replaceable))
    if gone:
        return Outcome(case.name, "user file lost", ", ".join(gone)[:200], seconds)
    if outcome.kind == "accepted":
        formula = _formula_cells(folder)
        if formula:
            return Outcome(case.name, "formula in CSV", formula, seconds)
        refused = _series_refused(folder, args, timeout)
        if refused:
            return Outcome(case.name, "series run refuses", refused, seconds)
    if outcome.kind == "accepted" and case.expect == "error":
        return Outcome(case.name, "accepted (expected a refusal)", "", seconds)
    if outcome.kind == "clean" and case.expect == "ok":
        return Outcome(case.name, "refused (expected to run)", outcome.detail, seconds)
    return outcome


# --- two runs into one folder, and Ctrl-C -------------------------------------------------------


def complete_set(out: Path) -> str | None:
    """None when *out* holds one complete set (its record lists exactly the files there)."""
    import hashlib

    leftovers = [p.name for p in out.parent.iterdir() if ".cvfit-" in p.name]
    if leftovers:
        return f"left beside it: {leftovers}"
    marker = out / ".cvfit-set.json"
    if not marker.is_file():
        names = sorted(p.name for p in out.iterdir())
        return None if "results.json" in names and "report.html" in names else f"holds {names}"
    files = json.loads(marker.read_text(encoding="utf-8"))["files"]
    there = sorted(p.name for p in out.iterdir() if p.name != marker.name)
    if there != sorted(files):
        return f"holds {there}, its record lists {sorted(files)}"
    for name, digest in files.items():
        if hashlib.sha256((out / name).read_bytes()).hexdigest() != digest:
            return f"{name} differs from its record"
    return None


def concurrent_rounds(base: Path, root: Path, rounds: int, timeout: float) -> list[str]:
    """Failures of *rounds* rounds of two runs started together into one folder."""
    folder = root / "concurrent"
    manifest = copy_base(base, folder)
    failures = []
    for k in range(rounds):
        procs = [
            subprocess.Popen([*CVFIT, *run_args(manifest, folder / "out")], cwd=folder,
                             stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True)
            for _ in range(2)
        ]  # fmt: skip
        errors = []
        for p in procs:
            try:
                _, err = p.communicate(timeout=timeout)
            except subprocess.TimeoutExpired:
                p.kill()
                p.communicate()
                err = "hang"
            if p.returncode != 0:
                errors.append(err.strip()[:200])
        broken = complete_set(folder / "out")
        if errors or broken:
            failures.append(f"round {k}: {errors or broken}")
    return failures


def _children(pid: int) -> int:
    try:
        return len(Path(f"/proc/{pid}/task/{pid}/children").read_text().split())
    except OSError:
        return 0


def _as_from_a_terminal() -> None:
    """In the child before exec: SIGINT at its default and unblocked, as a terminal's command
    has it (this script may itself run where SIGINT is ignored, which a child inherits)."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)
    signal.pthread_sigmask(signal.SIG_UNBLOCK, [signal.SIGINT])


def interrupted_runs(root: Path, timeout: float, rounds: int = 16) -> tuple[list[str], int]:
    """Ctrl-C to pooled runs, sent once the workers are there and 0-1.5 s into their work:
    (failures, runs interrupted). Each must end with one line, exit 130, no staging left."""
    folder = root / "interrupt"
    folder.mkdir()
    ligands = ",".join(f"{x:.3g}" for x in [0.0, *[1e-4 * 1.12**k for k in range(79)]])
    subprocess.run([*CVFIT, *SIM, "--series", "--out", str(folder / "s"), "--ligand-M", ligands,
                    "--log-beta-ox", "4", "--seed", "3", "--noise", "0.01"],
                   check=True, capture_output=True, cwd=folder)  # fmt: skip
    failures, interrupted = [], 0
    for k in range(rounds):
        delay = 0.1 * k
        out = folder / f"out{k}"
        p = subprocess.Popen(
            [*CVFIT, "run", str(folder / "s" / "series.toml"), "--out", str(out), "--jobs", "2"],
            stdout=subprocess.DEVNULL, stderr=subprocess.PIPE, text=True,
            start_new_session=True, cwd=folder, preexec_fn=_as_from_a_terminal,
        )  # fmt: skip
        deadline = time.monotonic() + timeout
        while _children(p.pid) < 2 and p.poll() is None and time.monotonic() < deadline:
            time.sleep(0.02)
        time.sleep(delay)
        if p.poll() is not None:
            continue  # finished before the signal
        os.killpg(p.pid, signal.SIGINT)  # what a terminal does on Ctrl-C
        interrupted += 1
        try:
            _, err = p.communicate(timeout=timeout)
        except subprocess.TimeoutExpired:
            os.killpg(p.pid, signal.SIGKILL)
            p.communicate()
            failures.append(f"Ctrl-C {delay:.1f} s into the work: hang")
            continue
        time.sleep(0.5)  # the workers see their parent gone within PARENT_POLL_S
        lines = err.splitlines()
        # this round's leftovers only (one left by an earlier round is counted there)
        staging = [q.name for q in folder.iterdir() if q.name.startswith(f".{out.name}.cvfit-")]
        if p.returncode == 0:
            continue  # finished while the signal came
        if p.returncode != 130 or len(lines) != 1 or "Traceback" in err or staging:
            failures.append(
                f"Ctrl-C {delay:.1f} s into the work: exit {p.returncode}, "
                f"{len(lines)} lines on stderr, {err[-300:]!r} {staging}"
            )
    return failures, interrupted


def make_fixtures(root: Path) -> dict:
    base = make_base(root)
    earlier = root / "earlier"
    subprocess.run([*CVFIT, *run_args(base / "series.toml", earlier)], check=True,
                   capture_output=True, cwd=root)  # fmt: skip
    standard = root / "standard"
    subprocess.run([*CVFIT, *SIM, "--series", "--out", str(standard), "--ligand-M",
                    "0,1e-3,1e-2,0.1", "--log-beta-ox", "4", "--standard-e-half", "0.6",
                    "--start", "0.9", "--switch=-0.3", "--seed", "2", "--noise", "0.005"],
                   check=True, capture_output=True, cwd=root)  # fmt: skip
    pilot = json.loads((earlier / "results.json").read_text(encoding="utf-8"))
    return {"base": base, "earlier": earlier, "standard": standard, "pilot": pilot}


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rounds", type=int, default=20, help="concurrent-run rounds (default 20)")
    ap.add_argument("--timeout", type=float, default=60.0, help="seconds before a hang")
    ap.add_argument("--jobs", type=int, default=2, help="cases run at once (default 2)")
    ap.add_argument("--only", help="run only the cases whose name holds this text")
    ap.add_argument("--keep", action="store_true", help="keep the case folders")
    ap.add_argument("--verbose", action="store_true", help="print every case")
    args = ap.parse_args(argv)
    root = Path(tempfile.mkdtemp(prefix="cvfit-fuzz2-"))
    os.chdir(root)  # "python -m cvfit" imports from the current folder first: never a checkout
    try:
        fixtures = make_fixtures(root)
        cases = [c for c in all_cases(fixtures) if not args.only or args.only in c.name]
        with ThreadPoolExecutor(max_workers=max(1, args.jobs)) as pool:
            outcomes = list(
                pool.map(lambda ic: run_case(ic[1], root, ic[0], args.timeout), enumerate(cases))
            )
        concurrent = concurrent_rounds(fixtures["base"], root, args.rounds, args.timeout)
        interrupted, n_interrupted = (
            interrupted_runs(root, args.timeout) if not args.only else ([], 0)
        )
    finally:
        if not args.keep:
            shutil.rmtree(root, ignore_errors=True)
    counts = Counter(o.kind for o in outcomes)
    bad = [o for o in outcomes if o.kind not in GOOD]
    for o in outcomes if args.verbose else bad:
        print(f"{o.kind:>30}  {o.seconds:5.1f} s  {o.case}  {o.detail}".rstrip())
    for line in concurrent + interrupted:
        print(f"{'':>30}  {line}")
    listed = ("internal", "hang", "unclean", "user file lost", "warning at exit 0")
    other = len(bad) - sum(counts[k] for k in listed)
    print(
        f"cases tried: {len(outcomes)}; clean errors: {counts['clean']}; accepted: "
        f"{counts['accepted']}; internal errors: {counts['internal']}; hangs: {counts['hang']}; "
        f"unclean errors: {counts['unclean']}; user files lost: {counts['user file lost']}; "
        f"warnings on stderr at exit 0: {counts['warning at exit 0']}; other wrong outcomes: "
        f"{other}; concurrent-run failures: {len(concurrent)} of {args.rounds}; Ctrl-C "
        f"failures: {len(interrupted)} of {n_interrupted} runs interrupted"
    )
    return 1 if bad or concurrent or interrupted else 0


if __name__ == "__main__":
    sys.exit(main())
