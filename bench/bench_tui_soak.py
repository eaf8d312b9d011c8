"""3,000 random keys and clicks across every screen of the terminal UI, then absurd text pasted into every
field; fails on an exception, an internal error or a step unanswered for 10 s.

    .venv/bin/python bench/bench_tui_soak.py [STEPS] [SEED]     # default 3000 steps, seed 18
    .venv/bin/python bench/bench_tui_soak.py --quick            # 300 steps
"""

from __future__ import annotations

import sys

from solvsel.tui.soak import main

if __name__ == "__main__":
    args = [a for a in sys.argv[1:] if a != "--quick"]
    default = "300" if "--quick" in sys.argv[1:] else "3000"
    sys.exit(main([args[0] if args else default, args[1] if len(args) > 1 else "18"]))
