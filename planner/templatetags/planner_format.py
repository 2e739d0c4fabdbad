"""Template filters that show probabilities and expectations the way analysts read them."""

import math

from django import template

register = template.Library()

SUPERSCRIPT = str.maketrans("-0123456789", "⁻⁰¹²³⁴⁵⁶⁷⁸⁹")


@register.filter
def probability(value) -> str:
    """0.0231 -> '2.31 %', 3.2e-9 -> '3.2 × 10⁻⁹', 0 -> '0', None -> '—'."""
    if value is None:
        return "—"
    value = float(value)
    if value == 0:
        return "0"
    if value >= 1e-3:
        return f"{100 * value:.3g} %"
    mantissa, exponent = f"{value:.2e}".split("e")
    return f"{float(mantissa):g} × 10{str(int(exponent)).translate(SUPERSCRIPT)}"


@register.filter
def expectation(value, digits: int = 3) -> str:
    """An expected count; infinity reads as 'not certain to happen'."""
    if value is None:
        return "—"
    value = float(value)
    if math.isinf(value):
        return "not certain to happen"
    return f"{value:.{int(digits)}g}"
