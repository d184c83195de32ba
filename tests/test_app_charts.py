"""The app's pictures are Vega-Lite specifications written as plain dictionaries: each must
be valid against the Vega-Lite schema (the copy shipped with the altair package, used here only
as a reference) and carry the numbers it was given.  No published value is involved: these
are properties of the drawing code."""

import json
from pathlib import Path

import altair
import jsonschema
import pytest

from app import charts
from selector.curves import PkaMark

SCHEMA = json.loads((Path(altair.__file__).parent / "vegalite" / "v6" / "schema" / "vega-lite-schema.json").read_text())
VALIDATOR = jsonschema.Draft7Validator(SCHEMA)


def specs():
    marks = [PkaMark(system_id="phosphate", system_name="phosphate", step=2, pka_apparent=7.2)]
    return {
        "capacity": charts.capacity_chart([("phosphate", [6.0, 7.0, 8.0], [0.01, 0.03, 0.01])], marks, 7.4, (6.0, 8.0)),
        "titration": charts.titration_chart([0.0, 5.0, 10.0], [4.5, 7.0, 9.5], "sodium hydroxide", 7.4),
        "temperature": charts.temperature_chart([("Tris", [4.0, 25.0, 37.0], [8.1, 7.5, 7.2])], 37.0, 25.0, (7.3, 7.5)),
        "cost": charts.cost_chart([("sodium chloride", 0.12), ("HEPES", 1.5)], "cost per L, EUR"),
        "range": charts.range_chart([{"system": "HEPES", "low": 6.5, "high": 8.5, "pKa′": 7.5}], ["HEPES"], 7.4),
        "lines": charts.lines_chart([{"pH": 6.0, "β, mM per pH": 10.0}, {"pH": 7.0, "β, mM per pH": 12.0}], "pH",
                                    ["β, mM per pH"]),
        "plate": charts.plate_chart([{"row": "A", "column": 1, "well": "A1", "pH": 7.0, "I, mM": 100.0}], "pH"),
    }


@pytest.mark.parametrize("name", sorted(specs()))
def test_every_chart_is_a_valid_vega_lite_specification(name):
    spec = specs()[name]
    errors = [e.message for e in VALIDATOR.iter_errors(spec)]
    assert errors == []
    json.dumps(spec, allow_nan=False)   # plain JSON: no numpy numbers, no NaN


def test_the_target_and_the_marks_are_drawn_where_they_were_given():
    mark = PkaMark(system_id="phosphate", system_name="phosphate", step=2, pka_apparent=7.2)
    spec = charts.capacity_chart([("phosphate", [6.0, 7.0], [0.01, 0.02])], [mark], 7.4, (6.0, 8.0))
    rules = [layer for layer in spec["layer"] if layer["mark"] != "line"]
    drawn = {(row.get("pKa′") or row.get("what"), row["pH"]) for layer in rules for row in layer["data"]["values"]}
    assert drawn == {("phosphate pKa′2 7.20", 7.2), ("target pH", 7.4)}
    line = spec["layer"][0]["data"]["values"]
    assert [row["β, mM per pH"] for row in line] == pytest.approx([10.0, 20.0])   # mol/L per pH drawn in mM
    temperature = charts.temperature_chart([("Tris", [25.0], [7.5])], 37.0, 20.0)
    labels = [row["mark"] for layer in temperature["layer"] for row in layer["data"]["values"] if "mark" in row]
    assert labels[:2] == ["preparation 20 °C", "use 37 °C"]
