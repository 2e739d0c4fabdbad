"""Template filters over ``planner.formatting``: the one way numbers are shown on pages."""

from django import template

from planner import formatting

register = template.Library()


@register.filter
def probability(value) -> str:
    """0.0231 -> '2.31 %', 3.2e-9 -> '3.2 × 10⁻⁹'."""
    return formatting.probability(value)


@register.filter
def units(value, unit: str = "units") -> str:
    return formatting.units(value, unit)


@register.filter
def number(value) -> str:
    return formatting.number(value)


@register.filter
def periods(value, period: str = "day") -> str:
    """``{{ 56|periods:"day" }}`` -> '56 days (8 weeks)'."""
    return formatting.periods(value, period)


@register.filter
def period_name(period: str, count=1) -> str:
    return formatting.period_name(period, float(count))


@register.filter
def rate(value, period: str = "day") -> str:
    return formatting.rate(value, period)


@register.filter
def minutes(value) -> str:
    """A timedelta in whole minutes, rounded up: timedelta(minutes=15) -> '15 minutes'."""
    count = max(1, -(-int(value.total_seconds()) // 60))
    return f"{count} minute{'s' if count != 1 else ''}"
