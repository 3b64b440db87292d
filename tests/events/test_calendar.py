"""Reading an events file: layouts accepted, every bad row a finding with its line, clear refusals."""

from __future__ import annotations

import pytest

from volbench.errors import VolbenchError
from volbench.events import EVENT_FINDING_KINDS, make_calendar, read_events


def _write(tmp_path, text, name="tarnwick_events.csv"):
    p = tmp_path / name
    p.write_text(text)
    return p


def test_header_file_reads_dates_labels_and_timings_sorted(tmp_path):
    p = _write(tmp_path, "Date,Label,Timing\n2023-07-20,Q2 report,after_close\n2023-04-18,Q1 report,before_open\n"
                         "2023-10-19,Q3 report,\n")
    cal = read_events(p)
    assert [e.date for e in cal.events] == ["2023-04-18", "2023-07-20", "2023-10-19"]
    assert [e.timing for e in cal.events] == ["before_open", "after_close", "during"]
    assert [e.label for e in cal.events] == ["Q1 report", "Q2 report", "Q3 report"]
    assert [e.line for e in cal.events] == [3, 2, 4]
    assert cal.findings == () and cal.source == p and len(cal.sha256) == 64


def test_headerless_semicolon_file_and_columns_in_any_order(tmp_path):
    cal = read_events(_write(tmp_path, "2023-04-18;results;Before Open\n2023-07-20\n"))
    assert [(e.date, e.label, e.timing) for e in cal.events] == [("2023-04-18", "results", "before_open"),
                                                                 ("2023-07-20", "", "during")]
    cal = read_events(_write(tmp_path, "when,date,notes\nafter-close,2023-04-18,x\n", "b.csv"))
    assert [(e.date, e.timing) for e in cal.events] == [("2023-04-18", "after_close")]
    assert [f.kind for f in cal.findings] == ["ignored_column"] and "'notes'" in cal.findings[0].message


def test_every_bad_row_is_a_finding_naming_its_line(tmp_path):
    p = _write(tmp_path, "date,label,timing\n2023-04-18,ok,before_open\n2023-13-40,bad,after_close\n"
                         ",empty,before_open\n2023-05-02,odd,at lunch\n2023-04-18,repeat,before_open\n")
    cal = read_events(p)
    assert [e.date for e in cal.events] == ["2023-04-18"]
    got = [(f.severity, f.kind, f.line) for f in cal.findings]
    assert got == [("error", "bad_date", 3), ("error", "missing_value", 4), ("error", "bad_timing", 5),
                   ("warning", "duplicate_event", 6)]
    assert all(f.message.startswith(f"line {f.line}: ") for f in cal.findings)
    assert "'2023-13-40' is not a date" in cal.findings[0].message
    assert "repeats line 2" in cal.findings[3].message
    assert {f.kind for f in cal.findings} <= set(EVENT_FINDING_KINDS)


def test_a_headerless_file_whose_first_date_is_mistyped_keeps_its_other_rows(tmp_path):
    cal = read_events(_write(tmp_path, "2023-13-40,bad\n2023-04-18,ok\n"))
    assert [e.label for e in cal.events] == ["ok"] and [(f.kind, f.line) for f in cal.findings] == [("bad_date", 1)]


def test_date_format_option(tmp_path):
    cal = read_events(_write(tmp_path, "18/04/2023,Q1,before_open\n"), date_format="%d/%m/%Y")
    assert cal.events[0].date == "2023-04-18"


@pytest.mark.parametrize("text, match", [
    ("", "events file is empty"),
    ("label,timing\nx,before_open\n", r"line 1: no date column among headers 'label', 'timing'"),
    ("date,label\n", "header found but no event rows"),
    ("date,label\nsoon,x\nlater,y\n", r"no usable event row \(line 2: 'soon' is not a date"),
])
def test_unusable_files_are_refused_with_the_reason(tmp_path, text, match):
    with pytest.raises(VolbenchError, match=match):
        read_events(_write(tmp_path, text))


def test_missing_file_and_folder_are_refused(tmp_path):
    with pytest.raises(VolbenchError, match="events file not found"):
        read_events(tmp_path / "nope.csv")
    with pytest.raises(VolbenchError, match="is a folder"):
        read_events(tmp_path)


def test_calendar_built_in_code_checks_its_inputs():
    cal = make_calendar(["2023-07-20", "2023-04-18"], ["after_close", "before open"])
    assert [(e.date, e.timing) for e in cal.events] == [("2023-04-18", "before_open"), ("2023-07-20", "after_close")]
    with pytest.raises(VolbenchError, match="timing 'noon' is not one of"):
        make_calendar(["2023-04-18"], ["noon"])
    with pytest.raises(VolbenchError, match="'someday' is not a date"):
        make_calendar(["someday"])
    with pytest.raises(VolbenchError, match="2 dates but 1 timings"):
        make_calendar(["2023-04-18", "2023-05-18"], ["during"])
