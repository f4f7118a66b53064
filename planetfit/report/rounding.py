"""Rounding of values with asymmetric uncertainties for tables.

Rule (common practice, no published source): the smaller of the two
uncertainties is rounded to two significant digits; the value and the
other uncertainty are rounded to the same decimal place, halves away from
zero on the decimal form of the number (0.12345 -> 0.1235).
"""

import decimal

import numpy as np


def _decimal(x):
    # The shortest decimal form of the float, so 0.12345 rounds as written.
    return decimal.Decimal(repr(float(x)))


def _at_place(x, place):
    """Round ``x`` to a multiple of 10**place, halves away from zero; return its text."""
    d = _decimal(x).quantize(decimal.Decimal(1).scaleb(place), rounding=decimal.ROUND_HALF_UP)
    if place >= 0:
        return f"{int(d):d}"
    return f"{d:f}"


def rounding_place(plus, minus):
    """Decimal place (power of ten) at which the smaller non-zero uncertainty has two significant digits.

    Returns None when both uncertainties are zero or not finite.
    """
    errs = [abs(e) for e in (plus, minus) if e is not None and np.isfinite(e) and e != 0]
    if not errs:
        return None
    d = _decimal(min(errs))
    exp = d.adjusted()  # floor(log10(err))
    two = d.quantize(decimal.Decimal(1).scaleb(exp - 1), rounding=decimal.ROUND_HALF_UP)
    if two.adjusted() > exp:  # 0.0996 -> 0.10: still two digits, one place up
        exp += 1
    return exp - 1


def round_uncertain(median, plus, minus):
    """Text of a value with asymmetric uncertainties under the rounding rule.

    Parameters
    ----------
    median, plus, minus : float
        Value and its upper and lower uncertainties (positive distances).

    Returns
    -------
    tuple of str
        ``(value, plus, minus)``; ``plus`` and ``minus`` are None when both
        uncertainties are zero (value then shown with six significant digits).
    """
    place = rounding_place(plus, minus)
    if place is None:
        return f"{float(median):.6g}", None, None
    return _at_place(median, place), _at_place(plus, place), _at_place(minus, place)


def stat_parts(s):
    """:func:`round_uncertain` of a :class:`~planetfit.report.summary_types.Stat` (None -> None)."""
    if s is None or s.median is None:
        return None
    return round_uncertain(s.median, s.plus, s.minus)


def value_text(s):
    """Plain-text value of a STAT: ``1.23 +0.05 -0.04``, ``1.23 ± 0.05`` or ``n/a``."""
    parts = stat_parts(s)
    if parts is None:
        return "n/a"
    v, up, lo = parts
    if up is None:
        return v
    return f"{v} ± {up}" if up == lo else f"{v} +{up} -{lo}"


def value_tex(s):
    """LaTeX value of a STAT: ``$1.23^{+0.05}_{-0.04}$``, ``$1.23 \\pm 0.05$`` or ``--``."""
    parts = stat_parts(s)
    if parts is None:
        return "--"
    v, up, lo = parts
    if up is None:
        return f"${v}$"
    return f"${v} \\pm {up}$" if up == lo else f"${v}^{{+{up}}}_{{-{lo}}}$"


def number_text(x):
    """Shortest plain decimal form of a number (no exponent): 2460003.35, 0.01, 5."""
    return np.format_float_positional(float(x), trim="-")
