"""Properties of the Knuth-Bendix ordering (Knuth and Bendix 1970): the
textbook properties of a simplification ordering, checked by hypothesis."""

from hypothesis import assume, given, settings, strategies as st

from worker.saturation.kbo import KBO, make_kbo
from worker.saturation.unify import instantiate
from worker.syntax.terms import is_ground, subterms

from .test_unify import terms

KBOS = [KBO({}, {"a": 0, "b": 1, "f": 2, "g": 3, "h": 4}),
        KBO({"f": 0}, {"a": 0, "b": 1, "g": 3, "h": 4, "f": 9}),    # f weight 0, greatest
        KBO({"a": 3, "g": 2}, {"h": 0, "g": 1, "f": 2, "b": 3, "a": 4})]

ground = st.recursive(st.sampled_from(["a", "b"]),
                      lambda c: st.one_of(st.tuples(st.just("f"), c),
                                          st.tuples(st.just("g"), c, c),
                                          st.tuples(st.just("h"), c, c, c)),
                      max_leaves=8)


@given(st.sampled_from(KBOS), terms())
@settings(max_examples=200, deadline=None)
def test_irreflexive(k, s):
    assert not k.gt(s, s)


@given(st.sampled_from(KBOS), terms(), terms())
@settings(max_examples=150, deadline=None)
def test_asymmetric(k, s, t):
    assert not (k.gt(s, t) and k.gt(t, s))


@given(st.sampled_from(KBOS), terms(), terms(), terms())
@settings(max_examples=200, deadline=None)
def test_transitive(k, s, t, u):
    if k.gt(s, t) and k.gt(t, u):
        assert k.gt(s, u)


@given(st.sampled_from(KBOS), ground, ground)
@settings(max_examples=150, deadline=None)
def test_total_on_ground_terms(k, s, t):
    assert s == t or k.gt(s, t) or k.gt(t, s)


@given(st.sampled_from(KBOS), terms(), terms(),
       st.dictionaries(st.integers(0, 4), terms(), max_size=5))
@settings(max_examples=200, deadline=None)
def test_stable_under_substitution(k, s, t, sub):
    if k.gt(s, t):
        assert k.gt(instantiate(s, sub), instantiate(t, sub))


@given(st.sampled_from(KBOS), terms())
@settings(max_examples=150, deadline=None)
def test_subterm_property(k, s):
    for pos, u in subterms(s):
        if pos:
            assert k.gt(s, u)


@given(st.sampled_from(KBOS), terms(), terms())
@settings(max_examples=200, deadline=None)
def test_monotone(k, s, t):
    if k.gt(s, t):
        assert k.gt(("g", s, "a"), ("g", t, "a"))
        assert k.gt(("f", s), ("f", t))


def test_examples_and_heuristic():
    k = make_kbo([((True, ("=", ("*", ("*", 0, 1), 2), ("*", 0, ("*", 1, 2)))),),
                  ((True, ("=", ("i", 0), 0)),)], {"*": 2, "i": 1, "e": 0})
    assert k.gt(("*", ("*", 0, 1), 2), ("*", 0, ("*", 1, 2)))   # associativity left to right
    assert k.gt(("*", "e", 0), 0)
    assert not k.gt(("*", 0, 1), ("*", 1, 0))                   # commutativity unorientable
    assert not k.gt(("*", 1, 0), ("*", 0, 1))
    z = make_kbo([((True, ("=", ("i", ("*", 0, 1)), ("*", ("i", 1), ("i", 0)))),)],
                 {"*": 2, "i": 1}, unary_zero=True)
    assert z.gt(("i", ("*", 0, 1)), ("*", ("i", 1), ("i", 0)))
    assert is_ground("a")


def test_literal_ordering():
    k = KBO({}, {"a": 0, "b": 1, "p": 5})
    pos, neg = (True, ("p", "a")), (False, ("p", "a"))
    assert k.literal_gt(neg, pos)                                   # not A > A
    assert k.literal_gt((True, ("p", "b")), pos)
    assert k.maximal_literals([pos, neg, (True, ("=", "a", "b"))]) == [1]


def test_precedence_and_weights_can_be_overridden():
    lits = [((True, ("=", ("f", 0), ("g", 0))),)]
    ar = {"f": 1, "g": 1}
    assert make_kbo(lits, ar, symbol_order=("f", "g")).gt(("g", 0), ("f", 0))
    assert make_kbo(lits, ar, symbol_order=("g", "f")).gt(("f", 0), ("g", 0))
    k = make_kbo(lits, ar, symbol_order=("g", "f"), symbol_weights=(("g", 3), ("f", 0)))
    assert k.gt(("g", 0), ("f", 0))          # heavier wins; the weight 0 is ignored
    assert k.weights == {"g": 3}


PERMUTATIVE_PAIRS = [(("g", 0, 1), ("g", 1, 0)),                       # commutativity
                     (("g", 0, ("g", 1, 2)), ("g", 1, ("g", 0, 2))),     # left commutativity
                     (("f", ("h", 0, 1, 2)), ("f", ("h", 2, 0, 1)))]


@given(st.sampled_from(KBOS), st.sampled_from(PERMUTATIVE_PAIRS),
       st.dictionaries(st.integers(0, 2), terms(), min_size=3, max_size=3))
@settings(max_examples=300, deadline=None)
def test_balanced_comparison_agrees_with_the_full_one(k, pair, sub):
    """Instances of the two sides of a permutative equation: the shortcut that
    skips the weight pass decides exactly as the full comparison."""
    from worker.saturation.loop import permutative
    l, r = pair
    assert permutative(l, r)
    s, t = instantiate(l, sub), instantiate(r, sub)
    assert k.gt_balanced(s, t) == k.gt(s, t)
    assert k.gt_balanced(t, s) == k.gt(t, s)


def test_permutative_needs_the_same_symbols_and_variables():
    from worker.saturation.loop import permutative
    assert permutative(("g", 0, 1), ("g", 1, 0))
    assert not permutative(("g", 0, 1), ("g", 0, 0))            # x*y vs x*x
    assert not permutative(("g", 0, ("f", 1)), ("g", 1, 0))     # a symbol lost
    assert permutative(("f", ("g", 0, 1)), ("g", ("f", 0), 1))  # same symbols, heads differ
