"""Exact integer arithmetic on sums over equally spaced slots (roots of unity).

With n equally spaced slots, slot j at e^{iθ_0}·ω^j (ω = e^{2πi/n}), and
integer moment weights c_j (decimal weights times a power of ten), the
residual is e^{iθ_0}·P(ω) with P(x) = Σ_j c_j x^j.  Three facts are used:

* P(ω) = 0 exactly when the n-th cyclotomic polynomial Φ_n(x) divides P(x),
  since Φ_n is the minimal polynomial of ω over the rationals.  Reducing P
  modulo the monic integer polynomial Φ_n is exact, so "shown zero" is a
  proof, not a float.
* For n = p^k (p prime), Φ_n(x) = Φ_p(x^{n/p}) = Σ_{t<p} x^{t·n/p}, and a
  polynomial of degree below n is a multiple of it exactly when its
  coefficients repeat with period n/p.  So a zero arrangement exists exactly
  when every weight value occurs a multiple of p times.  For distinct weights
  (the integer turbine balancing problem) there is none.
* When n = m1·m2 with m1, m2 > 1 coprime, the slots j ↔ (j mod m1, j mod m2)
  form an m1 × m2 grid (Chinese remainder theorem), and weights
  c_j = a_{j mod m1} + b_{j mod m2} sum to zero, since each row and column of
  the grid is a regular polygon (its sum of roots of unity is zero).  Weights
  1..n are such a grid (a_x = x, b_y = m1·y + 1), so the integer turbine
  balancing problem has a zero arrangement for every n that is not a prime
  power; with the previous fact, exactly for those n.  This includes Fathi and
  Ginjupalli's Lemma 1 (n divisible by 2 but not 4, or by 3 but not 9) and
  adds n = 20, 28, 35, 36, 40, 44, 45, ...
* A nonzero element S of Z[ω] has a field norm N(S) = Π_{gcd(k,n)=1} σ_k(S),
  a nonzero integer, with σ_k(S) = Σ_j c_j ω^{kj}.  As j → kj permutes the
  slots, |σ_k(S)| is the residual of another arrangement, at most M, the
  largest residual of any arrangement.  Hence |S| ≥ M^{-(φ(n)/2 - 1)}, a
  proven lower bound whenever zero is impossible.

References
----------
[FathiGinjupalli1993] (Lemma 1, the integer turbine balancing problem);
[RootsOfUnity] (cyclotomic polynomials, vanishing sums, field norm).
"""

from __future__ import annotations

import math
from collections import Counter
from collections.abc import Sequence
from functools import lru_cache

import numpy as np


@lru_cache(maxsize=None)
def cyclotomic(n: int) -> tuple[int, ...]:
    """Coefficients of the n-th cyclotomic polynomial Φ_n, lowest degree first.

    Parameters
    ----------
    n : int
        Order [-], 1 or more.

    References
    ----------
    [RootsOfUnity]: x^n - 1 = Π_{d | n} Φ_d(x).
    """
    poly = [-1] + [0] * (n - 1) + [1]
    for d in range(1, n):
        if n % d == 0:
            poly = _divide_exact(poly, list(cyclotomic(d)))
    return tuple(poly)


def _divide_exact(num: list[int], den: list[int]) -> list[int]:
    """Quotient of integer polynomials (den monic, division without remainder)."""
    num = list(num)
    quotient = [0] * (len(num) - len(den) + 1)
    for shift in range(len(quotient) - 1, -1, -1):
        coef = num[shift + len(den) - 1]
        quotient[shift] = coef
        if coef:
            for i, d in enumerate(den):
                num[shift + i] -= coef * d
    if any(num):
        raise ArithmeticError("inexact polynomial division")
    return quotient


def reduce_mod_cyclotomic(coeffs: Sequence[int], n: int) -> list[int]:
    """P(x) = Σ coeffs[j]·x^j modulo Φ_n(x): φ(n) integer coefficients.

    Two integer sums over the n-th roots of unity are equal exactly when
    their reductions are equal.

    Parameters
    ----------
    coeffs : sequence of int
        Coefficients of P, lowest degree first [scaled g·mm].
    n : int
        Order of the roots of unity (number of equally spaced slots) [-].

    Returns
    -------
    list of int
        The remainder's φ(n) coefficients, lowest degree first.

    References
    ----------
    [RootsOfUnity].
    """
    phi = list(cyclotomic(n))
    deg = len(phi) - 1
    rem = [int(c) for c in coeffs]
    for top in range(len(rem) - 1, deg - 1, -1):
        coef = rem[top]
        if coef:
            for i in range(deg + 1):
                rem[top - deg + i] -= coef * phi[i]
    rem = rem[:deg] + [0] * max(0, deg - len(rem))
    return rem


def is_zero_sum(coeffs: Sequence[int], n: int) -> bool:
    """Whether Σ_j coeffs[j]·e^{2πij/n} is exactly zero (exact integer test).

    Parameters
    ----------
    coeffs : sequence of int
        Integer weight at each slot j = 0 .. n - 1 [scaled g·mm].
    n : int
        Number of equally spaced slots [-].

    References
    ----------
    [RootsOfUnity]: Φ_n is the minimal polynomial of e^{2πi/n}.
    """
    return not any(reduce_mod_cyclotomic(coeffs, n))


def prime_power(n: int) -> tuple[int, int] | None:
    """(p, k) with n = p^k for a prime p, or None.

    Parameters
    ----------
    n : int
        A whole number, 2 or more [-].

    Returns
    -------
    (int, int) or None
        The prime and its power; None when n has two prime factors or more.
    """
    for p in range(2, n + 1):
        if n % p == 0:
            k, rest = 0, n
            while rest % p == 0:
                rest //= p
                k += 1
            return (p, k) if rest == 1 else None
    return None


def zero_possible(values: Sequence[int], n: int) -> bool | None:
    """Whether some arrangement of ``values`` on n equally spaced slots sums to zero.

    Decided exactly for n a prime power p^k (every value occurs a multiple of
    p times); None (not decided here) for other n.

    Parameters
    ----------
    values : sequence of int
        The integer weights [scaled g·mm].
    n : int
        Number of equally spaced slots [-].

    Returns
    -------
    bool or None
        Whether a zero arrangement exists; None when n is not a prime power.

    References
    ----------
    [RootsOfUnity]: Φ_{p^k}(x) = Φ_p(x^{p^{k-1}}).
    """
    pk = prime_power(n)
    if pk is None:
        return None
    return all(count % pk[0] == 0 for count in Counter(values).values())


def periodic_zero(values: Sequence[int], n: int) -> list[int] | None:
    """Values by slot with period n/p for a prime p | n, whose sum is zero, or None.

    Possible when every value occurs a multiple of p times: each value fills
    whole regular p-gons.

    Parameters
    ----------
    values : sequence of int
        The integer weights [scaled g·mm].
    n : int
        Number of equally spaced slots [-].

    Returns
    -------
    list of int or None
        The value in each slot j = 0 .. n - 1, for the smallest such prime p;
        None when no prime dividing n divides every value's count.

    References
    ----------
    [RootsOfUnity]: the p-th roots of unity sum to zero.
    """
    counts = Counter(values)
    for p in _primes_dividing(n):
        if all(c % p == 0 for c in counts.values()):
            period = []
            for value in sorted(counts):
                period += [value] * (counts[value] // p)
            return [period[j % (n // p)] for j in range(n)]
    return None


def grid_zero(values: Sequence[int], n: int, node_budget: int = 5_000) -> list[int] | None:
    """Values by slot forming an m1 × m2 addition grid (sum zero), or None.

    Tries every split n = m1·m2 with m1, m2 > 1 coprime and looks for
    a (m1 values) and b (m2 values) with {a_x + b_y} equal to ``values`` as
    multisets; slot j then takes a_{j mod m1} + b_{j mod m2}.

    Parameters
    ----------
    values : sequence of int
        The integer weights [scaled g·mm].
    n : int
        Number of equally spaced slots [-].
    node_budget : int
        Most branch nodes per split (a deterministic work limit) [-].

    References
    ----------
    [RootsOfUnity]: Chinese remainder theorem; regular polygons sum to zero.
    """
    for m1 in range(2, n):
        m2 = n // m1
        if n % m1 or m1 > m2 or m2 < 2 or math.gcd(m1, m2) != 1:
            continue
        found = _sumset_split(sorted(values), m1, m2, node_budget)
        if found is not None:
            a, b = found
            return [a[j % m1] + b[j % m2] for j in range(n)]
    return None


def _sumset_split(values: list[int], m1: int, m2: int,
                  budget: int) -> tuple[list[int], list[int]] | None:
    """a (m1 values, a_0 = 0) and b (m2 values) with {a_x + b_y} = values, by branching.

    The smallest value not yet covered is a_0 + b_y or a_x + b_0 for a new y or
    x (any other sum a_x + b_y has a_x + b_0 and a_0 + b_y below it, both
    already covered, so it would be covered too): two branches per step.
    """
    nodes = [0]

    def grow(a: list[int], b: list[int], left: Counter) -> tuple[list[int], list[int]] | None:
        nodes[0] += 1
        if nodes[0] > budget:
            return None
        if not left:
            return (a, b) if len(a) == m1 and len(b) == m2 else None
        smallest = min(left)
        for new_a in (True, False):
            if (len(a) if new_a else len(b)) >= (m1 if new_a else m2):
                continue
            value = smallest - b[0] if new_a else smallest - a[0]
            sums = Counter(value + other for other in (b if new_a else a))
            if all(left[s] >= c for s, c in sums.items()):
                rest = left - sums
                found = grow(a + [value], b, rest) if new_a else grow(a, b + [value], rest)
                if found is not None:
                    return found
        return None

    low = values[0]
    return grow([0], [low], Counter(values) - Counter([low]))


def _primes_dividing(n: int) -> list[int]:
    return [p for p in range(2, n + 1) if n % p == 0 and prime_power(p) == (p, 1)]


def totient(n: int) -> int:
    """Euler's φ(n): the degree of Φ_n.

    Parameters
    ----------
    n : int
        A whole number, 1 or more [-].

    Returns
    -------
    int
        φ(n), the count of 1 ≤ k ≤ n with gcd(k, n) = 1.
    """
    return len(cyclotomic(n)) - 1


def norm_lower_bound(n: int, largest_gmm: float, scale: int) -> float:
    """Least |S| [g·mm] of a nonzero integer sum over n equally spaced slots.

    Parameters
    ----------
    n : int
        Number of equally spaced slots [-].
    largest_gmm : float
        An upper bound on the residual of any arrangement of the blades [g·mm].
    scale : int
        Decimal scale that makes the weights integers [-].

    References
    ----------
    [RootsOfUnity]: the field norm of a nonzero algebraic integer is a nonzero
    integer; its conjugates here are residuals of rearrangements.
    """
    others = max(0, totient(n) // 2 - 1)
    biggest = max(1.0, scale * largest_gmm)
    return float(np.exp(-others * np.log(biggest))) / scale
