"""How the reports put in words the readings that each clear a substance's errors."""

from __future__ import annotations

from vpaudit.report._fixes import readings, undecided_sentence


def test_readings_of_one_field_are_named_together_and_the_others_each():
    fixes = [
        {"kind": "pressure-unit", "record": "r", "corrected": {"pressure_unit": "kPa"}},
        {"kind": "temperature-unit", "record": "r", "corrected": {"temperature_unit": "degC"}},
        {"kind": "pressure-unit", "record": "r", "corrected": {"pressure_unit": "psi"}},
        {"kind": "pressure-unit", "record": "r", "corrected": {"pressure_unit": "mbar"}},
        {
            "kind": "temperature-unit",
            "record": "r",
            "corrected": {"temperature_unit": "degF", "t_min": 250.0, "t_max": 300.5},
        },
    ]
    assert readings(fixes) == [
        "pressure_unit -> kPa, psi or mbar",
        "temperature_unit -> degC",
        "temperature_unit -> degF, t_min -> 250, t_max -> 300.5",
    ]


def test_a_changed_coefficient_says_how_it_changed():
    # a reading of a coefficient's value names the slip (the units name themselves)
    fixes = [
        {"kind": "digit-transposition", "record": "r", "corrected": {"C": -62.11}},
        {"kind": "decimal-shift", "record": "r", "corrected": {"B": 8039.97}},
        {"kind": "decimal-shift", "record": "r", "corrected": {"B": 80.3997}},
        {"kind": "coefficient-swap", "record": "r", "corrected": {"B": -26.11, "C": 803.997}},
        {"kind": "sign", "record": "r", "corrected": {"C": 26.11}},
    ]
    assert readings(fixes) == [
        "C -> -62.11 (two of its digits transposed)",
        "B -> 8039.97 or 80.3997 (its decimal point moved)",
        "B -> -26.11, C -> 803.997 (two columns swapped)",
        "C -> 26.11 (its sign changed)",
    ]


def test_the_sentence_says_what_the_table_lacks_or_that_the_readings_are_too_close():
    entry = {
        "substance": "s",
        "record": "r",
        "fixes": [
            {"kind": "pressure-unit", "record": "r", "corrected": {"pressure_unit": u}}
            for u in ("bar", "atm")
        ],
        "lacking": ["normal boiling point", "measured points"],
    }
    text = undecided_sentence(entry)
    assert text.startswith("No fix is suggested: 2 readings of r each clear every error of s")
    assert "pressure_unit -> bar or atm" in text
    assert "no normal boiling point or measured points for s" in text
    assert "less than the evidence" in undecided_sentence(dict(entry, lacking=[]))
    many = dict(entry, fixes=entry["fixes"] * 5)
    assert "(and 2 more)" in undecided_sentence(many)
