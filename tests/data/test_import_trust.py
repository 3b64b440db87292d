"""Real-world price files: each way they used to give wrong but plausible numbers, reproduced.

Every fixture is generated here; the row accounting (data rows = rows used + rows reported) is
checked on each one. Rules: docs/METHODS.md, Import.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

from volbench.cli import main
from volbench.data import load_prices
from volbench.data.options import ImportOptions
from volbench.errors import VolbenchError
from volbench.estimators import point_estimate

DAYS = pd.bdate_range("2021-01-04", periods=300).strftime("%Y-%m-%d")


def _walk(n=300, seed=0, start=4960.0, vol=0.01):
    rng = np.random.default_rng(seed)
    return start * np.exp(np.cumsum(rng.normal(0, vol, n)))


def _ohlc(n=300, seed=0, start=4960.0):
    c = _walk(n, seed, start)
    o = np.concatenate([[start], c[:-1]]) * np.exp(np.random.default_rng(seed + 1).normal(0, 0.002, n))
    h = np.maximum(o, c) * 1.004
    lo = np.minimum(o, c) * 0.996
    return o, h, lo, c


def _write(tmp_path, text, name="prices.csv", encoding="utf-8"):
    p = tmp_path / name
    p.write_bytes(text.encode(encoding))
    return p


# ------------------------------------------------------------------------ unbalanced quotes
def test_a_stray_quote_never_swallows_the_file_silently(tmp_path):
    o, h, lo, c = _ohlc()
    rows = [f"{d},{a:.2f},{b:.2f},{x:.2f},{y:.2f}" for d, a, b, x, y in zip(DAYS, o, h, lo, c)]
    rows[4] = rows[4].replace(",", ',"', 1)  # line 6: a quote opens the open cell and never closes
    p = _write(tmp_path, "Date,Open,High,Low,Close\n" + "\n".join(rows) + "\n")
    with pytest.raises(VolbenchError, match=r"line 6: a quote mark opens a cell that is never closed, so the 295 "
                                            r"lines after it would be read into that one cell") as err:
        load_prices(p)
    assert len(str(err.value)) < 300  # never the swallowed text


def test_a_quote_that_closes_later_names_the_lines_it_swallowed(tmp_path, check_accounts):
    c = _walk(40)
    rows = [f"{d},{x:.2f}" for d, x in zip(DAYS, c)]
    rows[4] = rows[4].replace(",", ',"', 1)
    rows[7] = rows[7] + '"'  # closes on line 9: lines 6-9 become one record
    p = _write(tmp_path, "Date,Close\n" + "\n".join(rows) + "\n")
    (h,) = load_prices(p)
    (f,) = [f for f in h.findings if f.kind == "quote_span"]
    assert (f.severity, f.line, f.lines) == ("error", 6, (6, 7, 8, 9))
    assert "runs over 4 lines (to line 9), swallowing 3 lines" in f.message
    assert h.n == 36
    check_accounts(p, [h])


def test_a_huge_cell_is_reported_not_a_crash(tmp_path, check_accounts):
    c = _walk(20)
    rows = [f"{d},{x:.2f}" for d, x in zip(DAYS, c)]
    rows[3] = f"{DAYS[3]},{'9' * 200_000}x"
    p = _write(tmp_path, "Date,Close\n" + "\n".join(rows) + "\n")
    (h,) = load_prices(p)
    (f,) = [f for f in h.findings if f.kind == "non_numeric"]
    assert f.line == 5 and len(f.message) < 250 and "(200,001 characters)" in f.message
    check_accounts(p, [h])
    quoted = _write(tmp_path, "Date,Close\n" + "\n".join(rows[:3]) + f'\n{DAYS[3]},"{"9" * 200_000}"\n',
                    "quoted.csv")
    with pytest.raises(VolbenchError, match=r"line 5: cannot be read as CSV \(field larger than field limit"):
        load_prices(quoted)


# ------------------------------------------------------------------------ separators
def test_thousands_or_decimal_that_the_file_does_not_settle_is_refused(tmp_path):
    # every value written like 4,960: 4960 with ',' thousands, or 4.96 with a decimal comma
    c = np.round(_walk(60)).astype(int)
    text = "Date\tClose\n" + "".join(f"{d}\t{x // 1000},{x % 1000:03d}\n" for d, x in zip(DAYS, c))
    p = _write(tmp_path, text)
    with pytest.raises(VolbenchError, match=r"column 'Close': '4,\d{3}' could be 4\d{3} \(',' separating thousands\) "
                                            r"or 4\.\d+ \(',' as the decimal mark\).* pass --thousands ,"):
        load_prices(p)
    (h,) = load_prices(p, thousands=",")
    np.testing.assert_array_equal(h.close, c.astype(float))
    (h2,) = load_prices(p, decimal=",", thousands="none")
    np.testing.assert_allclose(h2.close, c / 1000)


def test_dot_thousands_in_a_semicolon_file_is_refused_then_read_as_told(tmp_path, check_accounts):
    c = np.round(_walk(60)).astype(int)
    text = "Date;Close\n" + "".join(f"{d};{x // 1000}.{x % 1000:03d}\n" for d, x in zip(DAYS, c))
    p = _write(tmp_path, text)
    with pytest.raises(VolbenchError, match=r"'4\.\d{3}' could be 4\d{3} \('\.' separating thousands\)"):
        load_prices(p)
    (h,) = load_prices(p, ImportOptions(decimal=",", thousands="."))
    np.testing.assert_array_equal(h.close, c.astype(float))
    check_accounts(p, [h])


def test_thousands_proved_by_other_values_are_read_and_stated(tmp_path, check_accounts):
    c = _walk(60)
    cells = [f"{x:,.2f}" for x in c]  # 4,960.25: '.' decimal, ',' thousands
    text = "Date\tClose\n" + "".join(f"{d}\t{x}\n" for d, x in zip(DAYS, cells))
    p = _write(tmp_path, text)
    (h,) = load_prices(p)
    np.testing.assert_allclose(h.close, np.round(c, 2))
    (f,) = [f for f in h.findings if f.kind == "separators"]
    assert f.severity == "info"
    assert f.message.startswith("numbers read with '.' as the decimal mark and ',' as the thousands separator, "
                                "as cells such as")
    check_accounts(p, [h])


def test_decimal_commas_after_many_whole_numbers_are_found(tmp_path, check_accounts):
    # 59 whole numbers, then decimals: a head sample would read 944,1 as 9441
    c = 944 * np.exp(np.cumsum(np.random.default_rng(3).normal(0, 0.0185, 120)))
    cells = [f"{x:.0f}" for x in c[:59]] + [f"{x:.1f}".replace(".", ",") for x in c[59:]]
    p = _write(tmp_path, "Date;Close\n" + "".join(f"{d};{x}\n" for d, x in zip(DAYS, cells)))
    (h,) = load_prices(p)
    expected = np.array([float(x.replace(",", ".")) for x in cells])
    np.testing.assert_array_equal(h.close, expected)
    assert [f.kind for f in h.findings] == ["separators"]
    # sample-path check: 1.85 % daily is about 29 % a year (sqrt(252) scaling, common practice)
    vol = point_estimate(h, "close_to_close").vol
    assert 0.2 < vol < 0.4
    check_accounts(p, [h])


def test_mixed_conventions_are_refused(tmp_path):
    p = _write(tmp_path, "Date;Open;Close\n" + "".join(f"{d};10.25;10,5\n" for d in DAYS[:5]))
    with pytest.raises(VolbenchError, match=r"numbers mix two conventions: column 'Open' has '10.25' \('\.' as "
                                            r"decimal mark\) but column 'Close' has '10,5'"):
        load_prices(p)


def test_a_malformed_thousands_group_is_not_a_number(tmp_path, check_accounts):
    text = "Date\tClose\n" + "".join(f"{d}\t1,234.5\n" for d in DAYS[:5]) + f"{DAYS[5]}\t12,34.5\n"
    p = _write(tmp_path, text)
    (h,) = load_prices(p)
    (f,) = [f for f in h.findings if f.kind == "non_numeric"]
    assert f.line == 7 and "'12,34.5' is not a number" in f.message
    check_accounts(p, [h])


# ------------------------------------------------------------------------ field counts
def test_rows_wider_than_the_header_are_never_shifted(tmp_path):
    o, h, lo, c = _ohlc()
    rows = [f"{d},{a:,.1f},{b:,.1f},{x:,.1f},{y:,.1f},1,000" for d, a, b, x, y in zip(DAYS, o, h, lo, c)]
    p = _write(tmp_path, "Date,Open,High,Low,Close,Volume\n" + "\n".join(rows) + "\n")
    with pytest.raises(VolbenchError, match=r"every data row has a field count the header \(line 1\) does not "
                                            r"have: most have 11 fields, the header has 6; likely cause: numbers "
                                            r"written with an unquoted thousands separator"):
        load_prices(p)


def test_a_run_of_wrong_rows_is_one_finding(tmp_path, check_accounts):
    c = _walk(50)
    rows = [f"{d},{x:.2f},100" for d, x in zip(DAYS, c)]
    for i in range(10, 14):
        rows[i] = f"{DAYS[i]},{c[i]:.2f},1,000"  # lines 12-15: four fields
    rows[30] = f"{DAYS[30]},{c[30]:.2f}"  # line 32: truncated, but the used columns are there
    rows[40] = f"{DAYS[40]}"  # line 42: truncated before the close
    p = _write(tmp_path, "Date,Close,Volume\n" + "\n".join(rows) + "\n")
    (h,) = load_prices(p)
    counts = [f for f in h.findings if f.kind == "field_count"]
    assert [(f.line, f.lines) for f in counts] == [(12, (12, 13, 14, 15)), (42, (42,))]
    assert counts[0].message.startswith("lines 12-15 (4 rows): 4 fields where the header (line 1) has 3; left out")
    assert "truncated lines" in counts[1].message
    assert 32 in h.lines
    check_accounts(p, [h])


def test_trailing_delimiters_are_not_extra_fields(tmp_path, check_accounts):
    p = _write(tmp_path, "Date,Close\n" + "".join(f"{d},{x:.2f},\n" for d, x in zip(DAYS, _walk(30))))
    (h,) = load_prices(p)
    assert h.n == 30 and h.findings == ()
    check_accounts(p, [h])


# ------------------------------------------------------------------------ formats
def test_utf16_with_bom_tab_separated(tmp_path, check_accounts):
    c = _walk(20)
    text = "Date\tClose\n" + "".join(f"{d}\t{x:.2f}\n" for d, x in zip(DAYS, c))
    p = _write(tmp_path, "\ufeff" + text, encoding="utf-16-le")
    (h,) = load_prices(p)
    np.testing.assert_allclose(h.close, np.round(c, 2))
    check_accounts(p, [h])


def test_separate_date_and_time_columns_are_combined(tmp_path, check_accounts):
    text = "Date,Time,Close\n2021-03-01,09:30,10\n2021-03-01,10:30,11\n2021-03-01,11:30,12\n2021-03-02,09:30,12.5\n"
    p = _write(tmp_path, text)
    (h,) = load_prices(p)
    assert h.n == 4 and h.findings == ()
    assert str(h.dates[1]) == "2021-03-01T10:30:00.000000000"
    check_accounts(p, [h])


def test_preamble_before_the_header_is_skipped_and_said(tmp_path, check_accounts):
    pre = "".join(f"Exported by the desk, sheet {i}\n" for i in range(3)) + "\n"
    p = _write(tmp_path, pre + "Date,Close\n" + "".join(f"{d},{x:.2f}\n" for d, x in zip(DAYS, _walk(20))))
    (h,) = load_prices(p)
    (f,) = h.findings
    assert (f.severity, f.kind, f.line) == ("info", "preamble", 1)
    assert f.message == "3 lines before the header (line 5) skipped, starting with 'Exported by the desk, sheet 0'"
    assert h.lines[0] == 6
    check_accounts(p, [h])


def test_more_than_twenty_preamble_lines_is_no_header(tmp_path):
    pre = "".join(f"note {i}\n" for i in range(21))
    p = _write(tmp_path, pre + "Date,Close\n2021-03-01,10\n")
    with pytest.raises(VolbenchError, match=r"line 1: no date column among headers 'note 0'"):
        load_prices(p)


def test_excel_serial_dates(tmp_path, check_accounts):
    # Reference: 44197 is 2021-01-01 in spreadsheet serial days (days since 1899-12-30; common practice)
    p = _write(tmp_path, "Date,Close\n44197,10\n44200,11\n44201.5,12\n")
    (h,) = load_prices(p, date_format="excel")
    assert [str(d)[:16] for d in h.dates] == ["2021-01-01T00:00", "2021-01-04T00:00", "2021-01-05T12:00"]
    with pytest.raises(VolbenchError, match=r"cannot read date '44197'; dates are not ISO .*--date-format excel"):
        load_prices(p)
    check_accounts(p, [h])


def test_mixed_offsets_daily_keep_local_dates_intraday_go_to_utc(tmp_path):
    daily = "Date,Close\n2021-03-26T00:00+01:00,10\n2021-03-29T00:00+02:00,11\n2021-03-30T00:00+02:00,12\n"
    (d,) = load_prices(_write(tmp_path, daily))
    assert [d.first_date, d.last_date] == ["2021-03-26", "2021-03-30"]
    (f,) = [f for f in d.findings if f.kind == "time_zone"]
    assert "each daily bar keeps the local date" in f.message and "+01:00, +02:00" in f.message
    intraday = ("Date,Close\n2021-10-31T02:30+02:00,10\n2021-10-31T02:30+01:00,11\n"
                "2021-10-31T03:30+01:00,12\n")
    (i,) = load_prices(_write(tmp_path, intraday, "i.csv"))
    # the same wall-clock 02:30 twice (clocks went back): in UTC 00:30 and 01:30, in order
    assert [str(x)[11:16] for x in i.dates] == ["00:30", "01:30", "02:30"]
    (f,) = [f for f in i.findings if f.kind == "time_zone"]
    assert "labelled in UTC" in f.message
    (one,) = load_prices(_write(tmp_path, "Date,Close\n2021-03-01T09:00+05:30,1\n2021-03-01T10:00+05:30,2\n", "o.csv"))
    assert str(one.dates[0])[11:16] == "09:00"
    assert "offset +05:30; bars are labelled in that local time" in one.findings[0].message


def test_cp1252_and_lone_carriage_returns(tmp_path, check_accounts):
    p = tmp_path / "old.csv"
    p.write_bytes("Date,Close (\u20ac)\r2021-03-01,10\r2021-03-02,11\r".encode("cp1252"))
    (h,) = load_prices(p)
    assert h.n == 2 and list(h.lines) == [2, 3]
    check_accounts(p, [h])


# ------------------------------------------------------------------------ opens and splits
def test_opens_at_the_previous_close_are_noted(tmp_path):
    c = _walk(40)
    o = np.concatenate([[c[0]], c[:-1]])
    text = "Date,Open,High,Low,Close\n" + "".join(
        f"{d},{a:.4f},{max(a, x) * 1.01:.4f},{min(a, x) * 0.99:.4f},{x:.4f}\n" for d, a, x in zip(DAYS, o, c))
    (h,) = load_prices(_write(tmp_path, text))
    (f,) = h.findings
    assert (f.severity, f.kind, f.column) == ("info", "stale_open", "open")
    assert f.message.startswith("the open equals the previous close on 39 of 39 session opens (100%)")


def _split_file(tmp_path, with_volume=True):
    o, h, lo, c = _ohlc(200, seed=11, start=120.0)
    v = np.full(200, 1000.0)
    for arr in (o, h, lo, c):
        arr[120:] /= 2  # a 2:1 split on bar 120 (line 122), not adjusted
    v[120:] *= 2
    cols = "Date,Open,High,Low,Close" + (",Volume" if with_volume else "")
    rows = "".join(f"{d},{a:.4f},{b:.4f},{x:.4f},{y:.4f}" + (f",{w:.0f}" if with_volume else "") + "\n"
                   for d, a, b, x, y, w in zip(DAYS, o, h, lo, c, v))
    return _write(tmp_path, cols + "\n" + rows), (o, h, lo, c, v)


def test_adjust_splits_back_adjusts_prices_and_volume(tmp_path, check_accounts):
    p, (_, _, _, c, _) = _split_file(tmp_path)
    (raw,) = load_prices(p)
    (f,) = [f for f in raw.findings if f.kind == "jump"]
    assert f.line == 122 and "unadjusted 2:1 split" in f.message and "volume changed 2.00x" in f.message
    (adj,) = load_prices(p, adjust_splits=True)
    (a,) = adj.adjustments
    assert a.as_dict() == {"date": DAYS[120], "ratio": 2.0, "line": 122, "label": "2:1 split"}
    np.testing.assert_allclose(adj.close[:120], np.round(c[:120], 4) / 2)
    np.testing.assert_array_equal(adj.close[120:], np.round(c[120:], 4))
    np.testing.assert_allclose(adj.volume, 2000.0)
    assert not [f for f in adj.findings if f.kind == "jump"]
    (note,) = [f for f in adj.findings if f.kind == "split_adjusted"]
    assert note.severity == "info" and note.line == 122
    assert adj.provenance()["adjustments"] == [a.as_dict()]
    # the split's return is gone: the vol is the generating 1 % a day, about 16 % a year
    assert point_estimate(adj, "close_to_close").vol < 0.25 < point_estimate(raw, "close_to_close").vol
    check_accounts(p, [adj])


def test_split_sample_gives_a_sane_vol_once_repaired(sample_dir):
    meta = json.loads((sample_dir / "PARAMETERS.json").read_text())
    true = next(s for s in meta["series"] if s["file"] == "quillon_textiles.csv")["annual_vol"]
    (h,) = load_prices(sample_dir / "quillon_textiles.csv", adjust_splits=True, exclude_flagged=True)
    assert [a.as_dict() for a in h.adjustments] == [{"date": "2022-06-15", "ratio": 2.0, "line": 903,
                                                      "label": "2:1 split"}]
    est = point_estimate(h, "close_to_close")
    # exact chi-square interval (METHODS.md, Confidence intervals) covers the generating vol
    assert est.ci_low < true < est.ci_high


def test_cli_adjust_splits_reports_adjustments_in_json(capsys, sample_dir):
    code = main(["estimate", str(sample_dir / "quillon_textiles.csv"), "--adjust-splits", "--exclude-flagged",
                 "--format", "json"])
    out = json.loads(capsys.readouterr().out)
    assert code == 0
    (s,) = out["series"]
    assert s["adjustments"] == [{"date": "2022-06-15", "ratio": 2.0, "line": 903, "label": "2:1 split"}]
    assert 0.2 < s["estimates"]["close_to_close"]["vol"] < 0.3
    code = main(["check", str(sample_dir / "kestrel_orchards.csv"), "--format", "json"])
    assert code == 0 and json.loads(capsys.readouterr().out)["series"][0]["adjustments"] == []


@pytest.mark.parametrize(("argv", "message"), [
    (["--decimal", ";"], r"argument --decimal: invalid choice"),
    (["--decimal", ",", "--thousands", ","], r"the decimal mark and the thousands separator cannot both be ','"),
    (["--delimiter", ";", "--decimal", ";"], r"argument --decimal: invalid choice"),
    (["--date-format", "dd/mm"], r"date format must be 'excel' or a strftime format"),
])
def test_cli_rejects_bad_import_options_in_one_line(capsys, sample_dir, argv, message):
    code = main(["check", str(sample_dir / "kestrel_orchards.csv"), *argv])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1
    assert pytest.importorskip("re").search(message, err)


def test_every_sample_file_accounts_for_every_row(sample_dir, check_accounts):
    for p in sorted(sample_dir.glob("*.csv")):
        for exclude in (False, True):
            check_accounts(p, load_prices(p, exclude_flagged=exclude, adjust_splits=exclude))


def test_cli_gives_one_short_line_and_exit_2_for_broken_files(tmp_path, capsys):
    c = _walk(300)
    rows = [f"{d},{x:.2f}" for d, x in zip(DAYS, c)]
    rows[4] = rows[4].replace(",", ',"', 1)
    stray = _write(tmp_path, "Date,Close\n" + "\n".join(rows) + "\n", "stray.csv")
    huge = _write(tmp_path, "Date,Close\n" + f'{DAYS[0]},"{"9" * 200_000}"\n', "huge.csv")
    for p in (stray, huge):
        code = main(["estimate", str(p)])
        err = capsys.readouterr().err
        assert code == 2 and len(err.strip().splitlines()) == 1 and len(err) < 400, err[:500]
