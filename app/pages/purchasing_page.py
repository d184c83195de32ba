"""Purchasing: upload offers and suppliers' terms, enter the needs, see the least-cost plan, download it."""

import json

import pandas as pd
import streamlit as st

from app import state
from app.book_save import current_book_path
from selector.book import list_recipes, open_book
from selector.errors import PoiseError
from selector.prices import (
    SUPPLIER_COLUMNS,
    UPLOAD_MAX_MB,
    money_text,
    parse_price_tables,
    parse_supplier_bytes,
)
from selector.purchase import (
    MAKE_NOTE,
    ORDER_COLUMNS,
    PlanOptions,
    buy_or_make,
    needs_from_reagents,
    needs_from_saved_recipes,
    parse_need,
    solve_purchase,
)
from selector.textsafe import write_csv
from selector.units import parse_volume

st.title("Purchasing")
st.caption("What to order from whom to cover the needs at the least cost, shipping included. Offers come from "
           "the sheet uploaded here, else from the one in use on the Prices page.")
catalog = state.catalog()


def offers_book():
    """The price book whose offers the plan uses: the sheets uploaded here, else the Prices page's."""
    uploads = st.session_state.get("buy_offers") or []
    if not uploads:
        return st.session_state["price_book"]
    book, reports = parse_price_tables([(u.getvalue(), u.name) for u in uploads], catalog)
    for report in reports:
        for problem in report.problems:
            st.warning(problem)
    return book


def suppliers_of(book):
    upload = st.session_state.get("buy_suppliers")
    if upload is None:
        return {}
    suppliers, problems = parse_supplier_bytes(upload.getvalue(), upload.name, book.currency)
    for problem in problems:
        st.warning(problem)
    return suppliers


#: How the Purchasing page names a saved recipe's volume in messages and needs.
SAVED_ORIGIN = "the saved recipe"


def saved_recipe_names() -> list[str]:
    """Names of the recipes in the app's recipe book (none when there is no book yet)."""
    try:
        with open_book(current_book_path(), create=False) as book:
            return [r.name for r in list_recipes(book)]
    except PoiseError:
        return []


def saved_recipes_input() -> None:
    """Recipes from the book to make, each with the volume to make (as ``poise buy --make NAME=VOLUME``)."""
    names = saved_recipe_names()
    if not names:
        st.caption("No saved recipes in the recipe book yet: save one from the Recipe or Cheapest mix page, "
                   "then pick it here with a volume to make.")
        return
    st.multiselect("recipes from the book (the latest version of each)", names, key="buy_make")
    for name in st.session_state.get("buy_make") or []:
        st.text_input(f"volume of {name} to make (e.g. 20L)", key=f"buy_make_volume_{name}")


def saved_recipe_needs() -> list:
    """The needs of the saved recipes chosen, each for its volume (the function ``--make`` uses)."""
    made = [(name, st.session_state.get(f"buy_make_volume_{name}") or "")
            for name in st.session_state.get("buy_make") or []]
    return needs_from_saved_recipes(made, current_book_path(), catalog, origin=SAVED_ORIGIN)


def show_plan(plan) -> None:
    st.success(f"Total {money_text(plan.total, plan.currency)}: goods {money_text(plan.goods, plan.currency)} + "
               f"shipping {money_text(sum(plan.shipping.values()), plan.currency)}.")
    rows = plan.order_rows()
    for supplier, shipping in plan.shipping.items():
        st.subheader(f"{supplier} (shipping {money_text(shipping, plan.currency)})")
        st.dataframe(pd.DataFrame([{c: r[c] for c in ORDER_COLUMNS} for r in rows if r["supplier"] == supplier]),
                     hide_index=True, key=f"buy_orders_{supplier}")
    st.dataframe(pd.DataFrame([{"reagent": catalog.reagents[r].name, "need g": round(g, 3),
                                "left over g": round(plan.leftover_g[r], 3)} for r, g in plan.needs_g.items()]),
                 hide_index=True, key="buy_leftover")
    for note in plan.notes:
        st.info(note)
    state.show_hazards(plan.needs_g)
    st.download_button("Order list (CSV)", write_csv(ORDER_COLUMNS, rows), "order_list.csv", "text/csv",
                       key="buy_download_csv")
    st.download_button("Plan (JSON)", json.dumps(plan.as_dict(), indent=2), "purchase_plan.json",
                       "application/json", key="buy_download_json")


st.file_uploader("offers (CSV or XLSX; several sheets are alternatives)", type=["csv", "xlsx"], key="buy_offers",
                 accept_multiple_files=True,
                 help=f"supplier, reagent, pack_size, pack_price, currency; up to {UPLOAD_MAX_MB} MB each")
st.file_uploader("suppliers' terms (CSV or XLSX)", type=["csv", "xlsx"], key="buy_suppliers",
                 help=f"{', '.join(SUPPLIER_COLUMNS[:4])}; a supplier not listed ships free")
st.text_area("needs, one a line: REAGENT=AMOUNT (e.g. tris=2.5kg, HCl=1L)", key="buy_needs", height=120)
saved_recipes_input()
mix = st.session_state.get("opt_result")
if mix is not None:
    st.text_input("and this volume of the Cheapest mix page's mix (e.g. 20L; empty: none)", key="buy_mix_volume")
left, middle, right = st.columns(3)
left.text_input("never order from (suppliers, comma-separated)", key="buy_exclude")
middle.number_input("prefer fewer suppliers: weight per supplier", min_value=0.0, value=0.0, key="buy_weight")
right.number_input("shelf life of an opened pack, months (0: none)", min_value=0.0, value=0.0, key="buy_shelf")
st.number_input("the needs are used over, months (with a shelf life)", min_value=0.0, value=0.0, key="buy_horizon")
if st.button("Plan the purchase", key="buy_plan"):
    st.session_state["buy_result"] = None
    with state.user_errors():
        book = offers_book()
        needs = [parse_need(line.strip(), catalog, "needs:") for line in st.session_state["buy_needs"].splitlines()
                 if line.strip()]
        needs += saved_recipe_needs()
        mix_volume = (st.session_state.get("buy_mix_volume") or "").strip() if mix is not None else ""
        if mix_volume:
            needs += needs_from_reagents(mix.reagents_mol_l.items(), parse_volume(mix_volume, "volume of the mix"),
                                         "the Cheapest mix page's mix", catalog)
        options = PlanOptions(tuple(s.strip() for s in st.session_state["buy_exclude"].split(",") if s.strip()),
                              (), st.session_state["buy_weight"], st.session_state["buy_horizon"] or None,
                              st.session_state["buy_shelf"] or None)
        st.session_state["buy_result"] = solve_purchase(needs, book, suppliers_of(book), options, catalog)
if st.session_state.get("buy_result") is not None:
    show_plan(st.session_state["buy_result"])
if st.button("Compare prepared buffers with making them", key="buy_prepared"):
    with state.user_errors():
        rows = buy_or_make(offers_book(), catalog)
        if not rows:
            st.info("No prepared buffer among the offers (a row with a composition, e.g. 'tris=25mM; nacl=150mM', "
                    "and the volume it makes as its pack size).")
        else:
            st.dataframe(pd.DataFrame([r.as_dict() for r in rows]), hide_index=True, key="buy_prepared_table")
            st.caption(MAKE_NOTE + ".")
