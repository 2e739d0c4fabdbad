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


def _review_period(state, pmf, s, big_s, lead_time, unmet):
    """One period of an (s, S) review policy, read literally from the design notes (section 3).

    ``state`` = (net stock at the start of the period, before arrivals; orders due, due[k] arriving
    k periods from now). Yields (probability, next state, facts of the period).
    """
    stock, due = state[0], list(state[1])
    if lead_time:
        stock += due.pop(0)  # this period's delivery comes before its demand
        due.append(0)
    position = stock + sum(due)
    ordered = position <= s
    if ordered:
        if lead_time:
            due[lead_time - 1] += big_s - position  # arrives lead_time periods from now
        else:
            stock += big_s - position
    available = max(stock, 0)
    for demand, p in pmf.items():
        served = min(demand, available)
        left = stock - demand
        if unmet == "lost":
            left = max(left, 0)
        facts = {
            "stockout": demand > available,
            "served": served,
            "short": demand - served,
            "on_hand": max(left, 0),
            "backorders": max(-left, 0),
            "ordered": ordered,
            "end": left,
        }
        yield p, (left, tuple(due)), facts


def solve_exact(rows):
    """The solution of the square system whose augmented rows (coefficients, then the right-hand side)
    are ``rows``, by Gauss-Jordan elimination in exact rational arithmetic (rows are changed in place)."""
    size = len(rows)
    for col in range(size):
        pivot = next(r for r in range(col, size) if rows[r][col] != 0)
        rows[col], rows[pivot] = rows[pivot], rows[col]
        lead = rows[col][col]
        rows[col] = [v / lead for v in rows[col]]
        for r in range(size):
            if r != col and rows[r][col] != 0:
                factor = rows[r][col]
                rows[r] = [a - factor * b for a, b in zip(rows[r], rows[col], strict=True)]
    return [row[size] for row in rows]


def periodic_review_long_run(pmf, s, big_s, lead_time, unmet):
    """Exact long-run measures of an (s, S) policy: the chain's closed class solved in fractions.

    States are found by search from S on hand with nothing due; the closed class is the set
    reachable from a state that every state it reaches can reach back; pi P = pi with sum 1 is
    solved by Gauss-Jordan elimination in exact rational arithmetic.
    """
    start = (big_s, (0,) * lead_time)
    reach: dict = {}
    frontier, seen = [start], {start}
    while frontier:
        state = frontier.pop()
        reach[state] = [(p, nxt) for p, nxt, _ in _review_period(state, pmf, s, big_s, lead_time, unmet)]
        for _, nxt in reach[state]:
            if nxt not in seen:
                seen.add(nxt)
                frontier.append(nxt)

    def reachable(state):
        found, todo = {state}, [state]
        while todo:
            for _, nxt in reach[todo.pop()]:
                if nxt not in found:
                    found.add(nxt)
                    todo.append(nxt)
        return found

    closed = min((reachable(x) for x in reach), key=len)
    states = sorted(closed)
    where = {x: i for i, x in enumerate(states)}
    size = len(states)
    # Rows: balance equations sum_x pi(x) P(x, y) - pi(y) = 0 for y != last, and sum pi = 1.
    rows = [[Fraction(0)] * (size + 1) for _ in range(size)]
    for x in states:
        for p, nxt in reach[x]:
            rows[where[nxt]][where[x]] += p
    for y in range(size):
        rows[y][y] -= 1
    rows[-1] = [Fraction(1)] * size + [Fraction(1)]
    solution = solve_exact(rows)
    pi = {x: solution[where[x]] for x in states}
    mean_demand = sum((d * p for d, p in pmf.items()), Fraction(0))
    totals = {"stockout": Fraction(0), "served": Fraction(0), "short": Fraction(0), "on_hand": Fraction(0)}
    totals.update({"backorders": Fraction(0), "ordered": Fraction(0)})
    end_law: dict = {}
    for x, weight in pi.items():
        for p, _, facts in _review_period(x, pmf, s, big_s, lead_time, unmet):
            for name in totals:
                totals[name] += weight * p * facts[name]
            end_law[facts["end"]] = end_law.get(facts["end"], Fraction(0)) + weight * p
    totals["fill_rate"] = totals["served"] / mean_demand
    totals["end_law"] = end_law
    return totals


def periodic_review_risk(pmf, s, big_s, lead_time, start, horizon):
    """Exact P(a stock-out in periods 1..n), n = 0..horizon, from ``start`` on hand, nothing due."""
    states = {(start, (0,) * lead_time): Fraction(1)}
    risk, stopped = [Fraction(0)], Fraction(0)
    for _ in range(horizon):
        nxt: dict = {}
        for state, weight in states.items():
            for p, new, facts in _review_period(state, pmf, s, big_s, lead_time, "backorder"):
                if facts["stockout"]:
                    stopped += weight * p
                else:
                    nxt[new] = nxt.get(new, Fraction(0)) + weight * p
        states = nxt
        risk.append(stopped)
    return risk


def spares_pool_law(units, spares, failure_rate, repair_rate, crews, warm_failure_rate=0):
    """Long-run law of the number failed in a spares pool, in exact Fractions: the rates spelled out from
    the design notes (section 3) and the birth–death product form pi_k ∝ prod b_i / d_(i+1)
    (Kleinrock, Queueing Systems vol. 1, §3.1)."""
    from fractions import Fraction

    failure, repair, warm = Fraction(failure_rate), Fraction(repair_rate), Fraction(warm_failure_rate)
    size = units + spares + 1
    weights = [Fraction(1)]
    for failed in range(1, size):
        before = failed - 1
        up = failure * min(units, units + spares - before) + warm * max(0, spares - before)
        weights.append(weights[-1] * up / (repair * min(failed, crews)))
    total = sum(weights)
    return [weight / total for weight in weights]
