"""Tests of mottkit.ingest: reading measurement tables.

Fixture files under tests/data/ingest/ hold invented numbers (they say so in
their first line). Unit factors are checked against the SI definitions as
exposed by scipy.constants (CODATA 2018 / SI 2019), derived quantities against
the textbook relations n = 1/(e|R_H|), sigma = n e mu (Ashcroft & Mermin,
Solid State Physics, 1976, ch. 1) with scipy.constants.e, and uncertainty
propagation against a Monte Carlo estimate.
"""

from __future__ import annotations

import io
import shutil
from fractions import Fraction
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import constants as sc

from mottkit import _units
from mottkit.errors import InputError, ReadError
from mottkit.ingest import (
    accepted_headers,
    parse_header,
    read_curves,
    read_measurements,
    read_resistances,
    read_sweeps,
    read_table,
)

DATA = Path(__file__).resolve().parent / "data" / "ingest"
ROOT = Path(__file__).resolve().parents[1]
KINDS = ("measurements", "sweeps", "resistances", "curves")


def table(text: str, **kw) -> pd.DataFrame:
    return read_table(io.StringIO(text), **kw)


# ------------------------------------------------------------------ headers
# Expected factors are SI definitions (BIPM, SI Brochure, 9th ed., 2019): prefixes
# as powers of ten (scipy.constants.micro, ...), 1 Ω/T = 1 m²/C since
# Ω = V/A, T = V s/m² and C = A s; the Celsius offset is scipy.constants.zero_Celsius.
HEADERS = [
    ("n (cm^-3)", "density_cm3", 1.0, 0.0),
    ("n [cm-3]", "density_cm3", 1.0, 0.0),
    ("density_cm3", "density_cm3", 1.0, 0.0),
    ("Carrier density (1/cm³)", "density_cm3", 1.0, 0.0),
    ("n (m^-3)", "density_cm3", sc.centi**3, 0.0),
    ("n (1e18 cm^-3)", "density_cm3", 1e18, 0.0),
    ("n [10^18 cm-3]", "density_cm3", 1e18, 0.0),
    ("n (×10¹⁸ cm⁻³)", "density_cm3", 1e18, 0.0),
    ("Thickness (nm)", "thickness_nm", 1.0, 0.0),
    ("t [µm]", "thickness_nm", sc.micro / sc.nano, 0.0),
    ("t [um]", "thickness_nm", sc.micro / sc.nano, 0.0),
    ("d (Å)", "thickness_nm", sc.angstrom / sc.nano, 0.0),
    ("rho (Ohm cm)", "resistivity_ohm_cm", 1.0, 0.0),
    ("ρ [mΩ·cm]", "resistivity_ohm_cm", sc.milli, 0.0),
    ("rho (MOhm cm)", "resistivity_ohm_cm", sc.mega, 0.0),
    ("Resistivity (ohm-cm)", "resistivity_ohm_cm", 1.0, 0.0),
    ("rho (Ω m)", "resistivity_ohm_cm", 1 / sc.centi, 0.0),
    ("Sheet resistance (ohm/sq)", "sheet_resistance_ohm_sq", 1.0, 0.0),
    ("Rs [Ω/□]", "sheet_resistance_ohm_sq", 1.0, 0.0),
    ("R_sheet (kOhms per square)", "sheet_resistance_ohm_sq", sc.kilo, 0.0),
    ("Mobility (cm2/Vs)", "mobility_cm2_vs", 1.0, 0.0),
    ("mu [cm^2 V^-1 s^-1]", "mobility_cm2_vs", 1.0, 0.0),
    ("µ (cm²/(V·s))", "mobility_cm2_vs", 1.0, 0.0),
    ("mu (m^2/Vs)", "mobility_cm2_vs", 1 / sc.centi**2, 0.0),
    ("R_H (cm^3/C)", "hall_coefficient_cm3_c", 1.0, 0.0),
    ("R_H [m^3/C]", "hall_coefficient_cm3_c", 1 / sc.centi**3, 0.0),
    ("R_H/t (Ω/T)", "sheet_hall_coefficient_cm2_c", 1 / sc.centi**2, 0.0),
    ("sheet Hall coefficient (m^2/C)", "sheet_hall_coefficient_cm2_c", 1 / sc.centi**2, 0.0),
    ("T (K)", "temperature_k", 1.0, 0.0),
    ("T / K", "temperature_k", 1.0, 0.0),
    ("Temperature, K", "temperature_k", 1.0, 0.0),
    ("Temperature [°C]", "temperature_k", 1.0, sc.zero_Celsius),
    ("T (degC)", "temperature_k", 1.0, sc.zero_Celsius),
    ("T (mK)", "temperature_k", sc.milli, 0.0),
    ("n_s (cm^-2)", "sheet_density_cm2", 1.0, 0.0),
    ("sheet_density_cm2", "sheet_density_cm2", 1.0, 0.0),
    ("dead layer (nm)", "dead_layer_nm", 1.0, 0.0),
    ("eps_r", "eps_r", 1.0, 0.0),
    ("ε_r (-)", "eps_r", 1.0, 0.0),
    ("m*", "mass_ratio", 1.0, 0.0),
    ("m_eff (m_e)", "mass_ratio", 1.0, 0.0),
    ("m*/m0", "mass_ratio", 1.0, 0.0),
]


@pytest.mark.parametrize(("text", "column", "factor", "offset"), HEADERS)
def test_header_forms(text, column, factor, offset):
    spec = parse_header(text)
    assert spec.column == column
    assert spec.role == "value"
    assert_allclose([spec.scale, spec.offset], [factor, offset], rtol=1e-12, atol=0)


@pytest.mark.parametrize(
    ("text", "column", "role"),
    [
        ("Sample", "sample", "text"),
        ("Sample ID", "sample", "text"),
        ("sample_name", "sample", "text"),
        ("Batch", "batch", "text"),
        ("Host", "host", "text"),
        ("Host material", "host", "text"),
        ("carrier type", "carrier_type", "carrier"),
        ("Note", "note", "text"),
        ("comment", "note", "text"),
        ("nominal Al (%)", "nominal_al_pct", "extra"),
        ("x_O2 pressure (mTorr)", "x_o2_pressure_mtorr", "extra"),
        ("", "", "unnamed"),
    ],
)
def test_text_and_free_headers(text, column, role):
    spec = parse_header(text)
    assert (spec.column, spec.role) == (column, role)


@pytest.mark.parametrize(
    ("text", "column", "factor"),
    [
        ("n_err (cm^-3)", "density_cm3_err", 1.0),
        ("n error [1e18 cm-3]", "density_cm3_err", 1e18),
        ("n uncertainty (cm^-3)", "density_cm3_err", 1.0),
        ("± n (cm^-3)", "density_cm3_err", 1.0),
        ("+/- t (µm)", "thickness_nm_err", sc.micro / sc.nano),
        ("σ(n) (cm^-3)", "density_cm3_err", 1.0),
        ("σ(n (cm^-3))", "density_cm3_err", 1.0),
        ("δρ (mOhm cm)", "resistivity_ohm_cm_err", sc.milli),
        ("Δμ (cm2/Vs)", "mobility_cm2_vs_err", 1.0),
        ("density_cm3_err", "density_cm3_err", 1.0),
        ("Mobility uncertainty (m2/Vs)", "mobility_cm2_vs_err", 1 / sc.centi**2),
        ("eps_r err", "eps_r_err", 1.0),
        # a temperature difference in °C is the same in K: no offset for uncertainties
        ("T_err (°C)", "temperature_k_err", 1.0),
    ],
)
def test_uncertainty_headers(text, column, factor):
    spec = parse_header(text)
    assert spec.column == column and spec.role == "error"
    assert spec.offset == 0.0
    assert_allclose(spec.scale, factor, rtol=1e-12)


def test_bare_plus_minus_takes_the_column_on_its_left():
    left = parse_header("n (1e18 cm^-3)")
    assert parse_header("±", previous=left)[:3] == ("density_cm3_err", "density_cm3", 1e18)
    assert parse_header("± (cm^-3)", previous=left).scale == 1.0
    assert parse_header("± (%)", previous=left).role == "relative_error"
    with pytest.raises(InputError, match="right of the numeric column"):
        parse_header("±")


@pytest.mark.parametrize(
    ("text", "kind", "column"),
    [
        ("B (T)", "sweeps", "field_t"),
        ("B (kG)", "sweeps", "field_t"),
        ("H (Oe)", "sweeps", "field_t"),
        ("I (µA)", "sweeps", "current_a"),
        ("V_H (mV)", "sweeps", "hall_voltage_v"),
        ("R_xy (Ω)", "sweeps", "hall_resistance_ohm"),
        ("R_xx (kΩ)", "sweeps", "longitudinal_resistance_ohm"),
        ("Configuration", "sweeps", "configuration"),
        ("R_A (Ohm)", "resistances", "r_a_ohm"),
        ("r_b_ohm", "resistances", "r_b_ohm"),
        ("R (mΩ)", "resistances", "resistance_ohm"),
        ("σ (S/cm)", "curves", "conductivity_s_cm"),
        ("Conductivity ((Ω cm)⁻¹)", "curves", "conductivity_s_cm"),
        ("L (mm)", "curves", "length_mm"),
        ("w [µm]", "curves", "width_mm"),
    ],
)
def test_headers_of_other_kinds(text, kind, column):
    assert parse_header(text, kind=kind).column == column


@pytest.mark.parametrize("kind", KINDS)
def test_every_glossary_name_reads_as_itself(kind):
    for col in _units.KINDS[kind]:
        spec = parse_header(col, kind=kind)
        assert (spec.column, spec.scale, spec.offset) == (col, 1.0, 0.0)


@pytest.mark.parametrize(
    ("header", "unit", "cells", "canonical"),
    [
        # SI prefixes (BIPM SI Brochure, 9th ed., 2019), via scipy.constants
        ("t (µm)", "thickness_nm", "0.25", 0.25 * sc.micro / sc.nano),
        ("n (m^-3)", "density_cm3", "1e24", 1e24 * sc.centi**3),
        ("R_H (m^3/C)", "hall_coefficient_cm3_c", "-2e-6", -2e-6 / sc.centi**3),
        ("rho (mOhm cm)", "resistivity_ohm_cm", "2.5", 2.5 * sc.milli),
        ("mu (m^2/Vs)", "mobility_cm2_vs", "0.01", 0.01 / sc.centi**2),
        ("T (°C)", "temperature_k", "25", 25 + sc.zero_Celsius),
        ("T (°C)", "temperature_k", "-273.15", 0.0),
    ],
)
def test_unit_conversion_of_cells(header, unit, cells, canonical):
    t = table(f"Sample,{header}\nA,{cells}\n")
    assert_allclose(t[unit].iloc[0], canonical, rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize(
    ("header", "value", "tesla"),
    [
        # 1 G = 1e-4 T and 1 Oe = 1000/(4 pi) A/m, read as mu_0 H
        # (BIPM SI Brochure, 8th ed., 2006, Table 9; from memory)
        ("B (G)", "1e4", 1.0),
        ("B (kG)", "10", 1.0),
        ("H (Oe)", "1e4", sc.mu_0 * 1e4 * 1e3 / (4 * sc.pi)),
        ("B (mT)", "500", 0.5),
    ],
)
def test_field_units(header, value, tesla):
    t = table(f"Sample,{header},R_xy (Ohm)\nA,{value},1\n", kind="sweeps")
    assert_allclose(t["field_t"].iloc[0], tesla, rtol=1e-12)


@pytest.mark.parametrize(
    ("text", "needle"),
    [
        ("Mobilty (cm2/Vs)", "did you mean 'mobility'"),
        ("n (cm^-2)", "is a unit of sheet_density_cm2"),
        ("T", "needs a unit"),
        ("n (furlong)", "unknown unit symbol 'furlong'"),
        ("rho (MOHM CM)", "ambiguous"),
        ("dn (cm^-3)", "'d' prefix is not read as an uncertainty"),
        ("field (T)", "column of sweeps tables"),
        ("O2 pressure (mTorr)", "Accepted headers"),
    ],
)
def test_refused_headers_say_why(text, needle):
    with pytest.raises(InputError) as err:
        parse_header(text)
    assert text in str(err.value) and needle in str(err.value)


def test_unreadable_header_names_file_line_column_and_lists_accepted():
    path = DATA / "bad_header.csv"
    with pytest.raises(InputError) as err:
        read_table(path)
    msg = str(err.value)
    assert str(path) in msg and "line 2" in msg and "column 3" in msg
    assert "'Mobilty (cm2/Vs)'" in msg and "mobility_cm2_vs:" in msg


@pytest.mark.parametrize(
    ("text", "needle"),
    [
        (
            "n (cm^-3),density_cm3\n1,2\n",
            "columns 1 ('n (cm^-3)') and 2 ('density_cm3') both give",
        ),
        (
            "Sample,,n (cm^-3)\nA,zz,1\n",
            "line 2, column 2: the column has no header but holds 'zz'",
        ),
        ("Sample,n_err (%)\nA,1\n", "no density_cm3 column"),
        ("Sample n (cm^-3)\nA 1\n", "no comma, semicolon or tab delimiter found"),
    ],
)
def test_whole_table_problems(text, needle):
    with pytest.raises(InputError) as err:
        table(text)
    assert needle in str(err.value) and str(err.value).startswith("<buffer>")


def test_accepted_headers_and_docs_list_the_vocabulary():
    doc = (ROOT / "docs" / "input-format.md").read_text(encoding="utf-8")
    for kind in KINDS:
        listing = accepted_headers(kind)
        for col in _units.KINDS[kind]:
            assert f"`{col}`" in doc and f"  {col}:" in listing
            for alias in _units.QUANTITIES[col].aliases:
                assert f"`{alias}`" in doc and alias in listing
            for unit in _units.QUANTITIES[col].units or ():
                assert not unit.spelling or f"`{unit.spelling}`" in doc
    with pytest.raises(InputError, match="kind must be one of"):
        accepted_headers("spectra")


# ------------------------------------------------------------------ the file
ROWS = [("A", 1.5e18, 300.0), ("B", 2.5e18, 10.0)]


@pytest.mark.parametrize(
    ("delim", "point"), [(",", "."), (";", "."), (";", ","), ("\t", "."), ("\t", ",")]
)
def test_delimiters_and_decimal_comma(delim, point):
    lines = [delim.join(["Sample", "n (cm^-3)", "T (K)"])]
    lines += [
        delim.join([s, f"{n:.2e}".replace(".", point), f"{t:.1f}".replace(".", point)])
        for s, n, t in ROWS
    ]
    t = table("\n".join(lines) + "\n")
    assert t.attrs["delimiter"] == delim
    assert t["sample"].tolist() == ["A", "B"]
    assert_allclose(t.density_cm3, [1.5e18, 2.5e18], rtol=1e-15)
    assert_allclose(t.temperature_k, [300.0, 10.0], rtol=1e-15)
    assert (t.row_status == "ok").all()


def test_comma_file_has_no_decimal_comma():
    t = table('Sample,n (cm^-3)\nA,"1,5"\n')
    assert t.row_status[0] == "invalid" and np.isnan(t.density_cm3[0])
    assert "line 2, column 2 'n (cm^-3)': '1,5'" in t.row_message[0]


@pytest.mark.parametrize(
    ("cell", "value"),
    [("1,2×10¹⁸", 1.2e18), ("1.2x10^18", 1.2e18), ("−3,5", -3.5), ("1.234,5", None)],
)
def test_hand_written_numbers(cell, value):
    t = table(f"Sample;R_H (cm^3/C)\nA;{cell}\n")
    if value is None:
        assert "thousands separators" in t.row_message[0] and "column 2" in t.row_message[0]
    else:
        assert_allclose(t.hall_coefficient_cm3_c[0], value, rtol=1e-15)


def test_semicolon_file_with_bom_crlf_comments_and_blank_lines():
    t = read_table(DATA / "films_semicolon_bom.csv")
    assert t.attrs["encoding"] == "utf-8-sig"
    # lines 1-2 comments, 3 blank, 4 header, 5 data, 6 comment, 7 blank, 8-9 data
    assert t.source_line.tolist() == [5, 8, 9]
    assert t["sample"].tolist() == ["F01", "F02", "F03"]
    assert_allclose(t.sheet_density_cm2.iloc[[0, 2]], [5.0e15, 2.0e15], rtol=1e-15)
    assert_allclose(t.hall_coefficient_cm3_c[1], -2.5, rtol=1e-15)
    assert t.thickness_nm_err[0] == 1.0 and t.sheet_density_cm2_err[0] == 1.0e14
    assert t.carrier_type.tolist()[2] == "n"
    assert_allclose(t.nominal_al_pct, [2.0, 2.5, 3.0])
    assert t.note[0] == "first film" and pd.isna(t.note[1])
    assert (t.source_file == str(DATA / "films_semicolon_bom.csv")).all()


def test_latin1_file():
    raw = (DATA / "films_latin1.csv").read_bytes()
    assert b"\xb5" in raw and b"\xb3" in raw and b"\xb0" in raw  # µ, ³, ° as Latin-1 bytes
    t = read_table(DATA / "films_latin1.csv")
    assert t.attrs["encoding"] in ("cp1252", "latin-1")
    assert t.attrs["headers"]["thickness_nm"] == "t [µm]"
    assert t.attrs["headers"]["density_cm3"] == "n (1/cm³)"
    assert_allclose(t.thickness_nm, [100.0, 50.0], rtol=1e-12)
    assert_allclose(t.resistivity_ohm_cm, [2.5e-3, 1.5e-3], rtol=1e-12)
    assert_allclose(t.temperature_k, [25 + sc.zero_Celsius, 200.0], rtol=1e-12)


@pytest.mark.parametrize("encoding", ["utf-8", "utf-8-sig", "utf-16", "latin-1", "cp1252"])
def test_encodings_keep_unit_characters(encoding):
    header = "Sample;t [µm];n (1/cm³);T [°C];µ (cm²/Vs)"
    if encoding.startswith("utf"):
        header += ";ρ [mΩ·cm];n_s (cm⁻²)"
    text = header + "\nA;0,1;1e18;25;10" + (";2;3e15" if encoding.startswith("utf") else "") + "\n"
    t = read_table(io.BytesIO(text.encode(encoding)))
    assert_allclose(t.thickness_nm[0], 100.0, rtol=1e-12)
    assert_allclose(t.temperature_k[0], 25 + sc.zero_Celsius, rtol=1e-12)
    assert_allclose(t.mobility_cm2_vs[0], 10.0)
    if encoding.startswith("utf"):
        assert_allclose([t.resistivity_ohm_cm[0], t.sheet_density_cm2[0]], [2e-3, 3e15])


@pytest.mark.parametrize("newline", ["\n", "\r"])
def test_utf8_header_survives_latin1_lines(newline):
    head = f"Sample;ρ [mΩ·cm];n (cm⁻³);note{newline}".encode()
    t = read_table(io.BytesIO(head + f"A;2,5;1e18;µ-bridge ²{newline}".encode("latin-1")))
    assert t.attrs["encoding"] == "utf-8+cp1252"
    assert t.attrs["headers"]["resistivity_ohm_cm"] == "ρ [mΩ·cm]" and t.note[0] == "µ-bridge ²"
    assert_allclose([t.resistivity_ohm_cm[0], t.density_cm3[0]], [2.5e-3, 1e18], rtol=1e-12)


def test_tab_file_with_glossary_names():
    t = read_table(DATA / "films_tab.tsv")
    assert t.attrs["delimiter"] == "\t"
    assert_allclose(t.density_cm3, [1.0e20, 5.0e19])
    assert_allclose(t.mobility_cm2_vs[0], 62.4)
    assert np.isnan(t.resistivity_ohm_cm[1])


@pytest.mark.parametrize("newline", ["\n", "\r\n", "\r"])
def test_line_ends_and_comments_anywhere(newline):
    lines = [
        "",
        "# made up",
        "   # indented comment",
        "Sample,n (cm^-3)",
        "A,1e18",
        "",
        ",,",
        "# x",
        "B,2e18",
        "",
    ]
    t = table(newline.join(lines))
    assert t.source_line.tolist() == [5, 9]
    assert_allclose(t.density_cm3, [1e18, 2e18])


def test_missing_markers_are_not_errors():
    cells = ["", "nan", "NaN", "NA", "n/a", "N/A", "-", "--", "—", "null", "None", "?"]
    text = "Sample,n (cm^-3),Thickness (nm)\n" + "".join(
        f"S{i},{c},{c}\n" for i, c in enumerate(cells)
    )
    t = table(text)
    assert len(t) == len(cells) and (t.row_status == "ok").all()
    assert t.density_cm3.isna().all() and t.thickness_nm.isna().all()


def test_quoted_cells_and_trailing_delimiters():
    t = table('Sample;n (cm^-3);Note;\n"A;1";1e18;"says ""hi""";\nB;2e18;;\n')
    assert t["sample"].tolist() == ["A;1", "B"]
    assert t.note[0] == 'says "hi"'
    assert (t.row_status == "ok").all()


def test_bad_rows_keep_their_place_with_messages():
    path = DATA / "films_bad_rows.csv"
    t = read_table(path)
    assert t.source_line.tolist() == list(range(3, 12))
    assert t.row_status.tolist() == ["ok"] + ["invalid"] * 7 + ["ok"]
    expect = {
        4: ("column 3 'n (cm^-3)'", "'1.2e18x' is not a number"),
        5: ("column 2 'Thickness (nm)'", "-5 nm is not physical"),
        6: ("columns 4-5 are missing", "3 fields but the header has 5"),
        7: ("column 6 onwards has no header", "'G5,50,1e18,1e-2,n,extra'"),
        8: ("column 5 'carrier type'", "'q' is not a carrier type"),
        9: ("column 1 'Sample'", "sample name is empty"),
        10: ("column 3 'n (cm^-3)'", "'inf'"),
    }
    for line, parts in expect.items():
        msg = t.row_message[t.source_line == line].iloc[0]
        assert msg.startswith(f"{path}, line {line}")
        assert all(p in msg for p in parts), msg
    g8 = t[t.source_line == 10].iloc[0]
    assert (
        "column 2 'Thickness (nm)': 0 nm" in g8.row_message
        and "column 4 'rho (Ohm cm)': -1" in g8.row_message
    )
    assert np.isnan([g8.thickness_nm, g8.density_cm3, g8.resistivity_ohm_cm]).all()
    assert t.density_cm3[2] == 1e18 and np.isnan(t.thickness_nm[2])  # other cells survive


@pytest.mark.parametrize(
    ("header", "cell", "needle"),
    [
        ("Thickness (nm)", "0", "must be > 0"),
        ("n (cm^-3)", "-1e18", "must be >= 0"),
        ("rho (Ohm cm)", "-1", "must be >= 0"),
        ("mu (cm2/Vs)", "-3", "must be >= 0"),
        ("T (K)", "-1", "must be >= 0"),
        ("T (°C)", "-300", "-300 °C is not physical"),
        ("n_err (cm^-3)", "-1", "must be >= 0"),
        ("eps_r", "0", "must be > 0"),
    ],
)
def test_non_physical_values(header, cell, needle):
    t = table(f"Sample,{header}\nA,{cell}\n")
    assert t.row_status[0] == "invalid"
    assert "line 2, column 2" in t.row_message[0] and needle in t.row_message[0]


def test_relative_uncertainty_in_percent():
    t = table("Sample,n (1e18 cm^-3),±(%),T (°C),T_err (%)\nA,2,5,27,10\n")
    assert_allclose(t.density_cm3_err[0], 0.05 * 2e18, rtol=1e-12)
    assert_allclose(t.temperature_k_err[0], 2.7, rtol=1e-12)  # 10 % of 27 °C, a difference
    bad = table("Sample,n (cm^-3),n_err (%)\nA,2e18,-5\n")
    assert "line 2, column 3 'n_err (%)': -5 % is not physical" in bad.row_message[0]
    assert np.isnan(bad.density_cm3_err[0])


@pytest.mark.parametrize(
    ("word", "kind"),
    [("n", "n"), ("N", "n"), ("electron", "n"), ("e", "n"), ("-", "n"), ("−", "n"), ("n-type", "n"),
     ("p", "p"), ("hole", "p"), ("Holes", "p"), ("h", "p"), ("+", "p"), ("", None)],
)  # fmt: skip
def test_carrier_type_words(word, kind):
    t = table(f"Sample,carrier type\nA,{word}\n")
    assert t.row_status[0] == "ok"
    assert t.carrier_type[0] == kind if kind else pd.isna(t.carrier_type[0])


def test_free_columns_numeric_or_text():
    text = (
        "Sample,nominal Al (%),x_O2 pressure (mTorr),x_recipe\nA,2,10,fast\nB,3,1e-2,slow\nC,,,\n"
    )
    t = table(text)
    assert t.nominal_al_pct.dtype == float and t.x_o2_pressure_mtorr.tolist()[:2] == [10.0, 0.01]
    assert t.x_recipe.tolist()[:2] == ["fast", "slow"] and pd.isna(t.x_recipe[2])
    assert (t.row_status == "ok").all()


def test_bytes_content_and_named_buffers(tmp_path):
    data = b"Sample,n (cm^-3)\nA,1e18\n"
    assert read_table(data).attrs["source_file"] == "<bytes>"
    path = tmp_path / "t.csv"
    path.write_bytes(data)
    with open(path, "rb") as fh:
        t = read_table(fh)
    assert t.source_file[0] == str(path) and t.density_cm3[0] == 1e18


def test_vectorised_and_line_by_line_paths_agree():
    rows = "".join(
        f"S{i},{(i + 1) * 1.1e17:.6e},{i + 5}.5,{'n' if i % 2 else 'hole'}\n" for i in range(40)
    )
    header = "Sample,n (cm^-3),Thickness (nm),type\n"
    clean = table(header + rows)  # one pyarrow pass
    lines = rows.splitlines(keepends=True)
    commented = table(header + "".join(lines[:20]) + "# comment\n" + "".join(lines[20:]))
    junk = table(
        header + rows.replace("S7,", "S7\u00a0,").replace(",12.5,", ",\u00a012.5,")
    )  # text path
    cols = ["sample", "density_cm3", "thickness_nm", "carrier_type", "row_status"]
    pd.testing.assert_frame_equal(clean[cols], commented[cols])
    pd.testing.assert_frame_equal(clean[cols], junk[cols])
    assert commented.source_line.iloc[19:21].tolist() == [21, 23]


@pytest.mark.parametrize(
    ("data", "needle"),
    [
        (b"", "no header line"),
        (b"# only a comment\n\n", "no header line"),
        (b"Sample,n (cm^-3)\nA,1\x00\n", "NUL"),
    ],
)
def test_unreadable_files(data, needle):
    with pytest.raises(ReadError, match=needle):
        read_table(io.BytesIO(data))


def test_missing_file_and_directory(tmp_path):
    for path in (tmp_path / "nope.csv", tmp_path):
        with pytest.raises(ReadError) as err:
            read_table(path)
        assert str(path) in str(err.value)
    with pytest.raises(InputError, match="path, bytes or a text/bytes buffer"):
        read_table(42)
    with pytest.raises(ReadError, match=r"pass io\.StringIO"):
        read_table("Sample,n (cm^-3)\nA,1\n")


def test_header_only_table_is_empty():
    t = table("Sample,n (cm^-3)\n")
    assert len(t) == 0 and {"sample", "density_cm3", "source_line"} <= set(t.columns)


@pytest.mark.parametrize("name", sorted(p.name for p in DATA.iterdir()))
def test_raw_files_are_never_modified(tmp_path, name):
    copy = tmp_path / name
    shutil.copy2(DATA / name, copy)
    before, stat = copy.read_bytes(), copy.stat()
    for reader in (read_table, read_measurements, read_sweeps, read_resistances, read_curves):
        try:
            reader(copy)
        except InputError:
            pass
    after = copy.stat()
    assert copy.read_bytes() == before
    assert (after.st_mtime_ns, after.st_size) == (stat.st_mtime_ns, stat.st_size)
    assert not [p for p in tmp_path.iterdir() if p.name != name]  # nothing written beside it


# ------------------------------------------------------------- derivations
E = sc.e  # elementary charge, exact in the SI since 2019 (CODATA 2018)


def test_density_from_hall_coefficient_with_exact_arithmetic():
    t = read_measurements(io.StringIO("Sample,R_H (cm^3/C),±\nA,-6.25,0.25\nB,3.125,\n"))
    # n = 1/(e |R_H|) (Ashcroft & Mermin 1976, ch. 1); exact rational oracle
    oracle = [float(1 / (Fraction(E) * Fraction(r))) for r in (6.25, 3.125)]
    assert_allclose(t.density_cm3, oracle, rtol=1e-15)
    assert t.carrier_type.tolist() == ["n", "p"]
    assert_allclose(t.density_cm3_err[0], oracle[0] * 0.25 / 6.25, rtol=1e-12)
    assert "hall_single_carrier" in t.cautions[0] and "Hall factor" in t.caution_text[0]
    assert t.derived[0] == "density_cm3;carrier_type"


def test_density_from_sheet_quantities_and_dead_layer():
    text = "Sample,t (nm),dead layer (nm),n_s (cm^-2),R_H/t (Ohm/T)\nA,50,,5e15,\nB,50,10,5e15,\nC,30,,,-125\n"
    t = read_measurements(io.StringIO(text), dead_layer_nm=5.0)
    cm = sc.nano / sc.centi
    assert_allclose(t.dead_layer_nm, [5.0, 10.0, 5.0])
    # n = n_s / (t - t_dead); R_H,s in ohm/T = m^2/C -> 1e4 cm^2/C; n_s = 1/(e |R_H,s|)
    expect = [5e15 / (45 * cm), 5e15 / (40 * cm), 1 / (E * 125 / sc.centi**2) / (25 * cm)]
    assert_allclose(t.density_cm3, expect, rtol=1e-13)
    assert_allclose(t.sheet_density_cm2[2], 1 / (E * 1.25e6), rtol=1e-13)
    assert t.carrier_type[2] == "n"


def test_resistivity_and_mobility_with_uncertainties():
    text = "Sample,t (nm),± (nm),n_s (cm^-2),n_s_err (cm^-2),Rs (ohm/sq),± (ohm/sq)\nA,40,2,4e15,2e14,250,5\n"
    t = read_measurements(io.StringIO(text))
    cm = sc.nano / sc.centi
    assert_allclose(t.resistivity_ohm_cm[0], 250 * 40 * cm, rtol=1e-13)
    # sigma = n e mu (Ashcroft & Mermin 1976, ch. 1): mu = 1/(e n rho) = 1/(e n_s R_s)
    mu = 1 / (E * 4e15 * 250)
    assert_allclose(t.mobility_cm2_vs[0], mu, rtol=1e-13)
    # first order, relative errors in quadrature; the thickness cancels in mu
    assert_allclose(t.mobility_cm2_vs_err[0], mu * np.hypot(0.05, 0.02), rtol=1e-12)
    assert_allclose(t.density_cm3_err[0], t.density_cm3[0] * np.hypot(0.05, 0.05), rtol=1e-12)
    assert_allclose(
        t.resistivity_ohm_cm_err[0], t.resistivity_ohm_cm[0] * np.hypot(0.02, 0.05), rtol=1e-12
    )
    assert t.cautions[0] == "" and t.row_status[0] == "ok"


def test_uncertainty_propagation_matches_monte_carlo():
    # n = n_s / (t - t_dead): first-order error vs the spread of simulated inputs
    ns, dns, th, dth, dl, ddl = 4e15, 4e13, 50.0, 0.4, 5.0, 0.3
    text = f"Sample,n_s (cm^-2),±,t (nm),±,dead layer (nm),±\nA,{ns},{dns},{th},{dth},{dl},{ddl}\n"
    t = read_measurements(io.StringIO(text))
    rng = np.random.default_rng(20240611)
    m = 400_000
    sim = rng.normal(ns, dns, m) / (
        (rng.normal(th, dth, m) - rng.normal(dl, ddl, m)) * sc.nano / sc.centi
    )
    assert_allclose(t.density_cm3[0], sim.mean(), rtol=2e-3)
    assert_allclose(t.density_cm3_err[0], sim.std(), rtol=2e-2)


@pytest.mark.parametrize(
    ("given", "code"),
    [(1.0e21, ""), (1.05e21, ""), (1.2e21, "density_mismatch"), (0.85e21, "density_mismatch")],
)
def test_density_mismatch_keeps_the_given_value(given, code):
    # n_s / t = 5e15 / 50 nm = 1e21 cm^-3; tolerance 10 % (common practice, no source)
    t = read_measurements(io.StringIO(f"Sample,t (nm),n_s (cm^-2),n (cm^-3)\nA,50,5e15,{given}\n"))
    assert t.density_cm3[0] == given
    assert t.cautions[0] == code
    if code:
        assert "the given value is used" in t.caution_text[0]
        assert "sheet_density_cm2 / (thickness − dead layer) gives 1e+21" in t.caution_text[0]


def test_mobility_and_carrier_type_mismatch():
    text = "Sample,n (cm^-3),rho (Ohm cm),mu (cm2/Vs),R_H (cm^3/C),type\nA,1e19,0.01,80,-0.624,p\n"
    t = read_measurements(io.StringIO(text))
    assert t.mobility_cm2_vs[0] == 80 and t.carrier_type[0] == "p"
    assert set(t.cautions[0].split(";")) == {"mobility_mismatch", "carrier_type_mismatch"}
    assert "1/(e n ρ) gives 62.4" in t.caution_text[0]
    assert "the given value is 'p', the sign of R_H gives 'n'" in t.caution_text[0]


def test_thickness_not_above_dead_layer_is_invalid():
    t = read_measurements(
        io.StringIO("Sample,Thickness (nm),n_s (cm^-2)\nA,4,1e15\nB,20,1e15\n"), dead_layer_nm=4
    )
    assert t.row_status.tolist() == ["invalid", "ok"]
    assert (
        "line 2, column 2 'Thickness (nm)': thickness 4 nm is not above the dead layer 4 nm"
        in t.row_message[0]
    )
    assert np.isnan(t.density_cm3[0]) and "no_density" in t.cautions[0]


def test_resistivity_mismatch_and_given_uncertainty_kept():
    text = "Sample,n (cm^-3),t (nm),Rs (ohm/sq),rho (Ohm cm),rho_err (Ohm cm)\nA,1e19,100,100,2e-3,1e-4\n"
    t = read_measurements(io.StringIO(text))
    # R_s t = 100 ohm/sq x 1e-5 cm = 1e-3 ohm cm: the given 2e-3 is 100 % off
    assert t.cautions[0] == "resistivity_mismatch"
    assert "sheet_resistance_ohm_sq × (thickness − dead layer) gives 0.001" in t.caution_text[0]
    assert (t.resistivity_ohm_cm[0], t.resistivity_ohm_cm_err[0]) == (2e-3, 1e-4)


def test_unreadable_cells_are_not_filled_by_derivation():
    text = "Sample,t (nm),n (cm^-3),rho (Ohm cm),mu (cm2/Vs),R_H (cm^3/C),type\nA,50,3e18x,0.01,25,-2,q\n"
    t = read_measurements(io.StringIO(text))
    assert t.row_status[0] == "invalid"
    assert np.isnan(t.density_cm3[0]) and np.isnan(t.sheet_density_cm2[0])
    assert pd.isna(t.carrier_type[0]) and "no_density" in t.cautions[0]
    assert (
        "density_cm3" not in t.derived[0] and "column 3 'n (cm^-3)': '3e18x'" in t.row_message[0]
    )


def test_other_cautions():
    text = "Sample,n (cm^-3),n_s (cm^-2),t (nm)\nA,1e18,,20\nB,,1e14,\n"
    t = read_measurements(io.StringIO(text), dead_layer_nm=2)
    assert t.cautions.tolist() == ["dead_layer_not_applied", "thickness_missing;no_density"]


@pytest.mark.parametrize(
    ("text", "needle"),
    [
        ("n (cm^-3)\n1e18\n", "needs sample"),
        ("Sample,t (nm)\nA,5\n", "needs density_cm3 or sheet_density_cm2 + thickness_nm"),
    ],
)
def test_read_measurements_requires_columns(text, needle):
    with pytest.raises(InputError) as err:
        read_measurements(io.StringIO(text))
    assert needle in str(err.value) and "Accepted headers" in str(err.value)


@pytest.mark.parametrize(
    ("kw", "needle"), [({"dead_layer_nm": -1}, "dead_layer_nm"), ({"tolerance": 0}, "tolerance")]
)
def test_read_measurements_checks_arguments(kw, needle):
    with pytest.raises(InputError, match=needle):
        read_measurements(io.StringIO("Sample,n (cm^-3)\nA,1\n"), **kw)


# ------------------------------------------------------------ thin readers
def test_read_sweeps_makes_hall_resistance():
    t = read_sweeps(DATA / "sweep_long.csv")
    assert_allclose(t.field_t, [-0.5, 0.0, 0.5])
    assert_allclose(t.hall_resistance_ohm, [-25.0, 0.0, 25.0], rtol=1e-12)  # V/I = 0.25 mV / 10 µA
    assert_allclose(t.current_a, 1e-5) and (t.row_status == "ok").all()


def test_read_sweeps_requires_field_and_hall_signal():
    with pytest.raises(InputError) as err:
        read_sweeps(io.StringIO("B (T),I (A)\n1,1\n"), sample="S")
    assert "hall_resistance_ohm or hall_voltage_v + current_a" in str(err.value)
    assert "hall_voltage_v: V_H" in str(err.value)


def test_read_resistances_long_and_wide():
    wide = read_resistances(DATA / "vdp_wide.csv")
    assert_allclose(wide.r_b_ohm, [13.1, 42.0], rtol=1e-12)
    long = read_resistances(io.StringIO('configuration,R (mOhm)\n"R_12,34",1\n'), sample="V2")
    assert (
        long.configuration[0] == "R_12,34"
        and long.resistance_ohm[0] == 1e-3
        and long["sample"][0] == "V2"
    )
    with pytest.raises(
        InputError, match="configuration \\+ resistance_ohm or r_a_ohm \\+ r_b_ohm"
    ):
        read_resistances(io.StringIO("Sample,R_A (Ohm)\nA,1\n"))


def test_read_curves_geometry_constants():
    t = read_curves(
        DATA / "curve_geometry.csv", sample="bar1", thickness_nm=50, length_mm=2, width_mm=0.5
    )
    # rho = R w t / L with w, L in cm and t in cm
    assert_allclose(
        t.resistivity_ohm_cm, np.array([150, 120, 100]) * 0.05 * 50e-7 / 0.2, rtol=1e-12
    )
    assert_allclose(t.sheet_resistance_ohm_sq, np.array([150, 120, 100]) * 0.25, rtol=1e-12)
    assert (t["sample"] == "bar1").all()
    with pytest.raises(InputError, match="needs sample"):
        read_curves(DATA / "curve_geometry.csv")
    with pytest.raises(InputError, match="given both in the file"):
        read_curves(io.StringIO("Sample,T (K),rho (Ohm cm),t (nm)\nA,2,1,5\n"), thickness_nm=5)


def test_read_curves_from_conductivity():
    t = read_curves(io.StringIO("Sample,T (K),σ (S/cm)\nA,300,250\n"))
    assert_allclose(t.resistivity_ohm_cm[0], 1 / 250, rtol=1e-15)


# --------------------------------------------------------- malformed tables
GOOD = [  # header, unit factor and offset to the canonical value
    ("n (cm^-3)", "density_cm3", 1.0, 0.0),
    ("Thickness (nm)", "thickness_nm", 1.0, 0.0),
    ("rho (mOhm cm)", "resistivity_ohm_cm", 1e-3, 0.0),
    ("T (°C)", "temperature_k", 1.0, sc.zero_Celsius),
    ("mu [cm^2 V^-1 s^-1]", "mobility_cm2_vs", 1.0, 0.0),
    ("R_H (m^3/C)", "hall_coefficient_cm3_c", 1e6, 0.0),
]
EXTRA = [("x_O2 pressure (mTorr)", None, 1.0, 0.0), ("note", None, 1.0, 0.0)]  # kept as they are
JUNK = st.one_of(
    st.sampled_from(
        [
            "1.2e18x",
            "abc",
            "1..2",
            "e5",
            "1e",
            "--5",
            "0x10",
            "NaNx",
            "inf",
            "1,2,3",
            '"',
            'a"b',
            "#",
            "ü",
            "µ",
        ]
    ),
    st.text(
        alphabet=st.characters(blacklist_categories=("Cs",), blacklist_characters="\r\n\x00"),
        max_size=6,
    ),
)


@st.composite
def malformed_tables(draw):
    delim = draw(st.sampled_from([",", ";", "\t"]))
    comma = delim != ","
    cols = draw(st.lists(st.sampled_from(GOOD + EXTRA), min_size=1, max_size=4, unique=True))
    nl = draw(st.sampled_from(["\n", "\r\n", "\r"]))
    out = [
        draw(st.sampled_from(["", "# invented", "  # indented"]))
        for _ in range(draw(st.integers(0, 2)))
    ]
    out.append(delim.join(["Sample"] + [c[0] for c in cols]))
    rows = []  # (physical line, {column: expected canonical value})
    for r in range(draw(st.integers(0, 8))):
        for _ in range(draw(st.integers(0, 1))):  # blank, comment or delimiter-only lines
            out.append(draw(st.sampled_from(["", "#c", delim * len(cols), "   "])))
        cells, expect = [f"S{r}"], {}
        for _, col, factor, offset in cols:
            kind = draw(st.sampled_from(["good", "good", "missing", "junk"]))
            if kind == "good":
                v = draw(st.floats(0.5, 500, allow_nan=False))
                text = f"{v:.6g}"
                cells.append(text.replace(".", ",") if comma and draw(st.booleans()) else text)
                if col:
                    expect[col] = float(text) * factor + offset
            elif kind == "missing":
                cells.append(draw(st.sampled_from(["", "nan", "n/a", "-"])))
            else:
                cells.append(draw(JUNK))
        change = draw(st.sampled_from(["none", "none", "drop", "add"]))
        if change == "drop" and len(cells) > 1:
            cells = cells[: draw(st.integers(1, len(cells) - 1))]
        elif change == "add":
            cells.append(draw(st.sampled_from(["x", "1", "junk"])))
        out.append(delim.join(cells))
        rows.append((len(out), expect if change == "none" else {}, cells))
    encoding = draw(st.sampled_from(["utf-8", "utf-8-sig", "cp1252", "utf-16", "mixed"]))
    end = draw(st.sampled_from(["", nl]))
    if encoding == "mixed":  # each line in UTF-8 or Windows-1252, as after two editors
        codecs = [draw(st.sampled_from(["utf-8", "cp1252"])) for _ in out]
        data = nl.encode().join(
            line.encode(c, errors="replace") for line, c in zip(out, codecs, strict=True)
        )
        data += end.encode()
    else:
        data = (nl.join(out) + end).encode(encoding, errors="replace")
    return data, rows


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(malformed_tables())
def test_malformed_tables_never_lose_rows(case):
    data, rows = case
    try:
        t = read_table(io.BytesIO(data))
    except (InputError, ReadError):
        return  # a whole-file problem, reported as such
    assert t.source_line.tolist() == [line for line, _, _ in rows]
    delim = t.attrs["delimiter"]
    for i, (line, expect, cells) in enumerate(rows):
        if t.row_status[i] == "invalid":
            assert f"line {line}" in t.row_message[i] and "column" in t.row_message[i]
        else:
            assert t.row_message[i] == "" and t["sample"][i] == cells[0]
        if not any('"' in c or delim in c for c in cells):  # the fields are as generated
            for col, value in expect.items():
                assert_allclose(t[col][i], value, rtol=1e-12)


def test_fixture_files_say_they_are_invented():
    for path in DATA.iterdir():
        first = path.read_bytes().splitlines()[0].decode("utf-8-sig", errors="replace")
        assert first.startswith("# Invented"), path
