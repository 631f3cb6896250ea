"""Worked examples from published digital-design texts.

Where the example was read (in course notes quoting the book) the source says
so; where it is recalled, it is marked "from memory".  Where the text gives
only the function, the minimum was worked by hand and the working is in the
comment.
"""

import sympy

from planner.logic import equivalent, minimise, prime_implicants, table_from_minterms

ABCD = ("a", "b", "c", "d")
WXYZ = ("w", "x", "y", "z")


def _cover_terms(cover):
    return set(cover.text().split(" | "))


def test_roth_cyclic_prime_implicant_chart():
    # C. H. Roth, "Fundamentals of Logic Design", ch. 6, Tables 6-4 and 6-5 (read in
    # the chapter's course slides): f(a,b,c) = sum m(0,1,2,5,6,7) has a cyclic chart
    # (no essential primes); its minimum solutions are a'b' + bc' + ac and
    # a'c' + b'c + ab, three primes each.
    t = table_from_minterms(("a", "b", "c"), [0, 1, 2, 5, 6, 7])
    assert len(prime_implicants(t)) == 6
    cover = minimise(t)
    assert cover.exact and (cover.terms, cover.literals) == (3, 6)
    assert _cover_terms(cover) in ({"~a & ~b", "b & ~c", "a & c"}, {"~a & ~c", "~b & c", "a & b"})


def test_roth_quine_mccluskey_example():
    # Roth, "Fundamentals of Logic Design", sec. 6.1 example function (read in the
    # course slides): f(a,b,c,d) = sum m(0,1,2,5,6,7,8,9,10,14).  Worked by hand:
    # primes b'c', b'd', cd', a'bd, a'bc, a'c'd; m9 makes b'c' essential and m14
    # makes cd' essential; m5 and m7 are then covered by a'bd (3 literals) or by
    # a'c'd + a'bc (6), so the minimum is b'c' + cd' + a'bd, 7 literals.
    t = table_from_minterms(ABCD, [0, 1, 2, 5, 6, 7, 8, 9, 10, 14])
    assert len(prime_implicants(t)) == 6
    cover = minimise(t)
    assert _cover_terms(cover) == {"~b & ~c", "c & ~d", "~a & b & d"} and cover.exact


def test_mano_four_variable_map():
    # M. M. Mano, "Digital Design", four-variable map example (from memory):
    # F(w,x,y,z) = sum(0,1,2,4,5,6,8,9,12,13,14) = y' + w'z' + xz'.
    t = table_from_minterms(WXYZ, [0, 1, 2, 4, 5, 6, 8, 9, 12, 13, 14])
    assert _cover_terms(minimise(t)) == {"~y", "~w & ~z", "x & ~z"}


def test_mano_sum_of_products_simplification():
    # Mano, "Digital Design", map example (from memory):
    # F = A'B'C' + B'CD' + A'BCD' + AB'C' simplifies to B'D' + B'C' + A'CD'.
    a, b, c, d = sympy.symbols("a b c d")
    f = ~a & ~b & ~c | ~b & c & ~d | ~a & b & c & ~d | a & ~b & ~c
    minterms = [i for i in range(16)
                if f.subs(dict(zip((a, b, c, d), [bool(i >> (3 - k) & 1) for k in range(4)])))]
    cover = minimise(table_from_minterms(ABCD, minterms))
    assert _cover_terms(cover) == {"~b & ~d", "~b & ~c", "~a & c & ~d"}
    assert equivalent(cover.to_expr(), f)


def test_mano_dont_care_example():
    # Mano, "Digital Design", don't-care map example (from memory):
    # F(w,x,y,z) = sum(1,3,7,11,15) with d = sum(0,2,5): F = yz + w'x' or yz + w'z,
    # both 4 literals (without the don't-cares m1 would need w'x'z: 5 literals).
    t = table_from_minterms(WXYZ, [1, 3, 7, 11, 15], dont_care=[0, 2, 5])
    cover = minimise(t)
    assert _cover_terms(cover) in ({"y & z", "~w & ~x"}, {"y & z", "~w & z"})
    no_dc = minimise(table_from_minterms(WXYZ, [1, 3, 7, 11, 15]))
    assert no_dc.literals == 5


def test_mano_problem_3_9():
    # Mano, "Digital Design", 3rd ed., problem 3-9 (functions as quoted on
    # gateoverflow.in/308273; minima worked by hand):
    # (a) sum(0,2,4,5,6,7,8,10,13,15): x'z' (m8, m10) and xz (m13) are essential;
    #     m4, m6 then take w'x or w'z': 6 literals, two minima.
    cover = minimise(table_from_minterms(WXYZ, [0, 2, 4, 5, 6, 7, 8, 10, 13, 15]))
    assert _cover_terms(cover) in ({"~x & ~z", "x & z", "~w & x"}, {"~x & ~z", "x & z", "~w & ~z"})
    # (b) sum(0,2,3,5,7,8,10,11,14,15): B'D' (m0), A'BD (m5), AC (m14) essential;
    #     m3 then takes B'C or CD: 9 literals.
    cover = minimise(table_from_minterms(ABCD, [0, 2, 3, 5, 7, 8, 10, 11, 14, 15]))
    assert (cover.terms, cover.literals) == (4, 9)
    assert {"~b & ~d", "~a & b & d", "a & c"} < _cover_terms(cover)
    # (c) sum(1,3,4,5,10,11,12,13,14,15): BC' (m4) and AC (m10) essential; m1, m3
    #     take A'B'D (3 literals; A'C'D + B'CD would cost 6): 7 literals, unique.
    cover = minimise(table_from_minterms(ABCD, [1, 3, 4, 5, 10, 11, 12, 13, 14, 15]))
    assert _cover_terms(cover) == {"b & ~c", "a & c", "~a & ~b & d"}


def test_quine_mccluskey_with_dont_cares_course_example():
    # ECE275 course slides "Quine McCluskey method / Petrick's method"
    # (vikasdhiman.info, 2021): f(x1..x4) = sum m(0,2,5,6,7,8,9,13) + D(1,12,15),
    # seven primes, minimum f = x1'x3x4' + x2'x3' + x2x4 (7 literals).
    names = ("x1", "x2", "x3", "x4")
    t = table_from_minterms(names, [0, 2, 5, 6, 7, 8, 9, 13], dont_care=[1, 12, 15])
    assert len(prime_implicants(t)) == 7
    cover = minimise(t)
    assert (cover.terms, cover.literals, cover.exact) == (3, 7, True)
    x1, x2, x3, x4 = sympy.symbols(names)
    slide = ~x1 & x3 & ~x4 | ~x2 & ~x3 | x2 & x4
    care = ~(sympy.Or(*[sympy.And(*[s if m >> (3 - k) & 1 else ~s for k, s in enumerate((x1, x2, x3, x4))])
                        for m in (1, 12, 15)]))
    assert equivalent(cover.to_expr(), slide, names, care=care)
