"""Each inference and simplification rule on hand-made examples, and the
term indexes against a linear scan."""

import pytest
from hypothesis import given, settings, strategies as st

from worker.saturation import rules as R
from worker.saturation.clause import Clause, normalize
from worker.saturation.index import FingerprintIndex
from worker.saturation.unify import match, unifier, unify
from worker.syntax.terms import apply

from .test_unify import terms

E = "="


def C(*lits):
    l, n = normalize(lits)
    return Clause(0, l, n, "input")


def concl(lits):
    return set(normalize(lits)[0])


def test_resolution():
    a = C((True, ("p", 0)), (True, ("q", 0)))
    b = C((False, ("p", "a")),)
    s = {}
    assert unify(("p", 5), ("p", "a"), s)
    lits, info = R.resolution(a, 0, 5, b, 0, 0, s)
    assert concl(lits) == {(True, ("q", "a"))}
    assert info["lits"] == [0, 0] and info["offsets"] == [5, 0] and info["sigma"] == {5: "a"}


def test_factoring():
    a = C((True, ("p", 0, "b")), (True, ("p", "a", 1)), (False, ("r", 0, 1)))
    s = unifier(("p", 0, "b"), ("p", "a", 1))
    lits, info = R.factoring(a, 0, 1, s)
    assert concl(lits) == {(True, ("p", "a", "b")), (False, ("r", "a", "b"))}


def test_equality_resolution():
    a = C((False, (E, ("f", 0), ("f", "a"))), (True, ("q", 0)))
    s = unifier(("f", 0), ("f", "a"))
    lits, _ = R.equality_resolution(a, 0, s)
    assert concl(lits) == {(True, ("q", "a"))}


def test_equality_factoring():
    # f(x) = a or f(b) = c  gives  a != c or f(b) = c
    a = C((True, (E, ("f", 0), "a")), (True, (E, ("f", "b"), "c")))
    s = unifier(("f", 0), ("f", "b"))
    lits, info = R.equality_factoring(a, 0, 0, 1, 0, s)
    assert concl(lits) == {(False, (E, "a", "c")), (True, (E, ("f", "b"), "c"))}
    assert info["sides"] == [0, 0]


def test_superposition():
    # f(x) = x  into  p(g(f(a)))  at position [1, 1]
    a = C((True, (E, ("f", 0), 0)),)
    b = C((True, ("p", ("g", ("f", "a")))), (True, ("q", 0)))
    s = {}
    assert unify(("f", 0 + 3), ("f", "a"), s)
    lits, info = R.superposition(a, 0, 0, 3, b, 0, (1, 1), 0, s)
    assert concl(lits) == {(True, ("p", ("g", "a"))), (True, ("q", 0))}
    assert info["position"] == [1, 1] and info["side"] == 0


def test_superposition_left_into_equation():
    a = C((True, (E, ("m", "e", 0), 0)),)
    b = C((False, (E, ("m", "e", "c"), "c")),)
    s = {}
    assert unify(("m", "e", 1), ("m", "e", "c"), s)
    lits, _ = R.superposition(a, 0, 0, 1, b, 0, (1,), 0, s)
    assert concl(lits) == {(False, (E, "c", "c"))}


def test_demodulation_one_position():
    a = C((True, (E, ("m", "e", 0), 0)),)
    b = C((True, ("p", ("m", "e", ("m", "e", "c")))),)
    m = {}
    assert match(("m", "e", 0), ("m", "e", "c"), m)
    lits, info = R.demodulation(a, 0, b, 0, (1, 2), m)
    assert concl(lits) == {(True, ("p", ("m", "e", "c")))}
    assert info["offsets"] == [0, 0] and info["sigma"] == {0: "c"}


def test_subsumption():
    c = (( True, ("p", 0)),)
    d = ((True, ("p", "a")), (True, ("q", "b")))
    assert R.subsumes(c, d) == {0: "a"}
    # a clause does not subsume its own factor (multiset subsumption)
    assert R.subsumes(((True, ("p", 0)), (True, ("p", 1))), ((True, ("p", "a")),)) is None
    # mirrored equations
    assert R.subsumes(((True, (E, 0, "a")),), ((True, (E, "b", ("f", "b"))), (True, (E, "a", "c")))) == {0: "c"}
    assert R.subsumes(((True, ("p", 0, 0)),), ((True, ("p", "a", "b")),)) is None


def test_subsumption_resolution():
    c = ((True, ("p", 0)), (True, ("q", 0)))
    d = ((False, ("p", "a")), (True, ("q", "a")), (True, ("r", "b")))
    i, j, m = R.find_subsumption_resolution(c, d)
    assert (i, j) == (0, 0) and m == {0: "a"}
    cc, dd = C(*c), C(*d)
    lits, info = R.subsumption_resolution(cc, i, dd, j, m)
    assert concl(lits) == {(True, ("q", "a")), (True, ("r", "b"))}
    assert R.find_subsumption_resolution(c, ((False, ("p", "a")), (True, ("q", "b")))) is None


def test_tautologies():
    assert R.is_tautology(((True, ("p", 0)), (False, ("p", 0))))
    assert R.is_tautology(((True, (E, ("f", 0), ("f", 0))),))
    assert R.is_tautology(((True, (E, "a", "b")), (False, (E, "b", "a"))))
    assert not R.is_tautology(((True, ("p", 0)), (False, ("p", 1))))
    assert not R.is_tautology(((True, (E, "a", "b")), (False, (E, "b", "a"))), eq_builtin=False)


def test_normalize_merges_duplicates_and_renames():
    lits, n = normalize(((True, ("p", 7)), (True, ("p", 7)), (True, (E, 3, 7)), (True, (E, 7, 3))))
    assert lits == ((True, ("p", 0)), (True, (E, 1, 0))) and n == 2


class _Alive:
    alive = True


@given(st.lists(terms(), min_size=1, max_size=25), terms())
@settings(max_examples=150, deadline=None)
@pytest.mark.parametrize("positions", ["default", "shallow", "deep"])
def test_fingerprint_index_misses_nothing(positions, entries, q):
    from worker.saturation.index import DEEP, POSITIONS, SHALLOW
    ix = FingerprintIndex({"default": POSITIONS, "shallow": SHALLOW, "deep": DEEP}[positions])
    holder = _Alive()
    for k, t in enumerate(entries):
        ix.insert(t, (holder, k))
    shifted = apply(q, {v: v + 10 for v in range(5)})       # apart from the entries
    uni = {v[1] for _t, v in ix.unifiable(shifted)}
    gen = {v[1] for _t, v in ix.generalizations(q)}
    ins = {v[1] for _t, v in ix.instances(q)}
    for k, t in enumerate(entries):
        if unifier(t, shifted) is not None:
            assert k in uni
        m = {}
        if match(t, q, m):
            assert k in gen
        m = {}
        if match(q, t, m):
            assert k in ins


@given(terms())
@settings(max_examples=200, deadline=None)
def test_unrolled_fingerprint_agrees(t):
    from worker.saturation.index import (DEEP, SHALLOW, fingerprint, fingerprint4,
                                         fingerprint8, fingerprint_deep)
    assert fingerprint8(t) == fingerprint(t)
    assert fingerprint_deep(t) == fingerprint(t, DEEP)
    assert fingerprint4(t) == fingerprint(t, SHALLOW)
