"""Purchase plans: cases on paper, brute force against the MILP, golden LP file, messages.

Every supplier, pack, price and shipping term here is invented for the tests (no real
supplier or product).  Check values are worked by hand in the comments (sums of invented
prices) or by enumerating every combination of pack counts (brute force).
"""

import itertools
import json
import math
import random
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector.errors import InfeasibleSpecError, InputError
from selector.prices import Offer, PriceBook, Supplier, parse_price_bytes, parse_rate_bytes, parse_supplier_bytes
from selector.purchase import (
    Need,
    PlanOptions,
    build_purchase_model,
    buy_or_make,
    needs_from_reagents,
    parse_need,
    parse_plan,
    plan_cost,
    purchase_data,
    solve_purchase,
)

GOLDEN = Path(__file__).parent / "data" / "golden_purchase.lp"
OFFERS = ("supplier,reagent,pack_size,pack_price,currency,grade\n"
          "Alder Reagents,Tris,1 kg,80,EUR,reagent\n"
          "Alder Reagents,Tris,500 g,45,EUR,molecular biology\n"
          "Birchwood Lab Supply,Tris,5 kg,300,EUR,reagent\n"
          "Birchwood Lab Supply,NaCl,1 kg,5,EUR,\n"
          "Alder Reagents,NaCl,1 kg,4,EUR,\n"
          "Alder Reagents,HCl,2.5 L,40,EUR,\n")
SUPPLIERS = "supplier,shipping,free_shipping_over,min_order\nAlder Reagents,15,200,\nBirchwood Lab Supply,20,,30\n"


def book_and_suppliers(offers: str = OFFERS, suppliers: str = SUPPLIERS):
    book, report = parse_price_bytes(offers.encode(), "offers.csv")
    assert not report.problems, report.problems
    terms, problems = parse_supplier_bytes(suppliers.encode(), "suppliers.csv", "EUR")
    assert not problems
    return book, terms


def test_free_shipping_reached_with_one_supplier():
    """Tris 2.2 kg, NaCl 3 kg, HCl 1 L (1180 g at 1.18 g/mL, from memory).  By hand: Alder
    2 × 1 kg Tris (160) + 1 × 500 g (45) + 3 × NaCl (12) + 1 × HCl (40) = 257 EUR, over Alder's
    free-shipping threshold of 200, so no shipping: total 257 EUR."""
    book, terms = book_and_suppliers()
    plan = solve_purchase([parse_need("tris=2.2kg"), parse_need("nacl=3kg"), parse_need("HCl=1 L")], book, terms)
    assert plan.total == pytest.approx(257.0, abs=1e-9)
    assert plan.shipping == {"Alder Reagents": 0.0}
    assert plan.leftover_g == pytest.approx({"tris": 300.0, "nacl": 0.0, "hcl": 2950.0 - 1180.0}, abs=1e-9)


def test_below_the_threshold_shipping_is_charged():
    """NaCl 2 kg only.  By hand: Alder 2 × 4 = 8 + 15 shipping = 23; Birchwood 2 × 5 = 10 is
    below its minimum order of 30, so 6 packs (30) + 20 = 50; Alder wins at 23 EUR."""
    book, terms = book_and_suppliers()
    plan = solve_purchase([parse_need("nacl=2kg")], book, terms)
    assert plan.total == pytest.approx(23.0, abs=1e-9) and plan.shipping == {"Alder Reagents": 15.0}


def test_buying_up_to_the_threshold_when_it_pays():
    """Threshold 20, shipping 15, NaCl 1 kg at 4: one pack costs 4 + 15 = 19; five packs
    reach 20 and ship free: 20 < 19? No, so one pack is cheaper (19).  With shipping 17:
    one pack 21 against five packs 20 free: five packs win (20 EUR)."""
    offers = "supplier,reagent,pack_size,pack_price,currency\nAlder Reagents,NaCl,1 kg,4,EUR\n"
    for shipping, total, count in ((15, 19.0, 1), (17, 20.0, 5)):
        book, terms = book_and_suppliers(offers, f"supplier,shipping,free_shipping_over\nAlder Reagents,{shipping},20\n")
        plan = solve_purchase([parse_need("nacl=1kg")], book, terms)
        assert (plan.total, plan.orders[0].count) == (pytest.approx(total, abs=1e-9), count)


def test_exclude_grade_and_fewer_suppliers():
    book, terms = book_and_suppliers()
    needs = [parse_need("tris=1kg"), parse_need("nacl=1kg")]
    plan = solve_purchase(needs, book, terms, PlanOptions(grades=(("tris", "Molecular Biology"),)))
    # By hand: 2 × 500 g molecular biology Tris (90) + NaCl at Alder (4) + shipping 15 = 109 EUR.
    assert plan.total == pytest.approx(109.0, abs=1e-9)
    assert {o.grade for o in plan.orders if o.reagent_id == "tris"} == {"molecular biology"}
    plan = solve_purchase(needs, book, terms, PlanOptions(exclude=("alder reagents",)))
    # By hand: Birchwood 5 kg Tris (300) + NaCl 5 = 305 (over the minimum of 30) + shipping 20 = 325 EUR.
    assert plan.total == pytest.approx(325.0, abs=1e-9) and set(plan.shipping) == {"Birchwood Lab Supply"}


def test_preferring_fewer_suppliers_trades_cost_for_one_order():
    """Two suppliers each cheapest for one reagent: X sells A at 10, Y sells B at 10, each
    also sells the other at 12; no shipping.  Least cost: 20 from two suppliers; with a
    weight of 5 per supplier one supplier (22 + 5 < 20 + 10): total 22 EUR."""
    offers = ("supplier,reagent,pack_size,pack_price,currency\nX Supplies,Tris,1 kg,10,EUR\n"
              "X Supplies,NaCl,1 kg,12,EUR\nY Supplies,NaCl,1 kg,10,EUR\nY Supplies,Tris,1 kg,12,EUR\n")
    book, terms = book_and_suppliers(offers, "supplier,shipping\nX Supplies,0\nY Supplies,0\n")
    needs = [parse_need("tris=1kg"), parse_need("nacl=1kg")]
    assert solve_purchase(needs, book, terms).total == pytest.approx(20.0, abs=1e-9)
    plan = solve_purchase(needs, book, terms, PlanOptions(supplier_weight=5.0))
    assert plan.total == pytest.approx(22.0, abs=1e-9) and len(plan.shipping) == 1


def test_shelf_life_makes_smaller_packs_pay():
    """5 kg of Tris.  All at once, by hand: one 5 kg pack (300 + 20 shipping = 320) beats
    5 × 1 kg (400, free shipping).  Spread over 5 months with opened packs keeping 1 month:
    1 kg a month, a 5 kg pack opened would expire, so 5 × 1 kg (80 each, cheaper than
    2 × 500 g at 90) = 400, over the 200 threshold: no shipping."""
    book, terms = book_and_suppliers()
    plan = solve_purchase([parse_need("tris=5kg")], book, terms)
    assert plan.total == pytest.approx(320.0, abs=1e-9)
    plan = solve_purchase([parse_need("tris=5kg")], book, terms, PlanOptions(horizon_months=5, shelf_life_months=1))
    assert plan.total == pytest.approx(400.0, abs=1e-9) and plan.periods == {"tris": 5}


def test_a_liquid_need_by_volume_and_a_solid_refused():
    need = parse_need("acetic acid=2 L")
    # 2 L of glacial acetic acid at 1.0471 g/mL (20 °C, Perry's Chemical Engineers' Handbook 8th ed.,
    # Table 2-32, DIPPR eq. 105: the catalog's density) = 2094.2 g.
    assert need.grams == pytest.approx(2094.2, rel=1e-12)
    with pytest.raises(InputError, match="is a solid; give it by mass"):
        parse_need("NaCl=2 L")
    with pytest.raises(InputError, match="give each reagent as NAME=AMOUNT"):
        parse_need("2kg")


def test_needs_from_a_recipe_reagents_times_volume(shipped_catalog):
    """20 L of 25 mM HEPES: 0.5 mol × 238.3012 g/mol (catalog) / purity 0.995 (catalog)."""
    (need,) = needs_from_reagents([("hepes", 0.025), ("nacl", 0.0)], 20.0, "recipe assay", shipped_catalog)
    reagent = shipped_catalog.reagents["hepes"]
    assert need.grams == pytest.approx(0.5 * reagent.molar_mass_g_mol / reagent.purity_fraction, rel=1e-12)


@pytest.mark.parametrize("needs, options, message", [
    (["kcl=1kg"], PlanOptions(), "no offer for potassium chloride: add one to a price sheet"),
    (["hcl=1kg"], PlanOptions(exclude=("Alder Reagents",)),
     "every offer for hydrochloric acid comes from an excluded supplier (Alder Reagents)"),
    (["tris=1kg"], PlanOptions(grades=(("tris", "ultra"),)),
     "no offer for Tris base of grade 'ultra' (offered: molecular biology, reagent)"),
])
def test_infeasible_plans_are_explained_in_words(needs, options, message):
    book, terms = book_and_suppliers()
    with pytest.raises(InfeasibleSpecError) as caught:
        solve_purchase([parse_need(n) for n in needs], book, terms, options)
    assert message in str(caught.value)


@pytest.mark.parametrize("options, message", [
    (PlanOptions(exclude=("Nobody Ltd",)), "exclude: no offer comes from 'Nobody Ltd'"),
    (PlanOptions(grades=(("nacl", "x"),)), "grade given for nacl, which no need asks for"),
    (PlanOptions(horizon_months=3), "give both the horizon and the shelf life"),
    (PlanOptions(horizon_months=3, shelf_life_months=0.001), "make at most 120 periods"),
    (PlanOptions(supplier_weight=-1), "must be a number >= 0"),
])
def test_bad_options_are_refused(options, message):
    book, terms = book_and_suppliers()
    with pytest.raises(InputError, match=message.replace("(", r"\(")):
        solve_purchase([parse_need("tris=1kg")], book, terms, options)


def test_plan_output_keys():
    book, terms = book_and_suppliers()
    out = solve_purchase([parse_need("tris=1kg")], book, terms).as_dict()
    assert {"orders", "total", "currency", "shipping", "leftover"} <= set(out)
    assert {"supplier", "reagent", "pack_size", "pack_price", "count"} <= set(out["orders"][0])
    json.dumps(out)


def test_plan_file_with_needs_recipes_and_options(tmp_path):
    text = """
offers = ["offers.csv"]
suppliers = "suppliers.csv"
exclude = ["Birchwood Lab Supply"]
[needs]
tris = "1 kg"
[grades]
tris = "reagent"
[[recipes]]
name = "wash"
volume = "10 L"
reagents = { nacl = 0.15 }
"""
    plan = parse_plan(text, "plan.toml", tmp_path)
    assert plan.offers == (str(tmp_path / "offers.csv"),) and plan.suppliers == str(tmp_path / "suppliers.csv")
    assert plan.options.exclude == ("Birchwood Lab Supply",) and plan.options.grades == (("tris", "reagent"),)
    assert [n.reagent_id for n in plan.needs] == ["tris", "nacl"]
    assert plan.needs[1].origin == "recipe wash × 10 L"
    for bad, message in (("[needs]\ntris = 5\n", "expected text in quotes"), ("colour = 1\n", "unknown key"),
                         ("[needs\n", "not a TOML file"), ("[[recipes]]\nvolume = '1 L'\nreagents = {unobtainium = 1}\n",
                                                           "unknown reagent 'unobtainium'")):
        with pytest.raises(InputError, match=message):
            parse_plan(bad, "plan.toml")


# --- brute force ----------------------------------------------------------------------------------

def brute_force_total(data, weight: float = 0.0) -> float:
    """Least cost over every combination of pack counts per offer and period within the
    model's bounds: each period of a reagent covered by the packs opened in it."""
    best = float("inf")
    slots = [(o, p) for o, offer in enumerate(data.offers) for p in range(data.periods[offer.reagent_id])]
    for flat in itertools.product(*(range(data.upper[o] + 1) for o, _ in slots)):
        per_period = [[0] * data.periods[offer.reagent_id] for offer in data.offers]
        for (o, p), count in zip(slots, flat):
            per_period[o][p] = count
        covered = all(sum(o.pack_g * c[p] for o, c in zip(data.offers, per_period) if o.reagent_id == r)
                      >= g / data.periods[r] - 1e-9 for r, g in data.needs_g.items() for p in range(data.periods[r]))
        if not covered:
            continue
        try:
            goods, shipping = plan_cost(data, [sum(c) for c in per_period])
        except InputError:        # below a minimum order
            continue
        best = min(best, goods + sum(shipping.values()) + weight * len(shipping))
    return best


def random_instance(rng: random.Random):
    """2 reagents, 2-3 invented suppliers, 1-2 packs each: small enough to enumerate."""
    suppliers = {}
    offers = []
    for s in range(rng.randint(2, 3)):
        name = f"Supplier {s}"
        free = rng.choice([None, float(rng.randint(20, 80))])
        suppliers[name.casefold()] = Supplier(name, float(rng.randint(0, 25)), "EUR", "invented", free,
                                              rng.choice([0.0, float(rng.randint(5, 40))]))
        for reagent in ("tris", "nacl"):
            for _ in range(rng.randint(0, 2)):
                grams = rng.choice([250.0, 500.0, 1000.0])
                offers.append(Offer(name, reagent, f"{grams:g} g", grams, float(rng.randint(3, 30)), "EUR",
                                    "invented"))
    for reagent in ("tris", "nacl"):   # every reagent has at least one offer
        if not any(o.reagent_id == reagent for o in offers):
            offers.append(Offer("Supplier 0", reagent, "500 g", 500.0, 10.0, "EUR", "invented"))
    needs = [Need("tris", float(rng.randint(1, 6) * 150), "invented"),
             Need("nacl", float(rng.randint(1, 6) * 150), "invented")]
    return needs, PriceBook("EUR", {}, offers=tuple(offers)), suppliers


def test_milp_agrees_with_brute_force_on_small_instances():
    """100 random invented instances (seeded; one or two shelf-life periods, for every reagent
    or for Tris alone; at most 5000
    combinations each): the MILP's total equals the least total over every combination of
    pack counts, to 1e-9."""
    rng = random.Random(15)
    compared = spread = 0
    while compared < 100:
        needs, book, suppliers = random_instance(rng)
        weight = rng.choice([0.0, 0.0, 7.0])
        options = PlanOptions(supplier_weight=weight, **rng.choice([
            {}, {}, {"horizon_months": 2, "shelf_life_months": 1},
            {"horizon_months": 2, "shelf_lives": (("tris", 1.0),)}]))
        data = purchase_data(needs, book, suppliers, options)
        if math.prod((u + 1) ** data.periods[o.reagent_id] for u, o in zip(data.upper, data.offers)) > 5000:
            continue
        plan = solve_purchase(needs, book, suppliers, options)
        expected = brute_force_total(data, weight)
        assert plan.total + weight * len(plan.shipping) == pytest.approx(expected, abs=1e-9), (needs, book, suppliers)
        compared += 1
        spread += max(data.periods.values()) > 1
    assert spread >= 10      # the shelf-life split was exercised too


def test_golden_lp_file(tmp_path):
    # A deliberate formulation change regenerates tests/data/golden_purchase.lp (and says so).
    book, terms = book_and_suppliers()
    data = purchase_data([parse_need("tris=1.2kg"), parse_need("nacl=2kg")], book, terms,
                         PlanOptions(supplier_weight=1.0, horizon_months=2, shelf_life_months=1))
    import pyomo.environ  # noqa: F401  (registers the LP writer; the plan itself imports pyomo.core only)

    path = tmp_path / "purchase.lp"
    build_purchase_model(data).write(str(path), io_options={"symbolic_solver_labels": True})
    assert path.read_text() == GOLDEN.read_text()


# --- any text: an answer or one InputError, never a traceback -------------------------------------

SHEET_TEXT = st.text(alphabet=st.sampled_from(list("abcNaCltris,;\t\n\"=.-05 kgLEUR")), max_size=120)


@settings(max_examples=150, deadline=None)
@given(SHEET_TEXT)
def test_readers_answer_or_refuse_any_text(text):
    """Offer, supplier and rate sheets, plan files and needs: a result or an InputError."""
    for call in (lambda: parse_price_bytes(("supplier;reagent;pack_size;pack_price\n" + text).encode(), "s.csv"),
                 lambda: parse_supplier_bytes(("supplier,shipping\n" + text).encode(), "s.csv", "EUR"),
                 lambda: parse_rate_bytes(("from_currency,to_currency,rate\n" + text).encode(), "r.csv"),
                 lambda: parse_plan(text, "plan.toml"),
                 lambda: parse_need(text)):
        try:
            call()
        except InputError:
            pass


# --- buy or make ----------------------------------------------------------------------------------

PREPARED = ("supplier,reagent,pack_size,pack_price,currency,composition\n"
            "Alder Reagents,Tris,1 kg,80,EUR,\n"
            "Alder Reagents,Tris HCl,1 kg,90,EUR,\n"
            "Alder Reagents,Tris saline ready-made,1 L,25,EUR,tris=25mM; tris hydrochloride=25mM; nacl=150mM\n"
            "Birchwood Lab Supply,Tris saline tablets,10 L,9,EUR,tris=25mM; tris hydrochloride=25mM; nacl=150mM\n")


def test_buy_or_make_per_litre(shipped_catalog):
    """Made: Σ c M / w × price per kg / 1000 with the catalog's molar masses and purities and
    the invented prices (Tris 80, Tris HCl 90 EUR/kg from the sheet, NaCl its demo price);
    bought: 25 EUR per 1 L bottle, 9 EUR per 10 L of tablets = 0.9 EUR/L (invented)."""
    book, report = parse_price_bytes(PREPARED.encode(), "prep.csv", shipped_catalog)
    assert not report.problems and report.rows_used == 4
    r = shipped_catalog.reagents
    made = sum(c * r[i].molar_mass_g_mol / r[i].purity_fraction * p / 1000 for i, c, p in (
        ("tris", 0.025, 80.0), ("tris_hcl", 0.025, 90.0), ("nacl", 0.150, r["nacl"].demo_price_per_kg.value)))
    rows = buy_or_make(book, shipped_catalog)
    assert [(x.product, x.bought_per_l) for x in rows] == [("Tris saline ready-made", 25.0),
                                                          ("Tris saline tablets", 0.9)]
    assert rows[0].made_per_l == pytest.approx(made, rel=1e-12) and rows[0].verdict == "make"
    assert rows[0].made_origins["tris"] == "prep.csv row 2 (1 kg from Alder Reagents)"
    assert book.offers_for("tris") and not any(o.reagent_id == "nacl" for o in book.offers)


@pytest.mark.parametrize("row, message", [
    ("Alder Reagents,Saline,1 kg,5,EUR,nacl=150mM", "unknown unit 'kg'"),
    ("Alder Reagents,Saline,1 L,5,EUR,nacl", "give each reagent as NAME=AMOUNT"),
    ("Alder Reagents,Saline,1 L,5,EUR,unobtainium=1mM", "unknown reagent 'unobtainium'"),
    ("Alder Reagents,Saline,1 L,0,EUR,nacl=150mM", "must be more than zero"),
    ("Alder Reagents,,1 L,5,EUR,nacl=150mM", "no product named"),
])
def test_prepared_buffer_rows_report_their_problem(row, message):
    _, report = parse_price_bytes((PREPARED + row + "\n").encode(), "prep.csv")
    assert any(p.startswith("prep.csv row 6: ") and message in p for p in report.problems), report.problems
    assert report.rows_used == 4


def test_lead_time_limit():
    """Alder ships Tris in 12 days, Birchwood in 3 (invented).  Within 5 days only Birchwood's
    5 kg pack serves: 300 + 20 shipping = 320 EUR; within 2 days nothing does."""
    offers = ("supplier,reagent,pack_size,pack_price,currency,lead_time_days\n"
              "Alder Reagents,Tris,1 kg,80,EUR,12\nBirchwood Lab Supply,Tris,5 kg,300,EUR,3\n"
              "Alder Reagents,NaCl,1 kg,4,EUR,\n")
    book, terms = book_and_suppliers(offers)
    plan = solve_purchase([parse_need("tris=1kg")], book, terms, PlanOptions(within_days=5))
    assert plan.total == pytest.approx(320.0, abs=1e-9)
    with pytest.raises(InfeasibleSpecError, match="no offer for Tris base arrives within 2 days .the fastest takes 3"):
        solve_purchase([parse_need("tris=1kg")], book, terms, PlanOptions(within_days=2))
    plan = solve_purchase([parse_need("nacl=1kg")], book, terms, PlanOptions(within_days=2))
    assert "offers without a stated lead time were kept" in plan.notes[0]


def test_shelf_life_per_reagent():
    """Opened Tris keeps 1 month, NaCl has no shelf life (invented).  By hand, over 3 months:
    Tris 1.2 kg is 0.4 kg a month, each month one 500 g pack (45, cheaper than 1 kg at 80):
    135; NaCl 1 kg once at Alder: 4; goods 139 are below Alder's 200 threshold: + 15 = 154 EUR."""
    book, terms = book_and_suppliers()
    options = PlanOptions(horizon_months=3, shelf_life_months=None, shelf_lives=(("tris", 1.0),))
    plan = solve_purchase([parse_need("tris=1.2kg"), parse_need("nacl=1kg")], book, terms, options)
    assert plan.periods == {"tris": 3, "nacl": 1}
    assert plan.total == pytest.approx(154.0, abs=1e-9)
    with pytest.raises(InputError, match="shelf life given for kcl, which no need asks for"):
        solve_purchase([parse_need("tris=1kg")], book, terms, PlanOptions(horizon_months=3,
                                                                          shelf_lives=(("kcl", 1.0),)))


def test_a_supplier_named_in_another_case_is_one_supplier():
    """Offers from 'alder reagents' and terms for 'Alder Reagents': one supplier, its terms
    applied once (by hand: 2 × 4 + 15 shipping = 23 EUR) and its lines under the terms' name."""
    offers = "supplier,reagent,pack_size,pack_price,currency\nalder reagents,NaCl,1 kg,4,EUR\nALDER REAGENTS,Tris,1 kg,80,EUR\n"
    book, terms = book_and_suppliers(offers)
    plan = solve_purchase([parse_need("nacl=2kg")], book, terms)
    assert plan.total == pytest.approx(23.0, abs=1e-9) and {o.supplier for o in plan.orders} == {"Alder Reagents"}
    assert set(plan.shipping) == {"Alder Reagents"}
