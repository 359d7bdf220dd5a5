"""``cvfit guide [TOPIC]``: the documents shipped with cvfit, printed.

The package carries the project's documents (``cvfit/guide`` is the repository's docs/
folder, installed as package data), so an installed cvfit explains its manifest, its plan
file, its methods and its flags without the source tree. The help texts of ``cvfit run``
and ``cvfit plan`` list their keys from the same sources (:func:`manifest_key_summary`,
:func:`plan_key_summary`).
"""

from __future__ import annotations

import argparse
import re
import sys
import textwrap
from importlib import resources

from cvfit.errors import InputError

#: Topic → (document, what it holds).
TOPICS: dict[str, tuple[str, str]] = {
    "manifest": ("manifest.md", "every key of a series manifest, with units and defaults"),
    "plan": ("plan.md", "the plan file of 'cvfit plan' and how designs are chosen"),
    "methods": ("methods.md", "the equations, the screen and the fits, with references"),
    "flags": ("flags.md", "every flag code a result can carry"),
    "references": ("references.md", "the published sources the checks are made against"),
    "design": ("design.md", "how cvfit is built (for contributors)"),
}
WIDTH = 88


def guide_text(topic: str) -> str:
    """The shipped document of *topic* (a key of :data:`TOPICS`)."""
    name, _ = TOPICS[topic]
    path = resources.files("cvfit").joinpath("guide", name)
    try:
        return path.read_text(encoding="utf-8")
    except OSError as exc:
        raise InputError(
            f"the document {name} is not in this installation ({exc.strerror}); "
            "reinstall cvfit or read docs/ of its source",
            source="cvfit guide",
        ) from None


def topic_list() -> str:
    lines = [f"  {t:<11} {what}" for t, (_, what) in TOPICS.items()]
    return "topics:\n" + "\n".join(lines) + "\n"


def _wrap(head: str, text: str) -> list[str]:
    return textwrap.wrap(
        f"{head}{text}", WIDTH, initial_indent="  ", subsequent_indent="      "
    ) or [f"  {head}"]


def manifest_key_summary() -> str:
    """Every manifest table with its keys (unit, required), from their declarations."""
    from cvfit.io.manifest_keys import TABLES

    lines = ["manifest keys (meanings, units and defaults: cvfit guide manifest):"]
    for table in TABLES:
        name = f"[[{table.name}]]" if table.array else f"[{table.name}]"
        keys = [
            k.name + (f" ({k.unit})" if k.unit else "") + (" required" if k.required else "")
            for k in table.keys
        ]
        if table.includes:
            keys.append("and every key of " + ", ".join(f"[{t.name}]" for t in table.includes))
        lines += _wrap(f"{name} ", ", ".join(keys))
    return "\n".join(lines) + "\n"


def plan_key_summary() -> str:
    """The plan file's keys: the key table of the shipped plan guide, as plain text."""
    text = guide_text("plan")
    start = text.index("| section | key |")
    rows = [r for r in text[start:].split("\n\n", 1)[0].splitlines()[2:] if r.startswith("|")]
    lines = ["plan file keys (ligand titrations; more: cvfit guide plan):"]
    section = ""
    for row in rows:
        cells = [re.sub(r"`", "", c).strip() for c in row.strip().strip("|").split("|")]
        section = cells[0] or section
        default = f" [default: {cells[3]}]" if cells[3] not in ("", "—") else ""
        lines += _wrap(f"{section} {cells[1]}: ", cells[2] + default)
    lines += _wrap(
        "pH series: ",
        "[expect] pKa_ox, pKa_red (rough pKa of each form); [design] pH_min, pH_max, "
        "points, E_half_stderr_V, proposed_pH",
    )
    lines += _wrap(
        "temperature series: ",
        "[design] temperature_min_C, temperature_max_C, points, E_half_stderr_V, proposed_C",
    )
    return "\n".join(lines) + "\n"


def register(sub: argparse._SubParsersAction) -> None:
    p = sub.add_parser(
        "guide",
        help="print a document shipped with cvfit (manifest keys, plan file, methods, flags)",
        description="Print one of the documents installed with cvfit; without a topic, list them.",
        epilog=topic_list(),
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument(
        "topic",
        nargs="?",
        choices=tuple(TOPICS),
        metavar="TOPIC",
        help="one of: " + ", ".join(TOPICS),
    )
    p.set_defaults(handler=handle)


def handle(args: argparse.Namespace) -> int:
    if args.topic is None:
        sys.stdout.write(topic_list())
        return 0
    sys.stdout.write(guide_text(args.topic))
    return 0
