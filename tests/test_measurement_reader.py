"""Readers of the calibration CSV, the field time-series CSV and the calibration JSON file.

Good files are checked against the values written into them (and numpy.loadtxt as an
independent CSV parser); every bad file must give one InputError line naming the file and,
where there is one, the line and column. No other exception type may escape (fuzzed with
hypothesis).
"""
import json
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from cage.calibrate import fit_calibration, suggest_currents_A
from cage.calibrationfile import load_calibration, save_calibration
from cage.errors import InputError
from cage.measurements import read_calibration_csv, read_field_series_csv

CAL_HEADER = "current_x_A,current_y_A,current_z_A,field_x_nT,field_y_nT,field_z_nT"
SERIES_HEADER = "t_s,x_nT,y_nT,z_nT"


def good_calibration_text():
    table = suggest_currents_A([2.0, 2.0, 1.5])
    k = np.diag([50_000.0, 49_000.0, 51_000.0])
    field = np.array([18_000.0, -1_500.0, 43_000.0]) + table @ k.T
    lines = [CAL_HEADER] + [",".join(f"{v:.6f}" for v in np.r_[i, b]) for i, b in zip(table, field)]
    return "\n".join(lines) + "\n", table, field


def write(tmp_path, name, text):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def assert_one_line(exc, path, *parts):
    msg = str(exc.value)
    assert "\n" not in msg
    assert str(path) in msg
    for part in parts:
        assert part in msg, msg


# ---- calibration CSV ------------------------------------------------------------------


def test_good_calibration_file_reads_back(tmp_path):
    text, table, field = good_calibration_text()
    text = "# invented run, sensor on the cage centre\n" + text.replace("\n", "\n\n", 1)
    path = write(tmp_path, "cal.csv", text)
    readings = read_calibration_csv(path)
    np.testing.assert_allclose(readings.currents_A, table, atol=1e-6)
    np.testing.assert_allclose(readings.field_nT, field, atol=1e-6)
    ref = np.loadtxt(path, delimiter=",", comments="#", skiprows=2)  # independent parser
    np.testing.assert_array_equal(np.c_[readings.currents_A, readings.field_nT], ref)
    assert readings.line_numbers[0] == 4 and readings.line_numbers[-1] == 3 + len(table)
    assert readings.source_file == str(path)


def test_extra_columns_and_column_order_do_not_matter(tmp_path):
    path = write(tmp_path, "cal.csv",
                 "note,field_z_nT,field_y_nT,field_x_nT,current_z_A,current_y_A,current_x_A\n"
                 "a,3,2,1,0,0,0\nb,3,2,11,0,0,1\nc,3,12,1,0,1,0\nd,13,2,1,1,0,0\n")
    readings = read_calibration_csv(path)
    np.testing.assert_array_equal(readings.currents_A[1], [1, 0, 0])
    np.testing.assert_array_equal(readings.field_nT[1], [11, 2, 3])


BAD_CALIBRATION = [
    # (name, text, parts the message must contain)
    ("empty.csv", "", ["empty"]),
    ("nohdr.csv", "current_x_A,current_y_A,field_x_nT,field_y_nT,field_z_nT\n1,2,3,4,5\n",
     ["line 1", "current_z_A"]),
    ("two_missing.csv", "current_x_A,current_y_A,current_z_A,field_x_nT\n",
     ["line 1", "field_y_nT, field_z_nT"]),
    ("word.csv", CAL_HEADER + "\n0,0,0,1,2,3\n1,0,0,1,2,3\n0,1,0,1,abc,3\n",
     ["line 4", "column field_y_nT", "'abc'"]),
    ("blank_cell.csv", CAL_HEADER + "\n0,0,0,1,2,3\n1,,0,1,2,3\n", ["line 3", "column current_y_A", "empty"]),
    ("nan.csv", CAL_HEADER + "\n0,0,0,1,2,3\n1,0,0,nan,2,3\n", ["line 3", "column field_x_nT", "finite"]),
    ("inf.csv", CAL_HEADER + "\n0,0,0,1,2,3\n1,0,0,1,2,-inf\n", ["line 3", "column field_z_nT", "finite"]),
    ("short.csv", CAL_HEADER + "\n0,0,0,1,2,3\n1,0,0,1,2\n", ["line 3", "5 cells", "6"]),
    ("few.csv", CAL_HEADER + "\n0,0,0,1,2,3\n1,0,0,1,2,3\n0,1,0,1,2,3\n1,0,0,1,2,3\n",
     ["3 distinct current sets", "4 rows", "at least 4", "7 or more"]),
    ("no_rows.csv", CAL_HEADER + "\n", ["0 distinct current sets", "at least 4"]),
    ("z_fixed.csv", CAL_HEADER + "\n0,0,0.5,1,2,3\n1,0,0.5,1,2,3\n0,1,0.5,1,2,3\n1,1,0.5,1,2,3\n2,1,0.5,1,2,3\n",
     ["the z current never changes"]),
    ("x_with_y.csv", CAL_HEADER + "\n0,0,0,1,2,3\n1,1,0,1,2,3\n0,0,1,1,2,3\n2,2,1,1,2,3\n3,3,0,1,2,3\n",
     ["x and y currents", "x - y"]),
    ("only_x.csv", CAL_HEADER + "\n0,0,0,1,2,3\n1,0,0,1,2,3\n2,0,0,1,2,3\n3,0,0,1,2,3\n",
     ["only the x current changes"]),
    ("dup.csv", CAL_HEADER + ",field_x_nT\n", ["column field_x_nT appears twice"]),
]


@pytest.mark.parametrize("name, text, parts", BAD_CALIBRATION, ids=[c[0] for c in BAD_CALIBRATION])
def test_bad_calibration_file_names_file_and_place(tmp_path, name, text, parts):
    path = write(tmp_path, name, text)
    with pytest.raises(InputError) as exc:
        read_calibration_csv(path)
    assert_one_line(exc, path, *parts)


def test_missing_folder_and_binary_file(tmp_path):
    with pytest.raises(InputError) as exc:
        read_calibration_csv(tmp_path / "nope.csv")
    assert_one_line(exc, tmp_path / "nope.csv", "not found")
    with pytest.raises(InputError) as exc:
        read_calibration_csv(tmp_path)
    assert_one_line(exc, tmp_path, "folder")
    path = tmp_path / "bin.csv"
    path.write_bytes(b"\xff\xfe\x00\x01garbage")
    with pytest.raises(InputError) as exc:
        read_calibration_csv(path)
    assert_one_line(exc, path)


# ---- field time series CSV ------------------------------------------------------------


def test_good_series_reads_back(tmp_path):
    path = write(tmp_path, "s.csv", SERIES_HEADER + ",frame\n0,1,2,3,ned\n0.5,4,5,6,NED\n1.5,7,8,9,ned\n")
    series = read_field_series_csv(path)
    assert series.frame == "ned"
    np.testing.assert_array_equal(series.t_s, [0, 0.5, 1.5])
    np.testing.assert_array_equal(series.field_nT[2], [7, 8, 9])
    assert series.line_numbers == (2, 3, 4)
    plain = write(tmp_path, "p.csv", SERIES_HEADER + "\n0,1,2,3\n1,4,5,6\n")
    assert read_field_series_csv(plain).frame == "cage"
    assert read_field_series_csv(plain, frame="ned").frame == "ned"


BAD_SERIES = [
    ("one_row.csv", SERIES_HEADER + "\n0,1,2,3\n", {}, ["1 data row", "at least 2"]),
    ("no_t.csv", "x_nT,y_nT,z_nT\n1,2,3\n2,3,4\n", {}, ["line 1", "t_s"]),
    ("repeat_t.csv", SERIES_HEADER + "\n0,1,2,3\n1,1,2,3\n1,1,2,3\n", {}, ["line 4", "t_s", "increase strictly"]),
    ("back_t.csv", SERIES_HEADER + "\n0,1,2,3\n2,1,2,3\n# note\n1,1,2,3\n", {}, ["line 5", "line 3"]),
    ("nan_t.csv", SERIES_HEADER + "\n0,1,2,3\nnan,1,2,3\n", {}, ["line 3", "column t_s", "finite"]),
    ("word.csv", SERIES_HEADER + "\n0,1,2,3\n1,1,2,x\n", {}, ["line 3", "column z_nT", "'x'"]),
    ("frame.csv", SERIES_HEADER + ",frame\n0,1,2,3,cage\n1,1,2,3,enu\n", {}, ["line 3", "column frame", "'enu'"]),
    ("mixed.csv", SERIES_HEADER + ",frame\n0,1,2,3,cage\n1,1,2,3,ned\n", {}, ["line 3", "differs", "line 2"]),
    ("clash.csv", SERIES_HEADER + ",frame\n0,1,2,3,cage\n1,1,2,3,cage\n", {"frame": "ned"}, ["frame column says cage"]),
    ("arg.csv", SERIES_HEADER + "\n0,1,2,3\n1,1,2,3\n", {"frame": "enu"}, ["frame must be one of"]),
]


@pytest.mark.parametrize("name, text, kwargs, parts", BAD_SERIES, ids=[c[0] for c in BAD_SERIES])
def test_bad_series_file_names_file_and_place(tmp_path, name, text, kwargs, parts):
    path = write(tmp_path, name, text)
    with pytest.raises(InputError) as exc:
        read_field_series_csv(path, **kwargs)
    assert_one_line(exc, path, *parts)


# ---- calibration JSON -----------------------------------------------------------------


def saved_calibration(tmp_path):
    text, table, field = good_calibration_text()
    fit = fit_calibration(table, field + np.random.default_rng(0).normal(0, 2.0, field.shape))
    path = save_calibration(tmp_path / "cal.json", fit)
    return path, json.loads(path.read_text())


def _edit(doc, key, value):
    doc = json.loads(json.dumps(doc))
    if value is _DROP:
        del doc[key]
    else:
        doc[key] = value
    return doc


_DROP = object()
BAD_CAL_JSON = [
    ("format", "cage-design", ["format must be"]),
    ("version", 2, ["unsupported version 2"]),
    ("coupling_nT_per_A", _DROP, ["missing key coupling_nT_per_A"]),
    ("offset_nT", [1.0, 2.0], ["offset_nT must be a list of 3"]),
    ("offset_nT", [1.0, "2", 3.0], ["offset_nT[1] must be a number"]),
    ("coupling_nT_per_A", [[1.0, 0, 0], [0, 1.0, 0], [1.0, 0, 0]], ["singular"]),
    ("coupling_nT_per_A", [[1.0, 0, 0], [0, 1e400, 0], [0, 0, 1.0]], ["coupling_nT_per_A[1][1]", "finite"]),
    ("rms_residual_nT", -1.0, ["rms_residual_nT must be >= 0"]),
    ("n_rows", 2.5, ["n_rows must be a whole number"]),
    ("n_outliers", 7, ["n_outliers is 7"]),
    ("calibrated_by", "me", ["unknown key 'calibrated_by'"]),
    ("source_file", 3, ["source_file must be text"]),
]


@pytest.mark.parametrize("key, value, parts", BAD_CAL_JSON, ids=[f"{c[0]}-{i}" for i, c in enumerate(BAD_CAL_JSON)])
def test_bad_calibration_json_names_file_and_key(tmp_path, key, value, parts):
    path, doc = saved_calibration(tmp_path)
    path.write_text(json.dumps(_edit(doc, key, value)))
    with pytest.raises(InputError) as exc:
        load_calibration(path)
    assert_one_line(exc, path, *parts)


def test_calibration_json_syntax_and_nan_tokens(tmp_path):
    path, doc = saved_calibration(tmp_path)
    path.write_text('{"format": "cage-calibration",\n "version": 1,,}')
    with pytest.raises(InputError) as exc:
        load_calibration(path)
    assert_one_line(exc, path, "line 2", "not valid JSON")
    # Python's json accepts NaN tokens; the loader must still refuse them
    path.write_text(json.dumps(doc).replace(str(doc["offset_nT"][0]), "NaN", 1))
    with pytest.raises(InputError) as exc:
        load_calibration(path)
    assert_one_line(exc, path, "offset_nT[0]", "finite")


def test_minimal_hand_written_calibration_loads(tmp_path):
    path = write(tmp_path, "hand.json", json.dumps({
        "format": "cage-calibration", "version": 1,
        "coupling_nT_per_A": [[50000, 0, 0], [0, 49000, 0], [0, 0, 51000]],
        "offset_nT": [18000, -1500, 43000]}))
    fit = load_calibration(path)
    np.testing.assert_allclose(fit.null_current_A, [-0.36, 1500 / 49000, -43000 / 51000])
    assert math.isnan(fit.rms_residual_nT) and fit.n_outliers == 0


# ---- fuzz: nothing but InputError escapes ---------------------------------------------

cells = st.one_of(
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.sampled_from(["", "x", "1e999", "-0", " 3 ", '"4"', "nan", "#", "1,2", "\ufeff"]),
)
rows = st.lists(st.lists(cells, min_size=0, max_size=8).map(",".join), min_size=0, max_size=12)


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(body=rows, header=st.sampled_from([CAL_HEADER, SERIES_HEADER, SERIES_HEADER + ",frame", "a,b"]))
def test_fuzzed_files_raise_only_input_error(tmp_path, body, header):
    path = tmp_path / "fuzz.csv"
    path.write_text("\n".join([header] + body), encoding="utf-8")
    for reader in (read_calibration_csv, read_field_series_csv):
        try:
            reader(path)
        except InputError as exc:
            assert "\n" not in str(exc) and str(path) in str(exc)
