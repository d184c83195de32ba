"""Purchase-plan MILP latency on invented quarters of needs.

Each case: ``--reagents`` needed reagents offered by ``--suppliers`` invented suppliers in
three pack sizes each (random invented prices, seeded), flat shipping, free-shipping
thresholds and minimum orders; solved once plain and once with a 3-month horizon and
1-month shelf life (3 periods).  Reports the median and max wall time of
:func:`selector.purchase.solve_purchase` [s] over ``--repeat`` instances.  Run on demand
from the repository root (never in the test gate)::

    python benchmarks/bench_purchase.py --reagents 20 --suppliers 5 --json
"""

from __future__ import annotations

import argparse
import json
import random
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import selector  # noqa: E402

#: The bound a purchaser waits for (common practice: an answer within a few seconds).
TARGET_S = 5.0


def invented_case(rng: random.Random, reagents: int, suppliers: int):
    """Needs, a price book of offers and suppliers' terms, all invented."""
    catalog = selector.load_catalog()
    solids = sorted(r.reagent_id for r in catalog.reagents.values() if r.physical_form == "solid")[:reagents]
    terms = {}
    offers = []
    for s in range(suppliers):
        name = f"Invented Supplier {s}"
        terms[name.casefold()] = selector.Supplier(name, float(rng.randint(0, 30)), "EUR", "invented",
                                          float(rng.choice([150, 250, 400])), float(rng.choice([0, 25, 50])))
        for reagent_id in solids:
            if rng.random() < 0.7:
                base = rng.uniform(20, 400)   # EUR per kg, invented
                for grams, factor in ((100.0, 1.6), (500.0, 1.2), (2500.0, 1.0)):
                    offers.append(selector.Offer(name, reagent_id, f"{grams:g} g", grams,
                                        round(base * grams / 1000 * factor * rng.uniform(0.9, 1.1), 2), "EUR",
                                        "invented"))
    needs = [selector.Need(r, rng.uniform(50, 3000), "invented") for r in solids if any(o.reagent_id == r for o in offers)]
    return needs, selector.PriceBook("EUR", {}, offers=tuple(offers)), terms


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--reagents", type=int, default=20)
    parser.add_argument("--suppliers", type=int, default=5)
    parser.add_argument("--repeat", type=int, default=5)
    parser.add_argument("--json", action="store_true")
    args = parser.parse_args()
    rng = random.Random(2026)
    figures = {}
    for label, options in (("plain", selector.PlanOptions()),
                           ("shelf_life_3_periods", selector.PlanOptions(horizon_months=3, shelf_life_months=1))):
        times = []
        offers = 0
        for _ in range(args.repeat):
            needs, book, terms = invented_case(rng, args.reagents, args.suppliers)
            offers = len(book.offers)
            start = time.perf_counter()
            selector.solve_purchase(needs, book, terms, options)
            times.append(time.perf_counter() - start)
        figures[label] = {"median_s": statistics.median(times), "max_s": max(times), "offers": offers}
    figures["target_s"] = TARGET_S
    print(json.dumps(figures) if args.json else "\n".join(
        f"{k}: median {v['median_s']:.3f} s, max {v['max_s']:.3f} s ({v['offers']} offers)"
        for k, v in figures.items() if isinstance(v, dict)))
    return 0 if all(v["max_s"] <= TARGET_S for v in figures.values() if isinstance(v, dict)) else 1


if __name__ == "__main__":
    raise SystemExit(main())
