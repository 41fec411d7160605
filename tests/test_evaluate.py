"""The model evaluator: user formulas as written, evaluated in hand-made
models (built here from permutations, not by the model search)."""

import itertools

import pytest

from worker.certify.evaluate import check_model
from worker.syntax.formulas import (And, Atom, Iff, Implies, Not, Or, Quant,
                                    Problem, Statement)

from worker.syntax import parse_text

GROUP = """
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit:  forall x. e * x = x and x * e = x
axiom inv:   forall x. i(x) * x = e and x * i(x) = e
conjecture comm: forall x y. x * y = y * x
"""


def s3_model():
    """The symmetric group on 3 letters (standard algebra: the smallest
    non-abelian group), elements numbered by the order of itertools."""
    perms = list(itertools.permutations(range(3)))
    num = {p: i for i, p in enumerate(perms)}
    mul = lambda p, q: tuple(p[q[k]] for k in range(3))        # p after q
    inv = lambda p: tuple(sorted(range(3), key=lambda k: p[k]))
    return {"size": 6,
            "functions": {
                "*": {"arity": 2, "values": [[[num[p], num[q]], num[mul(p, q)]]
                                             for p in perms for q in perms]},
                "e": {"arity": 0, "values": [[[], num[(0, 1, 2)]]]},
                "i": {"arity": 1, "values": [[[num[p]], num[inv(p)]] for p in perms]}},
            "predicates": {}}


def z2_model():
    """The group with two elements: abelian."""
    return {"size": 2,
            "functions": {"*": {"arity": 2, "values": [[[x, y], (x + y) % 2]
                                                       for x in range(2) for y in range(2)]},
                          "e": {"arity": 0, "values": [[[], 0]]},
                          "i": {"arity": 1, "values": [[[0], 0], [[1], 1]]}},
            "predicates": {}}


def test_s3_passes_as_a_counterexample_to_commutativity():
    p = parse_text(GROUP, "g.nj")
    rep = check_model(s3_model(), p, "comm")
    assert rep.ok, rep.detail
    assert rep.checked == 4 and rep.failing_step is None


def test_the_report_names_where_the_conjecture_fails():
    """The first x, y with x * y != y * x in S3, named in the report; checked
    against the table itself."""
    import re
    p = parse_text(GROUP, "g.nj")
    model = s3_model()
    rep = check_model(model, p, "comm")
    m = re.search(r"fails \(for x = (\d+), y = (\d+)\)", rep.detail)
    assert rep.ok and m, rep.detail
    x, y = int(m.group(1)), int(m.group(2))
    mul = {tuple(a): v for a, v in model["functions"]["*"]["values"]}
    assert mul[(x, y)] != mul[(y, x)]
    assert all(mul[(a, b)] == mul[(b, a)] for a in range(6) for b in range(6)
               if (a, b) < (x, y))            # and it is the first such pair


def test_a_model_where_the_conjecture_holds_is_refused():
    p = parse_text(GROUP, "g.nj")
    rep = check_model(z2_model(), p, "comm")
    assert not rep.ok
    assert rep.failing_step == 3 and "holds" in rep.detail
    # the same model is a fine model of the axioms alone
    assert check_model(z2_model(), p, None).ok


@pytest.mark.parametrize("cell", range(36))
def test_flipping_one_table_entry_breaks_an_axiom(cell):
    p = parse_text(GROUP, "g.nj")
    m = s3_model()
    entry = m["functions"]["*"]["values"][cell]
    entry[1] = (entry[1] + 1) % 6
    rep = check_model(m, p, "comm")
    assert not rep.ok
    assert rep.failing_step in (0, 1, 2)
    assert "false in the model" in rep.detail


def test_counterexample_values_are_named():
    p = parse_text(GROUP, "g.nj")
    m = s3_model()
    m["functions"]["e"]["values"][0][1] = 1          # e is no longer the identity
    rep = check_model(m, p, "comm")
    assert not rep.ok and rep.failing_step == 1
    assert "unit" in rep.detail and "x = " in rep.detail


def test_malformed_models_are_refused():
    p = parse_text(GROUP, "g.nj")
    m = s3_model()
    del m["functions"]["i"]
    rep = check_model(m, p, "comm")
    assert not rep.ok and "no table for the function i/1" in rep.detail
    m = s3_model()
    m["functions"]["*"]["values"].pop()
    assert "incomplete" in check_model(m, p, "comm").detail
    m = s3_model()
    m["functions"]["e"]["values"][0][1] = 6
    assert "outside the domain" in check_model(m, p, "comm").detail
    assert not check_model({"size": 0}, p, "comm").ok


def test_swapped_quantifiers():
    # forall x exists y p(x,y) holds and exists y forall x p(x,y) fails where
    # p is "differs from" on two elements (common textbook example).
    p = parse_text("axiom a: forall x. exists y. p(x, y)\n"
                   "conjecture c: exists y. forall x. p(x, y)\n", "s.nj")
    neq = {"size": 2, "functions": {},
           "predicates": {"p": {"arity": 2, "values": [[[x, y], x != y]
                                                      for x in range(2) for y in range(2)]}}}
    assert check_model(neq, p, "c").ok
    full = {"size": 2, "functions": {},
            "predicates": {"p": {"arity": 2, "values": [[[x, y], True]
                                                       for x in range(2) for y in range(2)]}}}
    assert not check_model(full, p, "c").ok


def _problem(*statements):
    sts = [Statement(name, role, f) for name, role, f in statements]
    return Problem(sts, {}, ["x"])


def test_connectives_and_free_variables():
    # hand-built formulas: q(x) iff not r(x), free variable read as universal,
    # and an implication chain; r holds at 1 only, q at 0 only.
    q = lambda t: Atom(("q", t))
    r = lambda t: Atom(("r", t))
    model = {"size": 2, "functions": {"c": {"arity": 0, "values": [[[], 1]]}},
             "predicates": {"q": {"arity": 1, "values": [[[0], True], [[1], False]]},
                            "r": {"arity": 1, "values": [[[0], False], [[1], True]]}}}
    prob = _problem(("a1", "axiom", Iff(q(0), Not(r(0)))),                    # free x
                    ("a2", "axiom", Implies(r("c"), Or((r("c"), q("c"))))),
                    ("a3", "axiom", Quant("exists", (0,), And((q(0), Not(r(0)))))),
                    ("a4", "negated_conjecture", Atom(("=", "c", "c"))))
    rep = check_model(model, prob, None)
    assert rep.ok and rep.checked == 4
    bad = _problem(("b", "axiom", Quant("forall", (0,), q(0))))
    rep = check_model(model, bad, None)
    assert not rep.ok and rep.failing_step == 0


def test_deep_quantifiers_at_size_8():
    # x * y = (x + y) mod 8 is associative and commutative: four nested
    # quantifiers over 8 elements (4096 assignments)
    n = 8
    model = {"size": n, "functions": {"*": {"arity": 2, "values": [[[x, y], (x + y) % n]
                                                                  for x in range(n) for y in range(n)]}},
             "predicates": {}}
    m = lambda a, b: ("*", a, b)
    f = Quant("forall", (0, 1, 2, 3),
              Atom(("=", m(m(0, 1), m(2, 3)), m(m(3, 2), m(1, 0)))))
    assert check_model(model, _problem(("ac", "axiom", f)), None).ok
    g = Quant("forall", (0, 1, 2, 3), Atom(("=", m(m(0, 1), m(2, 3)), m(0, 3))))
    assert not check_model(model, _problem(("no", "axiom", g)), None).ok


def test_quantified_variables_that_do_not_occur_are_not_looped_over():
    """forall x0 ... x59. q(x0) (59 of the variables occur nowhere) in a
    model of 2 elements: looping over every variable would be 2**60 steps,
    so this only finishes because the evaluator skips them; the values must
    still be right (q holds at 0 only), for forall and exists, nested and in
    one binder, and in the message for a false statement."""
    q = lambda t: Atom(("q", t))
    model = {"size": 2, "functions": {},
             "predicates": {"q": {"arity": 1, "values": [[[0], True], [[1], False]]}}}
    nested = q(0)
    for v in reversed(range(60)):
        nested = Quant("forall", (v,), nested)
    rep = check_model(model, _problem(("n", "axiom", nested)), None)
    assert not rep.ok and rep.failing_step == 0
    assert "(for X0 = 1)" in rep.detail, rep.detail
    some = Quant("exists", tuple(range(60)), q(0))
    assert check_model(model, _problem(("e", "axiom", some)), None).ok
    holds_ = Quant("forall", tuple(range(60)), Or((q(0), Not(q(0)))))
    assert check_model(model, _problem(("t", "axiom", holds_)), None).ok
    # x0 occurs under an inner binder only after the vacuous ones
    inner = Quant("forall", tuple(range(1, 60)), Quant("exists", (0,), Not(q(0))))
    assert check_model(model, _problem(("i", "axiom", inner)), None).ok


def test_unknown_conjecture_name_is_refused():
    model = z2_model()
    prob = _problem(("a", "axiom", Atom(("=", "e", "e"))))
    rep = check_model(model, prob, "missing")
    assert not rep.ok and "no conjecture named missing" in rep.detail


def test_evaluator_shares_no_code_with_the_model_search():
    import ast
    import pathlib
    import worker.certify.evaluate as ev
    tree = ast.parse(pathlib.Path(ev.__file__).read_text())
    imported = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            imported.add(("." * node.level) + (node.module or ""))
        elif isinstance(node, ast.Import):
            imported.update(a.name for a in node.names)
    assert not any("models" in m or "saturation" in m or "clausify" in m for m in imported), imported
