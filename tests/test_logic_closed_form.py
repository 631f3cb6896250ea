"""Prime implicant and minimum-cover counts known in closed form, computed here independently."""

import itertools
from math import comb

import pytest

from planner.logic import Cube, minimise, minimise_complement, prime_implicants, table_from_minterms


def _names(n):
    return tuple(f"x{k}" for k in range(n))


def _positive_products(n, k):
    """The C(n, k) products of k positive literals, as cubes (input k is bit n-1-k)."""
    out = set()
    for chosen in itertools.combinations(range(n), k):
        mask = sum(1 << (n - 1 - i) for i in chosen)
        out.add(Cube(mask, mask))
    return out


@pytest.mark.parametrize("n", range(1, 9))
def test_parity_primes_and_cover(n):
    # Parity (odd number of ones): no two on-set assignments are adjacent, so every
    # one of the 2**(n-1) minterms is its own prime with n literals (common practice).
    table = table_from_minterms(_names(n), [i for i in range(1 << n) if bin(i).count("1") % 2])
    primes = prime_implicants(table)
    assert len(primes) == 2 ** (n - 1)
    assert {p.literals for p in primes} == {n}
    for cover in (minimise(table), minimise_complement(table)):
        assert (cover.terms, cover.literals, cover.exact) == (2 ** (n - 1), n * 2 ** (n - 1), True)


@pytest.mark.parametrize("n,k", [(3, 2), (4, 2), (5, 3), (6, 2), (6, 4), (7, 4), (8, 5)])
def test_threshold_primes_and_cover(n, k):
    # "At least k of n": the primes are the C(n, k) products of k positive literals;
    # each is essential (the assignment with exactly those k ones is in no other),
    # so the minimum cover is all of them (common practice).  The complement "at
    # most k-1" has the C(n, n-k+1) products of n-k+1 negative literals.
    table = table_from_minterms(_names(n), [i for i in range(1 << n) if bin(i).count("1") >= k])
    assert set(prime_implicants(table)) == _positive_products(n, k)
    cover = minimise(table)
    assert (cover.terms, cover.literals, cover.exact) == (comb(n, k), k * comb(n, k), True)
    neg = minimise_complement(table)
    expected = {Cube(c.mask, 0) for c in _positive_products(n, n - k + 1)}
    assert set(neg.cubes) == expected and neg.exact


@pytest.mark.parametrize("n", range(0, 7))
def test_constants(n):
    ones = table_from_minterms(_names(n), range(1 << n))
    assert prime_implicants(ones) == (Cube(0, 0),)
    assert minimise(ones).text() == "1" and minimise_complement(ones).text() == "0"
    zeros = table_from_minterms(_names(n), [])
    assert prime_implicants(zeros) == ()
    assert minimise(zeros).text() == "0" and minimise(zeros).exact


@pytest.mark.parametrize("n", range(1, 8))
def test_single_minterm_and_single_literal(n):
    m = (1 << n) - 2 if n > 1 else 0
    t = table_from_minterms(_names(n), [m])
    assert prime_implicants(t) == (Cube((1 << n) - 1, m),)
    top = 1 << (n - 1)  # x0 = 1: the upper half of the assignments
    half = table_from_minterms(_names(n), range(top, 1 << n))
    assert prime_implicants(half) == (Cube(top, top),)
    assert minimise(half).text() == "x0"


@pytest.mark.parametrize("n", [11, 12])
def test_heuristic_finds_the_unique_minimum_when_all_primes_are_essential(n):
    # Past the exact range the heuristic's cover is proven minimum only when every
    # cube is an essential prime; parity and threshold functions are such cases.
    parity = table_from_minterms(_names(n), [i for i in range(1 << n) if bin(i).count("1") % 2])
    cover = minimise(parity)
    assert (cover.terms, cover.literals, cover.exact) == (2 ** (n - 1), n * 2 ** (n - 1), True)
    k = n // 2
    threshold = table_from_minterms(_names(n), [i for i in range(1 << n) if bin(i).count("1") >= k])
    cover = minimise(threshold)
    assert set(cover.cubes) == _positive_products(n, k) and cover.exact
