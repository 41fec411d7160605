"""Unification and matching (worker/saturation/unify.py)."""

from hypothesis import given, settings, strategies as st

from worker.syntax.terms import apply, rename, variables
from worker.saturation.unify import instantiate, match, matcher, unifier, unify

SYMS = [("a", 0), ("b", 0), ("f", 1), ("g", 2), ("h", 3)]


def terms(max_var=4):
    leaves = st.one_of(st.integers(0, max_var), st.sampled_from(["a", "b"]))

    def extend(children):
        return st.one_of(
            st.tuples(st.just("f"), children),
            st.tuples(st.just("g"), children, children),
            st.tuples(st.just("h"), children, children, children))
    return st.recursive(leaves, extend, max_leaves=8)


@given(terms(), terms())
@settings(max_examples=200, deadline=None)
def test_unifier_makes_terms_equal(s, t):
    u = unifier(s, t)
    if u is not None:
        assert apply(s, u) == apply(t, u)


@given(terms(), st.dictionaries(st.integers(0, 4), terms(), max_size=5))
@settings(max_examples=200, deadline=None)
def test_unifier_exists_for_a_term_and_its_instance(s, sub):
    # an instance of s whose variables are apart from s's (shifted by 10)
    t = instantiate(s, {v: rename(x, 10) for v, x in sub.items()})
    t = rename(t, 0)
    free = {v: v + 20 for v in variables(s) if v not in sub}
    t = instantiate(t, free)
    u = unifier(s, t)
    assert u is not None and apply(s, u) == apply(t, u)


def test_occurs_check():
    assert unifier(0, ("f", 0)) is None
    assert unifier(("g", 0, 1), ("g", 1, ("f", 0))) is None
    assert unifier(("g", 0, ("f", 0)), ("g", ("f", 1), 1)) is None


def test_unify_examples():
    u = unifier(("g", 0, ("f", "a")), ("g", ("f", 1), ("f", 1)))
    assert apply(0, u) == ("f", "a") and apply(1, u) == "a"
    assert unifier(("f", "a"), ("f", "b")) is None
    assert unifier(("f", 0), ("g", 0, 0)) is None
    assert unifier(0, 0) == {}


@given(terms(), terms())
@settings(max_examples=200, deadline=None)
def test_matcher_takes_pattern_onto_target(p, t):
    m = matcher(p, t)
    if m is not None:
        assert instantiate(p, m) == t


@given(terms(), st.dictionaries(st.integers(0, 4), terms(), max_size=5))
@settings(max_examples=300, deadline=None)
def test_matching_finds_every_instance(p, sub):
    t = instantiate(p, sub)
    m = matcher(p, t)
    assert m is not None and instantiate(p, m) == t


def test_matching_is_one_way():
    # variables of the target are constants for matching
    assert matcher(("f", "a"), ("f", 0)) is None
    assert matcher(("g", 0, 0), ("g", "a", "b")) is None
    assert matcher(("g", 0, 0), ("g", 1, 1)) == {0: 1}
    s = {}
    assert match(("g", 0, 1), ("g", 1, 0), s) and s == {0: 1, 1: 0}
    assert unify(("f", 0), ("f", 1), {})
