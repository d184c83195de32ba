"""The app's pictures of a buffer, drawn once here for every page: β against pH with every
pKa′ and the target marked, a titration curve with the target, pH against temperature with
the preparation and use temperatures marked, costs as bars, the useful ranges of several
systems against the target, a plate map.  Every number comes from :mod:`selector.curves`
(or the ranking, or a design); names, never ids, label the lines.

Each function returns a Vega-Lite specification as a plain dictionary (data inline), which a
page shows with ``st.vega_lite_chart(spec, width="stretch", key=...)``.  Written directly
rather than through a chart library: building and schema-checking the same pictures through
one took ≈ 0.05 s per chart on every rerun and ≈ 0.5 s of import on the first page (measured,
``benchmarks/bench_app.py``).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Sequence
from typing import Any

#: Colour of the target's marks (a rule on the pH axis or across the pH values).
TARGET_COLOUR = "red"
#: Colour of the temperature marks (preparation, use).
TEMPERATURE_COLOUR = "grey"
#: Legend below the plot, untitled (the line names say what they are).
BOTTOM_LEGEND = {"title": None, "orient": "bottom"}

#: The Vega-Lite major version the app's frontend draws (Streamlit's bundle).
SCHEMA_URL = "https://vega.github.io/schema/vega-lite/v6.json"

Spec = dict


def _number(value: Any) -> str | float | None:
    """A cell of inline data: text as it is, a number as a plain float, a missing or
    non-finite number (NaN, ±inf: no JSON for them) as None, which Vega-Lite leaves out."""
    if isinstance(value, str) or value is None:
        return value
    number = float(value)
    return number if math.isfinite(number) else None


def _values(rows: Iterable[dict]) -> dict:
    """Inline data: every number as a plain float (JSON), every label as text, no NaN."""
    return {"values": [{key: _number(value) for key, value in row.items()} for row in rows]}


def _layered(*layers: Spec) -> Spec:
    return {"$schema": SCHEMA_URL, "layer": list(layers)}


def _ph_rule(ph: float, label: str, horizontal: bool = False) -> Spec:
    channel = "y" if horizontal else "x"
    return {"data": _values([{"pH": ph, "what": label}]),
            "mark": {"type": "rule", "color": TARGET_COLOUR, "strokeDash": [6, 3]},
            "encoding": {channel: {"field": "pH", "type": "quantitative"},
                         "tooltip": [{"field": "what", "type": "nominal"},
                                     {"field": "pH", "type": "quantitative", "format": ".2f"}]}}


#: Dash patterns [px on, px off]: pKa′ marks dotted, temperature marks dashed.
PKA_DASH = [2, 2]
TEMPERATURE_DASH = [4, 3]


def _labelled_rules(rows: list[dict], field: str, label: str, dash: list[int], scale: dict | None = None) -> list[Spec]:
    """Thin grey rules (``dash``) at ``rows[field]`` with their ``label`` written upwards beside them."""
    x = {"field": field, "type": "quantitative", **({"scale": scale} if scale else {})}
    return [{"data": _values(rows), "mark": {"type": "rule", "color": TEMPERATURE_COLOUR, "strokeDash": dash},
             "encoding": {"x": x, "tooltip": [{"field": label, "type": "nominal"}]}},
            {"data": _values(rows), "mark": {"type": "text", "angle": 270, "align": "left", "dx": 4, "dy": -4,
                                             "fontSize": 10, "color": TEMPERATURE_COLOUR},
             "encoding": {"x": x, "y": {"value": 4}, "text": {"field": label, "type": "nominal"}}}]


def capacity_chart(lines: Sequence[tuple[str, Sequence[float], Sequence[float]]], pka_marks: Iterable,
                   target_ph: float | None, axis: tuple[float, float]) -> Spec:
    """β [mM per pH] against pH, one line per (name, pH values, β in mol/L per pH); each pKa′
    mark (:class:`selector.curves.PkaMark`) a thin rule with its name; the target a red rule."""
    scale = {"domain": [float(axis[0]), float(axis[1])], "nice": False}
    rows = [{"buffer": name, "pH": p, "β, mM per pH": b * 1000.0} for name, ph, beta in lines for p, b in zip(ph, beta)]
    layers = [{"data": _values(rows), "mark": "line", "encoding": {
        "x": {"field": "pH", "type": "quantitative", "scale": scale},
        "y": {"field": "β, mM per pH", "type": "quantitative"},
        "color": {"field": "buffer", "type": "nominal", "legend": BOTTOM_LEGEND},
        "tooltip": [{"field": "buffer", "type": "nominal"}, {"field": "pH", "type": "quantitative", "format": ".2f"},
                    {"field": "β, mM per pH", "type": "quantitative", "format": ".2f"}]}}]
    marks = [{"pH": m.pka_apparent, "pKa′": m.label} for m in pka_marks]
    if marks:
        layers += _labelled_rules(marks, "pH", "pKa′", PKA_DASH, scale)
    if target_ph is not None:
        layers.append(_ph_rule(target_ph, "target pH"))
    return _layered(*layers)


def titration_chart(added_ml_per_l: Sequence[float], ph: Sequence[float], titrant_name: str,
                    target_ph: float | None) -> Spec:
    """pH against mL of 1 M titrant per litre of buffer forms; the target a red rule across."""
    x_title = f"{titrant_name}, mL of 1 M per L"
    layers = [{"data": _values({"added": a, "pH": p} for a, p in zip(added_ml_per_l, ph)), "mark": "line",
               "encoding": {"x": {"field": "added", "type": "quantitative", "title": x_title},
                            "y": {"field": "pH", "type": "quantitative", "scale": {"zero": False}},
                            "tooltip": [{"field": "added", "type": "quantitative", "title": x_title, "format": ".2f"},
                                        {"field": "pH", "type": "quantitative", "format": ".2f"}]}}]
    if target_ph is not None:
        layers.append(_ph_rule(target_ph, "target pH", horizontal=True))
    return _layered(*layers)


def temperature_chart(lines: Sequence[tuple[str, Sequence[float], Sequence[float]]], use_c: float,
                      prep_c: float, band: tuple[float, float] | None = None) -> Spec:
    """pH against temperature [°C], one line per (name, temperatures, pH); the preparation and
    use temperatures as labelled rules; ``band`` (pH low, high) shaded: the allowed excursion."""
    layers = []
    if band is not None:
        layers.append({"data": _values([{"low": band[0], "high": band[1]}]),
                       "mark": {"type": "rect", "opacity": 0.12, "color": TARGET_COLOUR},
                       "encoding": {"y": {"field": "low", "type": "quantitative", "title": "pH"},
                                    "y2": {"field": "high"}}})
    rows = [{"buffer": name, "temperature, °C": t, "pH": p}
            for name, temperatures, ph in lines for t, p in zip(temperatures, ph)]
    layers.append({"data": _values(rows), "mark": "line", "encoding": {
        "x": {"field": "temperature, °C", "type": "quantitative", "scale": {"zero": False, "nice": False}},
        "y": {"field": "pH", "type": "quantitative", "scale": {"zero": False}},
        "color": {"field": "buffer", "type": "nominal", "legend": BOTTOM_LEGEND},
        "tooltip": [{"field": "buffer", "type": "nominal"},
                    {"field": "temperature, °C", "type": "quantitative", "format": ".1f"},
                    {"field": "pH", "type": "quantitative", "format": ".3f"}]}})
    marks = [{"temperature, °C": prep_c, "mark": f"preparation {prep_c:g} °C"},
             {"temperature, °C": use_c, "mark": f"use {use_c:g} °C"}]
    layers += _labelled_rules(marks, "temperature, °C", "mark", TEMPERATURE_DASH)
    return _layered(*layers)


def cost_chart(costs: Sequence[tuple[str, float]], title: str) -> Spec:
    """Bars of (name, cost); ``title`` names the quantity and currency."""
    return {"$schema": SCHEMA_URL,
            "data": _values({"item": name, "cost": value} for name, value in costs), "mark": "bar",
            "encoding": {"y": {"field": "item", "type": "nominal", "title": None, "sort": None,
                               "axis": {"labelLimit": 240}},
                         "x": {"field": "cost", "type": "quantitative", "title": title},
                         "tooltip": [{"field": "item", "type": "nominal"},
                                     {"field": "cost", "type": "quantitative", "title": title, "format": ".3f"}]}}


def range_chart(bars: Sequence[dict], order: Sequence[str], target_ph: float) -> Spec:
    """Each system's useful range as a bar on a 0-14 pH axis (``bars``: dicts with system, low,
    high and pKa′), systems in ``order``; the target pH a red rule."""
    return _layered(
        {"data": _values(bars), "mark": {"type": "bar", "opacity": 0.6}, "encoding": {
            "x": {"field": "low", "type": "quantitative", "title": "pH", "scale": {"domain": [0, 14]}},
            "x2": {"field": "high"},
            "y": {"field": "system", "type": "nominal", "sort": list(order), "title": None},
            "tooltip": [{"field": "system", "type": "nominal"},
                        {"field": "pKa′", "type": "quantitative", "title": "pKa′ at use"}]}},
        {"data": _values([{"pH": target_ph}]), "mark": {"type": "rule", "color": TARGET_COLOUR},
         "encoding": {"x": {"field": "pH", "type": "quantitative"}}})


def lines_chart(rows: Sequence[dict], x: str, series: Sequence[str]) -> Spec:
    """Several quantities (the keys ``series`` of each row) against ``x``, one coloured line each."""
    long = [{x: row[x], "quantity": name, "value": row[name]} for row in rows for name in series]
    return {"$schema": SCHEMA_URL, "data": _values(long), "mark": "line",
            "encoding": {"x": {"field": x, "type": "quantitative", "scale": {"zero": False}},
                         "y": {"field": "value", "type": "quantitative", "title": None},
                         "color": {"field": "quantity", "type": "nominal", "legend": BOTTOM_LEGEND},
                         "tooltip": [{"field": "quantity", "type": "nominal"},
                                     {"field": x, "type": "quantitative", "format": ".3g"},
                                     {"field": "value", "type": "quantitative", "format": ".4g"}]}}


def plate_chart(wells: Sequence[dict], value: str) -> Spec:
    """A plate map: one rectangle per well (dicts with row, column, well, pH, I, mM) coloured by ``value``."""
    return {"$schema": SCHEMA_URL, "data": _values(wells), "mark": "rect",
            "encoding": {"x": {"field": "column", "type": "ordinal"}, "y": {"field": "row", "type": "ordinal"},
                         "color": {"field": value, "type": "quantitative"},
                         "tooltip": [{"field": "well", "type": "nominal"},
                                     {"field": "pH", "type": "quantitative", "format": ".3f"},
                                     {"field": "I, mM", "type": "quantitative", "format": ".2f"}]}}
