"""Every data-quality finding kind, with its line number, date, column and message."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from volbench.data import load_prices
from volbench.data.history import FINDING_KINDS
from volbench.data.quality import QualitySettings, split_label
from volbench.errors import VolbenchError


def _write(tmp_path, text: str, name: str = "prices.csv"):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


def _closes_csv(closes, start="2021-01-04") -> str:
    dates = pd.bdate_range(start, periods=len(closes)).strftime("%Y-%m-%d")
    return "Date,Close\n" + "".join(f"{d},{c:.6f}\n" for d, c in zip(dates, closes))


def _walk(n=60, seed=0):
    rng = np.random.default_rng(seed)
    return 100 * np.exp(np.cumsum(rng.normal(0, 0.01, n)))


def _only(h, kind):
    found = [f for f in h.findings if f.kind == kind]
    assert len(found) == 1, [(f.kind, f.line) for f in h.findings]
    return found[0]


def _row(f):
    return f.severity, f.kind, f.line, f.date, f.column


def test_cell_level_findings(tmp_path):
    text = ("Date,Open,High,Low,Close\n"
            "2021-03-01,10,11,9,10.5\n"
            "2021-03-02,10,11,9,\n"          # line 3 missing close
            "2021-03-03,10,abc,9,10\n"       # line 4 non-numeric high
            "2021-03-04,0,11,9,10\n"         # line 5 non-positive open
            "2021-03-05,10,11,9,-2\n"        # line 6 negative close
            "2021-13-45,10,11,9,10\n"        # line 7 bad date
            ",10,11,9,10\n"                  # line 8 empty date
            "2021-03-08,10,11,9,10.2\n")
    (h,) = load_prices(_write(tmp_path, text))
    assert h.n == 2 and list(h.lines) == [2, 9]
    got = {_row(f) for f in h.findings}
    assert got == {
        ("error", "missing_value", 3, "2021-03-02", "close"),
        ("error", "non_numeric", 4, "2021-03-03", "high"),
        ("error", "non_positive", 5, "2021-03-04", "open"),
        ("error", "non_positive", 6, "2021-03-05", "close"),
        ("error", "bad_date", 7, None, "date"),
        ("error", "missing_value", 8, None, "date"),
        ("info", "gap", 9, "2021-03-08", "date"),  # 7 days after the last usable row
    }
    msgs = {f.line: f.message for f in h.findings}
    assert msgs[3] == "line 3, column 'Close': value is empty; row left out (fill it in or delete the row)"
    assert msgs[4] == "line 4, column 'High': 'abc' is not a number; row left out (correct the cell)"
    assert msgs[5].startswith("line 5, column 'Open': price 0 is not positive; row left out")
    assert msgs[6].startswith("line 6, column 'Close': price -2 is not positive")
    assert msgs[7] == "line 7: date '2021-13-45' cannot be read; row left out"
    assert msgs[8] == "line 8: date is empty; row left out"


def test_infinite_price_is_not_numeric(tmp_path):
    (h,) = load_prices(_write(tmp_path, "Date,Close\n2021-03-01,10\n2021-03-02,inf\n2021-03-03,11\n"))
    assert _row(_only(h, "non_numeric")) == ("error", "non_numeric", 3, "2021-03-02", "close")
    assert np.isfinite(h.close).all()


def test_high_below_low_and_outside_range(tmp_path):
    text = ("Date,Open,High,Low,Close\n"
            "2021-03-01,10,11,9,10.5\n"
            "2021-03-02,10,9,11,10\n"        # line 3 high below low
            "2021-03-03,12,11,9,10\n"        # line 4 open above high
            "2021-03-04,10,11,9,8.5\n"       # line 5 close below low
            "2021-03-05,10,11,9,10.2\n")
    (h,) = load_prices(_write(tmp_path, text))
    assert {_row(f) for f in h.findings} == {
        ("warning", "high_below_low", 3, "2021-03-02", "high"),
        ("warning", "outside_range", 4, "2021-03-03", "open"),
        ("warning", "outside_range", 5, "2021-03-04", "close"),
    }
    msgs = {f.line: f.message for f in h.findings}
    assert msgs[3].startswith("high 9 is below low 11")
    assert msgs[4].startswith("open 12 lies outside the bar's range [9, 11]")
    assert msgs[5].startswith("close 8.5 lies outside the bar's range [9, 11]")
    assert h.flagged_lines == {3, 4, 5}


def test_duplicate_date_keeps_the_later_line(tmp_path):
    text = "Date,Close\n2021-03-01,10\n2021-03-02,11\n2021-03-02,11.5\n2021-03-03,12\n"
    (h,) = load_prices(_write(tmp_path, text))
    f = _only(h, "duplicate_date")
    assert _row(f) == ("warning", "duplicate_date", 3, "2021-03-02", "date")
    assert f.message == ("date 2021-03-02 repeats on line 4; line 3 left out, line 4 kept "
                         "(the later one in the file)")
    np.testing.assert_array_equal(h.close, [10, 11.5, 12])
    assert list(h.lines) == [2, 4, 5]


def test_triple_duplicate_in_a_descending_file(tmp_path):
    text = "Date,Close\n2021-03-03,12\n2021-03-02,11\n2021-03-02,11.2\n2021-03-02,11.4\n2021-03-01,10\n"
    (h,) = load_prices(_write(tmp_path, text))
    dups = [f for f in h.findings if f.kind == "duplicate_date"]
    assert [(f.line, f.date) for f in dups] == [(3, "2021-03-02"), (4, "2021-03-02")]
    assert all("line 5 kept" in f.message for f in dups)
    np.testing.assert_array_equal(h.close, [10, 11.4, 12])
    assert _only(h, "sorted").severity == "info"


def test_calendar_gap_respects_the_setting(tmp_path):
    text = "Date,Close\n2021-03-01,10\n2021-03-02,11\n2021-03-12,12\n2021-03-15,12.5\n"
    p = _write(tmp_path, text)
    (h,) = load_prices(p)
    f = _only(h, "gap")
    assert _row(f) == ("info", "gap", 4, "2021-03-12", "date")
    assert f.message.startswith("10 calendar days since the previous row (2021-03-02)")
    (h10,) = load_prices(p, quality=QualitySettings(gap_days=10))
    assert not [f for f in h10.findings if f.kind == "gap"]
    (h9,) = load_prices(p, quality=QualitySettings(gap_days=9))
    assert len([f for f in h9.findings if f.kind == "gap"]) == 1
    # a weekend (3 days) is not a gap with the default 5
    assert h.flagged_lines == frozenset()


def test_stale_run(tmp_path):
    c = list(_walk(40, seed=1))
    c[10:17] = [c[10]] * 7  # 7 identical closes on lines 12..18
    (h,) = load_prices(_write(tmp_path, _closes_csv(c)))
    f = _only(h, "stale_run")
    dates = pd.bdate_range("2021-01-04", periods=40).strftime("%Y-%m-%d")
    assert _row(f) == ("warning", "stale_run", 12, dates[10], "close")
    assert f.message.startswith(f"close stays at {float(f'{c[10]:.6f}'):g} for 7 rows")
    assert f"for 7 rows ({dates[10]} to {dates[16]})" in f.message
    assert set(f.lines) == set(range(13, 19))  # the repeats; the first close is genuine
    (h4,) = load_prices(_write(tmp_path, _closes_csv(c), "b.csv"), quality=QualitySettings(stale_run=8))
    assert not [f for f in h4.findings if f.kind == "stale_run"]


def test_short_stale_run_is_not_reported(tmp_path):
    c = list(_walk(30, seed=2))
    c[5:9] = [c[5]] * 4  # 4 identical closes, below the default of 5
    (h,) = load_prices(_write(tmp_path, _closes_csv(c)))
    assert not [f for f in h.findings if f.kind == "stale_run"]


@pytest.mark.parametrize(("factor", "label"), [
    (0.5, "2:1 split"), (2.0, "1:2 reverse split"), (1 / 3, "3:1 split"), (2 / 3, "3:2 split"),
    (4.0, "1:4 reverse split"),
])
def test_unadjusted_split_is_named(tmp_path, factor, label):
    # A split of n:m multiplies the price by m/n on the split date (common practice, no source).
    c = _walk(60, seed=3)
    c[30:] *= factor
    (h,) = load_prices(_write(tmp_path, _closes_csv(c)))
    f = _only(h, "jump")
    dates = pd.bdate_range("2021-01-04", periods=60).strftime("%Y-%m-%d")
    assert _row(f) == ("warning", "jump", 32, dates[30], "close")
    assert f"looks like an unadjusted {label};" in f.message
    assert "excluding the row does not remove the jump" in f.message


def test_bad_tick_that_reverses(tmp_path):
    c = _walk(60, seed=4)
    c[25] *= 10
    (h,) = load_prices(_write(tmp_path, _closes_csv(c)))
    f = _only(h, "jump")  # the bar that undoes the tick is not reported again
    assert (f.line, f.column) == (27, "close")
    assert "reversed on the next bar: looks like a bad tick" in f.message
    assert f.lines == (27,)
    (excl,) = load_prices(_write(tmp_path, _closes_csv(c), "b.csv"), exclude_flagged=True)
    assert excl.excluded_lines == (27,)
    assert np.abs(np.diff(np.log(excl.close))).max() < 0.1


def test_persistent_move_that_is_not_a_split_ratio_is_a_genuine_move(tmp_path):
    # A move that persists and matches no split ratio is information, never a warning that
    # suggests a bad price (common practice, no source; docs/METHODS.md, Import).
    c = _walk(60, seed=5)
    c[30:] *= 1.6
    (h,) = load_prices(_write(tmp_path, _closes_csv(c)))
    assert not [f for f in h.findings if f.kind == "jump"]
    f = _only(h, "large_move")
    assert (f.severity, f.line) == ("info", 32)
    assert "persists and matches no split ratio: treated as a genuine move and kept" in f.message
    assert "robust z" in f.message and h.flagged_lines == frozenset()


def test_ordinary_moves_are_not_jumps(tmp_path):
    (h,) = load_prices(_write(tmp_path, _closes_csv(_walk(500, seed=6))))
    assert h.findings == ()


def test_split_label():
    assert split_label(0.5) == "2:1 split"
    assert split_label(0.49) == "2:1 split"
    assert split_label(2.0) == "1:2 reverse split"
    assert split_label(0.25) == "4:1 split"
    assert split_label(0.9) is None
    assert split_label(1.25) is None and split_label(0.8) is None  # 5:4 / 4:5 are plausible real moves
    assert split_label(2 / 3) == "3:2 split"
    assert split_label(0.0) is None
    assert split_label(-1.0) is None


def test_quality_settings_validate():
    with pytest.raises(VolbenchError, match="gap_days must be >= 1, got 0"):
        QualitySettings(gap_days=0)
    with pytest.raises(VolbenchError, match="stale_run must be >= 2, got 1"):
        QualitySettings(stale_run=1)
    with pytest.raises(VolbenchError, match="jump_z must be > 0, got 0"):
        QualitySettings(jump_z=0)


def test_every_finding_kind_is_covered_by_a_test():
    # keeps this file honest when a kind is added
    covered = {"missing_value", "non_numeric", "non_positive", "bad_date", "high_below_low", "outside_range",
               "duplicate_date", "gap", "stale_run", "jump", "sorted",
               # covered in tests/data/test_import_trust.py
               "large_move", "stale_open", "field_count", "quote_span", "preamble", "separators", "time_zone",
               "split_adjusted", "excluded_gap"}
    assert set(FINDING_KINDS) == covered


def test_findings_are_in_line_order_and_serialise(tmp_path):
    text = ("Date,Open,High,Low,Close\n"
            "2021-03-01,10,11,9,10.5\n"
            "2021-03-02,10,9,11,10\n"
            "2021-03-03,10,11,9,\n")
    (h,) = load_prices(_write(tmp_path, text))
    assert [f.line for f in h.findings] == sorted(f.line for f in h.findings)
    d = h.findings[0].as_dict()
    assert set(d) == {"severity", "kind", "line", "date", "column", "message"}


def test_prices_near_the_float_limit_do_not_overflow(tmp_path):
    # Found by fuzzing: ratios and range tolerances overflowed (a RuntimeWarning, an error in this
    # suite). Jumps are judged on log returns; range checks on differences.
    text = ("Date,Open,High,Low,Close\n"
            "2021-03-01,1.79e308,1.797e308,1e308,1.5e308\n"
            "2021-03-02,10,11,9,12\n"
            "2021-03-03,10,11,9,10\n")
    (h,) = load_prices(_write(tmp_path, text))
    assert h.n == 3
    assert _row(_only(h, "outside_range")) == ("warning", "outside_range", 3, "2021-03-02", "close")
    c = list(_walk(40, seed=9))
    c[19], c[20] = 0.5, 1.5e308  # ratio 3e308 exceeds the largest float
    (j,) = load_prices(_write(tmp_path, _closes_csv(c), "j.csv"))
    (tick,) = [f for f in j.findings if f.kind == "jump"]  # two bad bars, undone on the third
    assert tick.lines == (21, 22) and "reversed on 2 bars: looks like a bad tick" in tick.message
