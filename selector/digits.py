"""Numbers shown beside their limit with enough digits never to read as a contradiction.

A nearest mix that "falls to pH 7.350 (needs pH ≥ 7.350)" reads as a contradiction: the
two numbers differ beyond the third decimal.  :func:`apart` and :func:`apart_g` add
digits until the two texts differ (the shown precision otherwise stays as before).
"""

from __future__ import annotations

__all__ = ["apart", "apart_g"]

#: Most decimals / significant figures added (beyond them the numbers are equal for any reader).
MOST_DIGITS = 9


def apart(value: float, limit: float, decimals: int = 3) -> tuple[str, str]:
    """``value`` and ``limit`` fixed-point, with the fewest decimals ≥ ``decimals`` that differ.

    Examples
    --------
    >>> apart(7.3504, 7.35)
    ('7.3504', '7.3500')
    >>> apart(7.33, 7.35)
    ('7.330', '7.350')
    """
    return _apart(value, limit, decimals, "f")


def apart_g(value: float, limit: float, figures: int = 3) -> tuple[str, str]:
    """``value`` and ``limit`` with the fewest significant figures ≥ ``figures`` that differ.

    Examples
    --------
    >>> apart_g(19.996, 20.0)
    ('19.996', '20')
    >>> apart_g(13.3, 20.0)
    ('13.3', '20')
    """
    return _apart(value, limit, figures, "g")


def _apart(value: float, limit: float, digits: int, kind: str) -> tuple[str, str]:
    """The two numbers in format ``kind`` (``f``: decimals, ``g``: significant figures) with
    the fewest digits ≥ ``digits`` (at most :data:`MOST_DIGITS`) that make them differ."""
    for n in range(digits, max(digits, MOST_DIGITS) + 1):
        a, b = f"{value:.{n}{kind}}", f"{limit:.{n}{kind}}"
        if a != b:
            break
    return a, b


def uncertainty_digits(uncertainty: float, decimals: int = 3) -> str:
    """A standard uncertainty fixed-point with the fewest decimals ≥ ``decimals`` that show a non-zero digit.

    Printed beside a value at ``decimals`` decimals, a ± smaller than the last shown digit would
    read "± 0.00", as if the value were exact; it gets the decimals that show it instead (an
    exact zero stays at ``decimals``).

    Examples
    --------
    >>> uncertainty_digits(0.000213, 2)
    '0.0002'
    >>> uncertainty_digits(0.021, 2)
    '0.02'
    >>> uncertainty_digits(0.0, 2)
    '0.00'
    """
    text = f"{uncertainty:.{decimals}f}"
    for d in range(decimals + 1, MOST_DIGITS + 1):
        if uncertainty == 0 or text.strip("0.-") != "":
            break
        text = f"{uncertainty:.{d}f}"
    return text
