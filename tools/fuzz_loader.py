"""Fuzz the layout loader for longer than the test suite does, and report what happened.

    python3 tools/fuzz_loader.py --examples 20000

Draws near-valid layouts (tests/reliability/layout_strategies.py) and random mutations of
the shipped layouts (tests/layout/test_loader_errors.py), loads each one, and counts how
many loaded, how many raised LayoutError, and how many raised anything else (a bug: each
is printed with its text). It also times every case and prints the slowest, since a
hostile value must fail at once rather than hang. Prints only; asserts nothing.
"""

from __future__ import annotations

import argparse
import sys
import time
import traceback
from collections import Counter
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from hypothesis import HealthCheck, Phase, given, settings  # noqa: E402

from benchcheck.errors import LayoutError  # noqa: E402
from benchcheck.layout import parse_layout  # noqa: E402
from tests.layout.test_loader_errors import mutated_layout  # noqa: E402
from tests.reliability.layout_strategies import near_valid_layout  # noqa: E402


def fuzz(strategy, examples: int, seed: int) -> dict:
    outcome: Counter[str] = Counter()
    others: list[tuple[str, str]] = []
    slowest = (0.0, "")
    total = 0.0

    @settings(max_examples=examples, deadline=None, database=None, derandomize=False, phases=[Phase.generate],
              suppress_health_check=list(HealthCheck))
    @given(strategy)
    def one(text: str) -> None:
        nonlocal slowest, total
        start = time.perf_counter()
        try:
            parse_layout(text, "fuzz.toml")
            outcome["loaded"] += 1
        except LayoutError as error:
            outcome["LayoutError"] += 1
            if error.file != "fuzz.toml" or not error.message:
                outcome["LayoutError without place"] += 1
        except Exception:  # what the fuzzing is for: anything but LayoutError is a bug
            outcome["other exception"] += 1
            others.append((traceback.format_exc(limit=3), text))
        elapsed = time.perf_counter() - start
        total += elapsed
        if elapsed > slowest[0]:
            slowest = (elapsed, text)

    one._hypothesis_internal_use_seed = seed  # reproducible runs: --seed
    one()
    return {"outcome": outcome, "others": others, "slowest": slowest, "total": total}


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--examples", type=int, default=2000, help="examples per generator (default 2000)")
    parser.add_argument("--seed", type=int, default=0, help="seed of the generators")
    args = parser.parse_args()
    parse_layout('format = 1\n[bench]\nwavelength = "1 um"\n[source]\nwaist = "1 mm"\n')  # warm pint's cache
    failures = 0
    for name, strategy in (("near-valid layouts", near_valid_layout()), ("mutated shipped layouts", mutated_layout())):
        report = fuzz(strategy, args.examples, args.seed)
        counts = report["outcome"]
        cases = sum(counts[key] for key in ("loaded", "LayoutError", "other exception"))
        print(f"{name}: {cases} cases: {counts['loaded']} loaded, {counts['LayoutError']} LayoutError "
              f"({counts['LayoutError without place']} without file or message), "
              f"{counts['other exception']} other exceptions; mean {1e3 * report['total'] / max(cases, 1):.2f} ms, "
              f"slowest {1e3 * report['slowest'][0]:.1f} ms")
        print("  slowest case:\n    " + report["slowest"][1].strip().replace("\n", "\n    ")[:1500])
        for trace, text in report["others"][:5]:
            print("  OTHER EXCEPTION:\n" + trace + "  text:\n" + text[:1500])
        failures += counts["other exception"] + counts["LayoutError without place"]
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
