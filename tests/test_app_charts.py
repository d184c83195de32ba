"""The app's pictures are Vega-Lite specifications written as plain dictionaries: each must
be valid against the Vega-Lite schema (the copy shipped with the altair package, used here only
as a reference) and carry the numbers it was given.  No published value is involved: these
are properties of the drawing code."""

import json
from pathlib import Path

import altair
import jsonschema
import numpy as np
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


def test_a_nan_an_infinity_or_a_numpy_number_never_reaches_the_json():
    # A curve solved with strict=False holds NaN where the engine did not converge; JSON has no NaN
    # (the browser's parser refuses the whole specification), so such a point is left out as null.
    nan = float("nan")
    drawn = [
        charts.titration_chart(np.array([0.0, 1.0, 2.0]), np.array([4.0, nan, 9.0]), "sodium hydroxide", 7.0),
        charts.temperature_chart([("Tris", np.array([20.0, 25.0]), np.array([np.inf, 7.5]))], 25.0, 20.0),
        charts.lines_chart([{"pH": np.float64(7.0), "I, mM": np.float32(nan)}], "pH", ["I, mM"]),
        charts.plate_chart([{"row": "A", "column": np.int64(1), "well": "A1", "pH": nan, "I, mM": 100.0}], "pH"),
    ]
    for spec in drawn:
        assert [e.message for e in VALIDATOR.iter_errors(spec)] == []
        json.dumps(spec, allow_nan=False)
    assert [row["pH"] for row in drawn[0]["layer"][0]["data"]["values"]] == [4.0, None, 9.0]
    assert type(drawn[3]["data"]["values"][0]["column"]) is float


def test_an_empty_curve_and_a_single_point_still_make_a_valid_specification():
    for spec in (charts.capacity_chart([], [], 7.0, (5.0, 9.0)),
                 charts.capacity_chart([("HEPES", [7.5], [0.02])], [], None, (6.5, 8.5)),
                 charts.titration_chart([], [], "hydrochloric acid", None),
                 charts.temperature_chart([("HEPES", [25.0], [7.4])], 25.0, 25.0),
                 charts.cost_chart([], "cost per L, EUR"),
                 charts.lines_chart([], "pH", ["β, mM per pH"]),
                 charts.plate_chart([], "pH")):
        assert [e.message for e in VALIDATOR.iter_errors(spec)] == []
        json.dumps(spec, allow_nan=False)
