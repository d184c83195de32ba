"""The app's pictures of a buffer, drawn once here for every page: β against pH with every
pKa′ and the target marked, a titration curve with the target, pH against temperature with
the preparation and use temperatures marked.  Every number comes from :mod:`selector.curves`
(or the ranking); names, never ids, label the lines.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence

import altair as alt
import pandas as pd

#: Colour of the target's marks (a rule on the pH axis or across the pH values).
TARGET_COLOUR = "red"
#: Colour of the temperature marks (preparation, use).
TEMPERATURE_COLOUR = "grey"


def _ph_rule(ph: float, label: str, horizontal: bool = False) -> alt.Chart:
    frame = pd.DataFrame({"pH": [ph], "what": [label]})
    channel = alt.Y if horizontal else alt.X
    return alt.Chart(frame).mark_rule(color=TARGET_COLOUR, strokeDash=[6, 3]).encode(
        channel("pH:Q"), tooltip=["what:N", alt.Tooltip("pH:Q", format=".2f")])


def capacity_chart(lines: Sequence[tuple[str, Sequence[float], Sequence[float]]], pka_marks: Iterable,
                   target_ph: float | None, axis: tuple[float, float]) -> alt.LayerChart:
    """β [mM per pH] against pH, one line per (name, pH values, β in mol/L per pH); each pKa′
    mark (:class:`selector.curves.PkaMark`) a thin rule with its name; the target a red rule."""
    frame = pd.DataFrame([{"buffer": name, "pH": p, "β, mM per pH": b * 1000.0}
                          for name, ph, beta in lines for p, b in zip(ph, beta)])
    scale = alt.Scale(domain=list(axis), nice=False)
    layers = [alt.Chart(frame).mark_line().encode(
        x=alt.X("pH:Q", scale=scale), y=alt.Y("β, mM per pH:Q"), color=alt.Color("buffer:N", title=None, legend=alt.Legend(orient="bottom")),
        tooltip=["buffer:N", alt.Tooltip("pH:Q", format=".2f"), alt.Tooltip("β, mM per pH:Q", format=".2f")])]
    marks = pd.DataFrame([{"pH": m.pka_apparent, "pKa′": m.label} for m in pka_marks])
    if not marks.empty:
        layers.append(alt.Chart(marks).mark_rule(color=TEMPERATURE_COLOUR, strokeDash=[2, 2]).encode(
            x=alt.X("pH:Q", scale=scale), tooltip=["pKa′:N"]))
        layers.append(alt.Chart(marks).mark_text(angle=270, align="left", dx=4, dy=-4, fontSize=10,
                                                  color=TEMPERATURE_COLOUR).encode(
            x=alt.X("pH:Q", scale=scale), y=alt.value(4), text="pKa′:N"))
    if target_ph is not None:
        layers.append(_ph_rule(target_ph, "target pH"))
    return alt.layer(*layers)


def titration_chart(added_ml_per_l: Sequence[float], ph: Sequence[float], titrant_name: str,
                    target_ph: float | None) -> alt.LayerChart:
    """pH against mL of 1 M titrant per litre of buffer forms; the target a red rule across."""
    frame = pd.DataFrame({"added": list(added_ml_per_l), "pH": list(ph)})
    x_title = f"{titrant_name}, mL of 1 M per L"
    layers = [alt.Chart(frame).mark_line().encode(
        x=alt.X("added:Q", title=x_title), y=alt.Y("pH:Q", scale=alt.Scale(zero=False)),
        tooltip=[alt.Tooltip("added:Q", title=x_title, format=".2f"), alt.Tooltip("pH:Q", format=".2f")])]
    if target_ph is not None:
        layers.append(_ph_rule(target_ph, "target pH", horizontal=True))
    return alt.layer(*layers)


def temperature_chart(lines: Sequence[tuple[str, Sequence[float], Sequence[float]]], use_c: float,
                      prep_c: float, band: tuple[float, float] | None = None) -> alt.LayerChart:
    """pH against temperature [°C], one line per (name, temperatures, pH); the preparation and
    use temperatures as labelled rules; ``band`` (pH low, high) shaded: the allowed excursion."""
    frame = pd.DataFrame([{"buffer": name, "temperature, °C": t, "pH": p}
                          for name, temperatures, ph in lines for t, p in zip(temperatures, ph)])
    layers = []
    if band is not None:
        layers.append(alt.Chart(pd.DataFrame({"low": [band[0]], "high": [band[1]]})).mark_rect(
            opacity=0.12, color=TARGET_COLOUR).encode(y=alt.Y("low:Q", title="pH"), y2="high:Q"))
    layers.append(alt.Chart(frame).mark_line().encode(
        x=alt.X("temperature, °C:Q", scale=alt.Scale(zero=False, nice=False)),
        y=alt.Y("pH:Q", scale=alt.Scale(zero=False)), color=alt.Color("buffer:N", title=None, legend=alt.Legend(orient="bottom")),
        tooltip=["buffer:N", alt.Tooltip("temperature, °C:Q", format=".1f"), alt.Tooltip("pH:Q", format=".3f")]))
    marks = pd.DataFrame([{"temperature, °C": prep_c, "mark": f"preparation {prep_c:g} °C"},
                          {"temperature, °C": use_c, "mark": f"use {use_c:g} °C"}])
    layers.append(alt.Chart(marks).mark_rule(color=TEMPERATURE_COLOUR, strokeDash=[4, 3]).encode(
        x="temperature, °C:Q", tooltip=["mark:N"]))
    layers.append(alt.Chart(marks).mark_text(angle=270, align="left", dx=4, dy=-4, fontSize=10,
                                             color=TEMPERATURE_COLOUR).encode(
        x="temperature, °C:Q", y=alt.value(4), text="mark:N"))
    return alt.layer(*layers)


def cost_chart(costs: Sequence[tuple[str, float]], title: str) -> alt.Chart:
    """Bars of (name, cost); ``title`` names the quantity and currency."""
    frame = pd.DataFrame([{"item": name, "cost": value} for name, value in costs])
    return alt.Chart(frame).mark_bar().encode(
        y=alt.Y("item:N", title=None, sort=None, axis=alt.Axis(labelLimit=240)), x=alt.X("cost:Q", title=title),
        tooltip=["item:N", alt.Tooltip("cost:Q", title=title, format=".3f")])
