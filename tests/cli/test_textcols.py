"""siderod.cli.textcols: columns of text for many rows, checked against Python's own formatting."""

from __future__ import annotations

from datetime import UTC, datetime

import numpy as np
import pytest

from siderod.cli import textcols as tc


def _lines(columns):
    n = columns[0].shape[0]
    return tc.join_rows([*columns, tc.constant(b"\n", n)]).decode().splitlines()


@pytest.mark.parametrize("decimals", [0, 1, 3, 5])
def test_decimal_column_matches_format_spec(decimals):
    # Reference: Python's float formatting (f"{x:.{d}f}"), with "-0" written as "0" as JSON readers
    # prefer. Exact binary ties may round differently (np.rint on the scaled value); random values
    # avoid them.
    rng = np.random.default_rng(1)
    values = np.concatenate([rng.uniform(-1000, 1000, 2000), rng.uniform(-1, 1, 200), [0.0, -0.0]])
    expected = [f"{v:.{decimals}f}" for v in values]
    expected = [e[1:] if e.startswith("-") and float(e) == 0 else e for e in expected]
    assert _lines([tc.decimal_column(values, decimals)]) == expected


def test_decimal_column_null_sign_pad_and_wrap():
    values = np.array([np.nan, 359.99996, 5.0, -5.0])
    assert _lines([tc.decimal_column(values, 3, wrap=360.0)]) == ["null", "0.000", "5.000", "-5.000"]
    assert _lines([tc.decimal_column(values[2:], 1, plus=True, pad=tc.SPACE)]) == ["+5.0", "-5.0"]


def test_iso_column_matches_datetime():
    # Reference: datetime.strftime, truncating to the millisecond.
    rng = np.random.default_rng(2)
    micros = rng.integers(-2_000_000_000_000_000, 4_000_000_000_000_000, 5000)
    expected = [datetime.fromtimestamp(u // 1000 / 1000, UTC).strftime("%Y-%m-%dT%H:%M:%S.%f")[:23] + "Z"
                for u in micros.tolist()]
    assert _lines([tc.iso_column(micros)]) == expected
    compact = _lines([tc.iso_column(micros[:50], millis=False, date_sep=b"", time_sep=b"")])
    assert compact == [datetime.fromtimestamp(u // 1_000_000, UTC).strftime("%Y%m%dT%H%M%SZ")
                       for u in micros[:50].tolist()]


def test_json_strings_match_json_dumps():
    import json

    texts = ["M31", 'quote " inside', "back\\slash", "é and ο Cet", 'x", "y', ""]
    assert tc.json_strings(texts) == [json.dumps(t).encode() for t in texts]


def test_decimal_column_of_nothing_but_nan_is_as_wide_as_zeros():
    # A block of rows where a column never applies keeps the width a column of zeros would have,
    # with the null text right-aligned, as in a column where some rows have values.
    for decimals, pad, null in ((3, tc.NUL, b"null"), (2, tc.SPACE, b""), (0, tc.SPACE, b"-")):
        nan = tc.decimal_column(np.full(5, np.nan), decimals, pad=pad, null=null)
        zero = tc.decimal_column(np.zeros(5), decimals, pad=pad, null=null)
        assert nan.shape == zero.shape
        assert all(bytes(row) == bytes([pad]) * (nan.shape[1] - len(null)) + null for row in nan)
