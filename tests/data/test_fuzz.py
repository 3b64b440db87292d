"""Property-based fuzzing of malformed price files (hypothesis).

Property: load_prices either returns valid histories (finite positive prices, strictly increasing
dates, one line number per row) or raises VolbenchError, never any other exception; every
estimator on a returned history either gives a finite vol or says why it is unavailable; and the
rows add up: data rows in the file = rows used + rows reported left out (docs/METHODS.md, Import).
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from volbench.data import load_prices
from volbench.data.reader import ALIASES
from volbench.errors import VolbenchError
from volbench.estimators import estimate_all

# moderate by default so the suite stays fast; VOLBENCH_FUZZ_EXAMPLES=2000 for a deeper hunt
FUZZ = settings(max_examples=int(os.environ.get("VOLBENCH_FUZZ_EXAMPLES", "60")), deadline=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])

HEADER_WORDS = [a for names in ALIASES.values() for a in names] + ["", "x", "Datum", "Kurs", "???"]
DELIMS = [",", ";", "\t", "|", " "]
CELLS = st.one_of(
    st.sampled_from(["", "0", "-1", "1e308", "nan", "inf", "-inf", "n/a", "1,5", "1.234,5", "1,234.5",
                     "2020-01-02", "2020-02-30", "02/01/2020", "9999-12-31", "1677-09-21", "0001-01-01",
                     "2020-01-02T00:00:00+01:00", "2020-01-02T00:00:00-05:00", "20200102", '"', '""', "\\"]),
    st.floats(allow_nan=True, allow_infinity=True).map(repr),
    st.integers(-10, 10**6).map(str),
    st.dates().map(lambda d: d.isoformat()),
    st.text(max_size=8),
)


def _check(data: bytes, accounts=None, **kwargs) -> None:
    with tempfile.TemporaryDirectory() as d:
        p = Path(d) / "fuzz.csv"
        p.write_bytes(data)
        try:
            histories = load_prices(p, **kwargs)
        except VolbenchError as exc:
            assert str(exc) and len(str(exc)) < 2000
            return
        if accounts is not None:
            accounts(p, histories)
    assert histories
    for h in histories:
        assert len(h.lines) == h.n == len(h.dates)
        assert np.all(np.isfinite(h.close)) and np.all(h.close > 0)
        for col in ("open", "high", "low"):
            arr = getattr(h, col)
            if arr is not None:
                assert np.all(np.isfinite(arr)) and np.all(arr > 0)
        assert np.all(h.dates[1:] > h.dates[:-1])  # compared as dates: int64 nanosecond gaps overflow past ~292 years
        for f in h.findings:
            assert f.severity in ("error", "warning", "info") and f.message
        rep = estimate_all(h, 2)
        for e in rep.estimates.values():
            assert np.isfinite(e.vol) and e.vol >= 0
            assert e.ci_low <= e.vol <= e.ci_high
        for reason in rep.unavailable.values():
            assert reason


@FUZZ
@given(st.binary(max_size=400))
def test_random_bytes(data):
    _check(data)


@FUZZ
@given(
    header=st.lists(st.sampled_from(HEADER_WORDS), min_size=1, max_size=7),
    rows=st.lists(st.lists(CELLS, max_size=8), max_size=12),
    delim=st.sampled_from(DELIMS),
    exclude=st.booleans(),
    adjusted=st.booleans(),
    date_format=st.sampled_from([None, None, "%d/%m/%Y", "%Y%m%d", "%Y-%m-%d %H:%M%z", "%Q", "%"]),
)
def test_random_headers_and_cells(check_accounts, header, rows, delim, exclude, adjusted, date_format):
    text = delim.join(header) + "\n" + "".join(delim.join(r) + "\n" for r in rows)
    _check(text.encode("utf-8", "surrogatepass"), check_accounts, exclude_flagged=exclude, use_adjusted=adjusted,
           date_format=date_format)


@st.composite
def plausible_files(draw):
    """Mostly valid OHLC files with random damage: truncated lines, bad cells, shuffled order."""
    n = draw(st.integers(1, 30))
    days = draw(st.lists(st.integers(0, 40), min_size=n, max_size=n))
    prices = draw(st.lists(st.floats(0.01, 1e6, allow_nan=False), min_size=n, max_size=n))
    delim = draw(st.sampled_from([",", ";", "\t"]))
    header = draw(st.permutations(["Date", "Open", "High", "Low", "Close", "Volume"]))
    if draw(st.booleans()):
        header = ["Symbol"] + header
    lines = [delim.join(header)]
    for i in range(n):
        p = prices[i]
        vals = {"Date": str(np.datetime64("2020-01-01") + sum(days[: i + 1])), "Open": p, "High": p * 1.02,
                "Low": p * 0.98, "Close": p * draw(st.floats(0.97, 1.03)), "Volume": 100,
                "Symbol": draw(st.sampled_from(["AX", "BY", ""]))}
        cells = [v if isinstance(v, str) else repr(v) for v in (vals[h] for h in header)]
        if draw(st.integers(0, 9)) == 0:
            cells[draw(st.integers(0, len(cells) - 1))] = draw(CELLS)
        line = delim.join(cells)
        if draw(st.integers(0, 9)) == 0:
            line = line[: draw(st.integers(0, len(line)))]  # truncated line
        lines.append(line)
    if draw(st.booleans()):
        lines = [lines[0]] + lines[:0:-1]  # newest first
    return "\n".join(lines) + draw(st.sampled_from(["", "\n", "\n\n"]))


@FUZZ
@given(text=plausible_files(), exclude=st.booleans(), date_format=st.sampled_from([None, None, "%Y-%m-%d"]))
def test_damaged_ohlc_files(check_accounts, text, exclude, date_format):
    _check(text.encode(), check_accounts, exclude_flagged=exclude, date_format=date_format)


@st.composite
def structured_files(draw):
    """Valid-looking files with random structure damage: quote marks, separators in numbers,
    rows with extra or missing fields, blank and delimiter-only lines, a preamble."""
    delim = draw(st.sampled_from([",", ";", "\t"]))
    comma_decimal = delim != "," and draw(st.booleans())
    n = draw(st.integers(1, 25))
    price = 100 * np.exp(np.cumsum(draw(st.lists(st.floats(-0.05, 0.05), min_size=n, max_size=n))))
    lines = [f"note {i}" for i in range(draw(st.integers(0, 3)))]
    header = ["Date", "Open", "High", "Low", "Close"]
    lines.append(delim.join(header))
    for i in range(n):
        p = float(price[i])
        cells = [str(np.datetime64("2020-01-01") + i), f"{p:.4f}", f"{p * 1.01:.4f}", f"{p * 0.99:.4f}", f"{p:.4f}"]
        if comma_decimal:
            cells = cells[:1] + [c.replace(".", ",") for c in cells[1:]]
        damage = draw(st.integers(0, 9))
        k = draw(st.integers(0, len(cells) - 1))
        if damage == 0:
            cells[k] = '"' + cells[k]  # a quote that may never close
        elif damage == 1:
            cells[k] = '"' + cells[k] + '"'
        elif damage == 2:
            cells.append(draw(st.sampled_from(["", "x", "1,000", '"']))) # one field too many
        elif damage == 3:
            cells = cells[:k]  # truncated
        elif damage == 4:
            cells[k] = cells[k].replace(".", delim, 1)  # a separator splits the number
        elif damage == 5:
            lines.append(draw(st.sampled_from(["", delim * 3, "  ", '""'])))
        lines.append(delim.join(cells))
    end = draw(st.sampled_from(["", "\n", "\r\n"]))
    return (("\r\n" if end == "\r\n" else "\n").join(lines) + end)


@FUZZ
@given(text=structured_files(), exclude=st.booleans(), adjust=st.booleans())
def test_rows_add_up_whatever_the_structure(check_accounts, text, exclude, adjust):
    _check(text.encode(), check_accounts, exclude_flagged=exclude, adjust_splits=adjust)
