"""``solvsel demo``: the demo scenario as text, step by step (the README walk-through)."""

from __future__ import annotations

import shlex
import sys
import textwrap


def register(sub):
    p = sub.add_parser(
        "demo",
        help="walk through the demo scenario as text (the UI opens on the same scenario)",
        description="Run the README's walk-through on the demo scenario (a fictional drinks maker) and print "
        "each command with its output.",
    )
    p.add_argument("--step", type=int, metavar="N", help="run only step N (see the list the demo prints)")
    return p


def run(args) -> int:
    from ..data.scenario import demo_steps, load_scenario
    from ..jobs._base import check_int
    from . import main

    s = load_scenario()
    steps = demo_steps(s)
    if args.step is not None:
        check_int(args.step, "step", lo=1, hi=len(steps))
    print(f"{s.company}\n{s.product}\n")
    print(textwrap.fill(s.story, width=100))
    print("\n(Company, product and quantities are invented for the demo; substances carry their published values.)")
    status = 0
    for i, (title, argv) in enumerate(steps, start=1):
        if args.step and i != args.step:
            continue
        print(f"\n{'=' * 100}\n{title}\n$ solvsel {' '.join(shlex.quote(a) for a in argv)}\n")
        sys.stdout.flush()
        rc = main(argv)
        sys.stdout.flush()
        status = status or rc
    return status
