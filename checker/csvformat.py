"""Writing numeric tables as CSV at a fixed number of decimals, vectorized.

Each numeric column is rounded to its decimals and turned into digits with integer
arithmetic on whole arrays; the cells are laid out in a byte matrix padded with NUL bytes,
which are then removed in one pass. Trailing zeros of the fraction are dropped, so a value
that rounds to zero is written ``0`` (never ``-0`` or ``1.95947e-204``) and an integer value
without a point.
"""

from __future__ import annotations

import numpy as np

PAD = 0
_ZERO, _MINUS, _POINT, _COMMA, _NEWLINE = 48, 45, 46, 44, 10
_LIMIT = 9.0e15  # |value| * 10^decimals must stay exact in float64 and fit int64


def _number_bytes(values: np.ndarray, decimals: int) -> np.ndarray:
    """(width, n) uint8 matrix of the cells of one column (one cell per column of the
    matrix), NUL-padded."""
    scaled = np.rint(np.asarray(values, dtype=float) * 10.0**decimals)
    if not np.all(np.isfinite(scaled)) or np.any(np.abs(scaled) > _LIMIT):
        # rare: huge or non-finite values keep Python's formatting, cell by cell
        return _text_bytes([_plain(v, decimals) for v in np.asarray(values, dtype=float)])
    rest = np.abs(scaled).astype(np.int64)
    if len(rest) and rest.max() < 2**31:  # 32-bit division is faster
        rest = rest.astype(np.int32)
    negative = scaled < 0
    digits = max(len(str(int(rest.max()))) if len(rest) else 1, decimals + 1)
    width = digits + 2  # sign and point
    out = np.zeros((width, len(rest)), dtype=np.uint8)
    # fraction digits from the right; a zero is written only left of a nonzero digit
    significant = np.zeros(len(rest), dtype=bool)
    for j in range(decimals):
        rest, digit = np.divmod(rest, 10)
        significant |= digit != 0
        out[width - 1 - j] = (digit + _ZERO) * significant
    point = width - 1 - decimals
    if decimals:
        out[point] = _POINT * significant
    # integer digits: the units always, then while any remain; the sign just before
    sign_row = np.full(len(rest), point - 1, dtype=np.intp)
    for j in range(digits - decimals):
        row = point - 1 - j
        if j == 0:
            out[row] = rest % 10 + _ZERO
        else:
            more = rest > 0
            out[row] = (rest % 10 + _ZERO) * more
            sign_row -= more
        rest //= 10
    cols = np.flatnonzero(negative)
    out[sign_row[cols] - 1, cols] = _MINUS
    return out


def _plain(value: float, decimals: int) -> str:
    text = f"{value:.{decimals}f}" if np.isfinite(value) else str(value)
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _text_bytes(cells) -> np.ndarray:
    """(width, n) uint8 matrix of text cells (str, or bytes in an ``S`` array), NUL-padded."""
    encoded = np.asarray(cells)
    if encoded.dtype.kind != "S":
        encoded = np.asarray([str(c).encode("utf-8") for c in cells], dtype=bytes)
    if encoded.dtype.itemsize == 0 or len(encoded) == 0:
        return np.zeros((1, len(encoded)), dtype=np.uint8)
    return encoded.view(np.uint8).reshape(len(encoded), encoded.dtype.itemsize).T


def fixed_csv(header: list[str], columns: list[tuple[np.ndarray, int | None]]) -> bytes:
    r"""CSV bytes of a header and columns, each number at its own fixed decimals.

    Numbers are rounded to their column's decimals (``numpy.rint``: halves to even),
    trailing zeros of the fraction are dropped and a value that rounds to zero is ``0``.
    Values too large for exact integer arithmetic (above about 9e15 once scaled) and
    non-finite values are formatted one by one with Python's formatting instead.

    Parameters
    ----------
    header : list of str
        Column names, written comma-separated as the first line (not quoted).
    columns : list of (numpy.ndarray, int or None)
        One pair per column, all of the same length n: ``(values, decimals)`` for numbers, or
        ``(strings, None)`` for text (str, or bytes in an ``S`` array; no commas or newlines,
        nothing is quoted).

    Returns
    -------
    bytes
        UTF-8 CSV: the header line and n data lines, each ending in ``\n``.

    Examples
    --------
    >>> import numpy as np
    >>> from checker.csvformat import fixed_csv
    >>> fixed_csv(["t_s", "gz"], [(np.array([0.0, 0.005]), 3), (np.array([1.0, -2e-9]), 4)])
    b't_s,gz\n0,1\n0.005,0\n'
    """
    parts = []
    n = len(columns[0][0]) if columns else 0
    for k, (values, decimals) in enumerate(columns):
        parts.append(_text_bytes(values) if decimals is None
                     else _number_bytes(values, decimals))
        parts.append(np.full((1, n), _NEWLINE if k == len(columns) - 1 else _COMMA,
                             dtype=np.uint8))
    table = np.concatenate(parts, axis=0).T.ravel() if n else np.zeros(0, dtype=np.uint8)
    body = table[table != PAD].tobytes()
    return (",".join(header) + "\n").encode("utf-8") + body
