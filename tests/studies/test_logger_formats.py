"""Logger formats the reader detects without guessing silently: date order from the data (refused when the
data fit both), times of day across midnight, time units named in headers, °F named in headers, separate date
and time columns, units inside cells, missing-value sentinels, UTF-16. Each fixture is a small synthetic file
written in the test; each test checks the time span and the temperatures read."""

from __future__ import annotations

import pytest
from numpy.testing import assert_allclose

from procplan.cli import main
from procplan.errors import InvalidInputError
from procplan.studies.logger import clean_logger, preview_logger, read_logger


def _file(tmp_path, text: str, encoding: str = "utf-8", name: str = "log.csv"):
    p = tmp_path / name
    p.write_bytes(text.encode(encoding))
    return p


def _span(d) -> float:
    t = d.frame["time_s"].dropna()
    return float(t.max() - t.min())


def test_day_first_decided_by_a_day_above_12(tmp_path):
    d = read_logger(_file(tmp_path, "Date Time,Probe\n13/03/2026 10:00:00,20.5\n13/03/2026 10:01:30,19.0\n"))
    assert _span(d) == 90.0 and d.frame["Probe"].tolist() == [20.5, 19.0]
    assert any("day-first" in x and "above 12" in x for x in d.decisions)


def test_month_first_decided_by_a_day_above_12(tmp_path):
    d = read_logger(_file(tmp_path, "Date Time,Probe\n03/13/2026 23:59:00,20.5\n03/14/2026 00:00:30,19.0\n"))
    assert _span(d) == 90.0 and d.frame["Probe"].tolist() == [20.5, 19.0]
    assert any("month-first" in x for x in d.decisions)


def test_date_order_decided_by_a_continuous_record(tmp_path):
    # 01/02 -> 02/02 is one minute read day-first, a month read month-first.
    text = "Timestamp;T\n01/02/2026 23:59:30;5,0\n02/02/2026 00:00:30;4,5\n"
    d = read_logger(_file(tmp_path, text))
    assert _span(d) == 60.0 and d.frame["T"].tolist() == [5.0, 4.5]
    assert any("read day-first" in x for x in d.decisions)


def test_ambiguous_dates_refused_until_the_order_is_given(tmp_path):
    p = _file(tmp_path, "Timestamp,T\n03/04/2026 10:00,5.0\n04/05/2026 10:00,4.0\n")
    with pytest.raises(InvalidInputError) as exc:
        read_logger(p)
    assert exc.value.field == "date_order"
    day = read_logger(p, date_order="day-first")  # 3 April -> 4 May: 31 days
    month = read_logger(p, date_order="month-first")  # 4 March -> 5 April: 32 days
    assert _span(day) == 31 * 86400.0 and _span(month) == 32 * 86400.0
    assert day.frame["T"].tolist() == [5.0, 4.0]


def test_time_of_day_crossing_midnight(tmp_path):
    d = read_logger(_file(tmp_path, "Time,T\n23:58:00,5.0\n23:59:30,4.8\n00:01,4.6\n00:02:30,4.4\n"))
    assert_allclose(d.frame["time_s"], [0.0, 90.0, 180.0, 270.0])
    assert d.frame["T"].tolist() == [5.0, 4.8, 4.6, 4.4]
    assert any("crossed midnight 1 time" in x for x in d.decisions)


@pytest.mark.parametrize(
    "header, seconds",
    [
        ("Time (ms)", 1e-3),
        ("t [s]", 1.0),
        ("Elapsed_min", 60.0),
        ("time/h", 3600.0),
        ("Zeit [Stunden]", 3600.0),
    ],
)
def test_time_unit_named_in_the_header(tmp_path, header, seconds):
    d = read_logger(_file(tmp_path, f"{header},core\n0,10.0\n5,9.5\n10,9.0\n"))
    assert _span(d) == pytest.approx(10 * seconds) and d.frame["core"].tolist() == [10.0, 9.5, 9.0]
    assert any("named in its header" in x for x in d.decisions)


def test_unnamed_time_unit_is_stated_and_can_be_overridden(tmp_path):
    p = _file(tmp_path, "time,core\n0,10.0\n5,9.5\n")
    d = read_logger(p)
    assert _span(d) == 5.0 and any("not named" in x and "seconds" in x for x in d.decisions)
    assert _span(read_logger(p, time_unit="min")) == 300.0


@pytest.mark.parametrize("header", ["Temp (*F)", "Temp (°F)", "Temp [degF]"])
def test_fahrenheit_named_in_the_header(tmp_path, header):
    # Source: definition of the degree Fahrenheit, T_C = (T_F - 32) * 5/9 (NIST SP 811, B.8): 212 F = 100 C.
    d = read_logger(_file(tmp_path, f"time_s,{header}\n0,212\n30,32\n"))
    assert _span(d) == 30.0
    assert_allclose(d.frame[header], [100.0, 0.0], atol=1e-12)
    assert d.mapping.temperature_unit == "F"


def test_celsius_and_fahrenheit_in_different_columns_refused(tmp_path):
    p = _file(tmp_path, "time_s,a (°C),b (°F)\n0,10,50\n30,11,52\n")
    with pytest.raises(InvalidInputError) as exc:
        read_logger(p)
    assert exc.value.field == "temperature_unit"
    assert read_logger(p, temperature_unit="C").frame["b (°F)"].tolist() == [50.0, 52.0]


def test_separate_date_and_time_columns(tmp_path):
    text = "Date;Time;Probe\n31/12/2026;23:59:00;4,0\n01/01/2027;00:00:30;3,5\n01/01/2027;00:02:00;3,0\n"
    d = read_logger(_file(tmp_path, text))
    assert d.mapping.date == "Date" and d.mapping.time == "Time" and d.channels == ("Probe",)
    assert_allclose(d.frame["time_s"], [0.0, 90.0, 180.0])
    assert d.frame["Probe"].tolist() == [4.0, 3.5, 3.0]


def test_units_inside_cells(tmp_path):
    d = read_logger(_file(tmp_path, "time_s,core\n0,4.5 °C\n60,4.0 °C\n120, 3.5°C\n"))
    assert _span(d) == 120.0 and d.frame["core"].tolist() == [4.5, 4.0, 3.5]
    f = read_logger(_file(tmp_path, "time_s;core\n0;212,0 °F\n60;32 °F\n", name="f.csv"))
    assert _span(f) == 60.0
    assert_allclose(f.frame["core"], [100.0, 0.0], atol=1e-12)


def test_missing_value_sentinels_dropped_and_counted(tmp_path):
    p = _file(tmp_path, "time_s,T1,T2\n0,5.0,6.0\n30,-9999,5.5\n60,4.0,-9999\n90,-9999,5.0\n")
    d = read_logger(p)
    assert d.missing == {"T1": 2, "T2": 1} and _span(d) == 90.0
    t, v = d.series("T1")
    assert t.tolist() == [0.0, 60.0] and v.tolist() == [5.0, 4.0]
    assert clean_logger(d).series("T2")[1].tolist() == [6.0, 5.5, 5.0]
    custom = read_logger(
        _file(tmp_path, "time_s,T\n0,85\n30,4.0\n60,3.5\n", name="c.csv"), missing_values=(85.0,)
    )
    assert custom.missing == {"T": 1} and custom.series("T")[1].tolist() == [4.0, 3.5]


@pytest.mark.parametrize("encoding", ["utf-16", "utf-16-le", "utf-16-be"])
def test_utf16_with_and_without_byte_order_mark(tmp_path, encoding):
    d = read_logger(_file(tmp_path, "Zeit [min]\tKern °C\n0\t74,5\n2,5\t70,25\n", encoding))
    assert _span(d) == 150.0 and d.frame["Kern °C"].tolist() == [74.5, 70.25]


def test_preview_states_the_decisions(tmp_path):
    pv = preview_logger(_file(tmp_path, "Logger 7\nDate;Time;Probe (°F)\n31/12/2026;23:59:00;40,0\n"))
    assert pv.mapping.date == "Date" and pv.mapping.temperature_unit == "F" and pv.n_rows == 1
    text = " ".join(pv.decisions)
    assert "separator ';'" in text and "header on line 2" in text and "°F" in text


def test_cli_passes_every_override(tmp_path, capsys):
    p = _file(tmp_path, "when,what,probe\n03/04/2026 10:00,x,41\n04/05/2026 10:00,y,39\n")
    args = ["calibrate", str(p), "--preview", "--json", "--time-column", "when", "--temperature-unit", "F"]
    assert main(args) == 0
    out = capsys.readouterr().out
    assert '"temperature_unit": "F"' in out and '"decisions"' in out
    with pytest.raises(InvalidInputError):
        read_logger(p)
    d = read_logger(p, date_order="month-first", temperature_unit="F", missing_values=())
    assert _span(d) == 32 * 86400.0
    assert main(["calibrate", str(p), "--date-order", "dd/mm", "--plan", str(p)]) == 2
