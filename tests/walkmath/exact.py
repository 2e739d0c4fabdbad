"""Slow, obviously-correct reference computations in exact rational arithmetic.

Each function walks the state distribution period by period with
``fractions.Fraction`` and the rules spelled out literally (the project's
design notes, section 3), so it shares no code with walkmath.
"""

from __future__ import annotations

from fractions import Fraction


def banded_outlook(pmf, start, low, high, below, above, horizon):
    """Exact stockout[n], overflow[n], alive[n], lost[n], spilled[n], level law at the horizon.

    ``pmf`` is a dict step -> Fraction, or a list of such dicts used cyclically.
    stockout/overflow are first-passage: a path carries flags of what has
    happened; the flags never reset.
    """
    laws = pmf if isinstance(pmf, list) else [pmf]
    # state: (level, had_stockout, had_overflow) -> probability; stopped paths leave the dict
    states = {(start, False, False): Fraction(1)}
    stockout, overflow, alive, lost, spilled = [Fraction(0)], [Fraction(0)], [Fraction(1)], [Fraction(0)], [Fraction(0)]
    stopped_stockout = Fraction(0)
    stopped_overflow = Fraction(0)
    for period in range(1, horizon + 1):
        law = laws[(period - 1) % len(laws)]
        nxt: dict = {}
        lost_now = spilled_now = Fraction(0)
        for (level, had_s, had_o), weight in states.items():
            for step, p in law.items():
                w = weight * p
                if w == 0:
                    continue
                new = level + step
                s_flag, o_flag = had_s, had_o
                if new < low:
                    s_flag = True
                    if below == "stop":
                        stopped_stockout += w
                        stopped_overflow += w if had_o else 0  # it overflowed earlier
                        continue
                    if below == "lost":
                        lost_now += w * (low - new)
                        new = low
                if high is not None and new > high:
                    o_flag = True
                    if above == "stop":
                        stopped_overflow += w
                        stopped_stockout += w if had_s else 0  # it stocked out earlier
                        continue
                    spilled_now += w * (new - high)
                    new = high
                key = (new, s_flag, o_flag)
                nxt[key] = nxt.get(key, Fraction(0)) + w
        states = nxt
        live_s = sum((w for (_, s, _), w in states.items() if s), Fraction(0))
        live_o = sum((w for (_, _, o), w in states.items() if o), Fraction(0))
        stockout.append(stopped_stockout + live_s)
        overflow.append(stopped_overflow + live_o)
        alive.append(sum(states.values(), Fraction(0)))
        lost.append(lost_now)
        spilled.append(spilled_now)
    final: dict = {}
    for (level, _, _), w in states.items():
        final[level] = final.get(level, Fraction(0)) + w
    return {
        "stockout": stockout,
        "overflow": overflow,
        "alive": alive,
        "lost": lost,
        "spilled": spilled,
        "final": final,
    }


def mp_generator(chain):
    """The birth-death generator matrix of ``chain`` in mpmath numbers (for mpmath.expm references)."""
    import mpmath

    size = chain.top + 1
    generator = mpmath.zeros(size, size)
    for k in range(size):
        birth, death = mpmath.mpf(float(chain.birth[k])), mpmath.mpf(float(chain.death[k]))
        if k < size - 1:
            generator[k, k + 1] = birth
        if k > 0:
            generator[k, k - 1] = death
        generator[k, k] = -(birth + death)
    return generator
