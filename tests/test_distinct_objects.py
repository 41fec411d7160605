"""TPTP distinct objects ("a", "b"): different ones are unequal.

The TPTP language interprets a distinct object as itself, so two different
distinct objects are unequal without an axiom saying so (from memory of the
TPTP syntax documentation, which gives an example of this kind; not checked
against the text here).  Clausification adds "a" != "b" for every pair of an
obligation's distinct objects; the saturation engine, the model search, the
proof checker, the model evaluator and the proof text all have to agree.
Numbers stay ordinary constants.
"""

import copy
import json

import pytest

from service.cli import main
from worker import verdict as V
from worker.certify.evaluate import check_model
from worker.certify.proofcheck import check_input_clauses, check_proof
from worker.clauses import DISTINCT_ROLE, DISTINCT_SOURCE
from worker.clausify import MAX_DISTINCT_OBJECTS, clausify
from worker.models.search import ModelSearch
from worker.pipeline import decide
from worker.portfolio import _closure_candidates, finite_domain_answer
from worker.saturation.proof import format_proof
from worker.syntax import load_problem, parse_text
from worker.syntax.errors import InputError, LimitError
from worker.syntax.terms import EQ

SETTINGS = V.Settings(limits=V.Limits(time=10))


def tptp(text, name="t.p"):
    return parse_text(text, name=name, language="tptp")


def distinct_clauses(cp):
    return [ic for ic in cp.clauses if ic.role == DISTINCT_ROLE]


def distinct_steps(proof):
    return [s for s in proof["steps"] if s.get("role") == DISTINCT_ROLE]


QA = 'fof(c, conjecture, "a" != "b").\n'


# ------------------------------------------------------------------ the QA case

def test_the_qa_case_is_a_theorem_with_a_replayed_proof():
    p = tptp(QA, "p7.p")
    r = decide(p, "c", SETTINGS)
    assert r["status"] == V.THEOREM, r["reason"]
    assert r["certificate"]["kind"] == "proof-replayed"
    steps = distinct_steps(r["proof"])
    assert len(steps) == 1
    st = steps[0]
    assert st["rule"] == "input" and st["formula"] == DISTINCT_SOURCE
    # both objects occur only in the conjecture: the step is conjecture-derived
    assert st["conj"] is True
    assert r["model"] is None
    # the proof text says where the step comes from, naming both objects
    text = format_proof(r["proof"])
    assert 'distinct objects "a" and "b"' in text and "TPTP language" in text


def test_the_qa_command_line(tmp_path, capsys):
    f = tmp_path / "p7.p"
    f.write_text(QA)
    assert main(["prove", str(f), "--time-limit", "10"]) == 0
    out = capsys.readouterr().out
    assert "conjecture c: Theorem" in out
    assert "certificate: proof replayed" in out
    assert 'distinct objects "a" and "b"' in out
    assert "CounterSatisfiable" not in out


def test_clausification_gives_every_pair_once_in_order():
    p = tptp('fof(a, axiom, p("x", "y") & q("x")).\n'
             'fof(b, axiom, r("z")).\n'
             'fof(g, conjecture, "w" != "x").\n')
    cp = clausify(p, "g")
    got = [(ic.lits, ic.conj) for ic in distinct_clauses(cp)]
    pair = lambda a, b: ((False, (EQ, a, b)),)  # noqa: E731
    assert got == [(pair('"x"', '"y"'), False), (pair('"x"', '"z"'), False),
                   (pair('"x"', '"w"'), True), (pair('"y"', '"z"'), False),
                   (pair('"y"', '"w"'), True), (pair('"z"', '"w"'), True)]
    assert all(ic.source == DISTINCT_SOURCE for ic in distinct_clauses(cp))
    # the statements' own clauses are untouched and come first
    assert [ic.source for ic in cp.clauses[:4]] == ["a", "a", "b", "g"]
    # every input clause passes the checker's input checks
    rep = check_input_clauses(p, cp)
    assert rep.ok, rep.detail


def test_one_object_or_none_adds_nothing_and_other_conjectures_do_not_count():
    p = tptp('fof(a, axiom, p("x")).\nfof(g, conjecture, p("x")).\n'
             'fof(h, conjecture, p("y")).\n')
    assert distinct_clauses(clausify(p, "g")) == []
    assert len(distinct_clauses(clausify(p, "h"))) == 1
    assert distinct_clauses(clausify(tptp("fof(a, axiom, p(x)).\n"), None)) == []


# ------------------------------------------------------------------ three objects

TWO_ONLY = 'fof(two_only, axiom, ![X]: (p(X) => (X = "x" | X = "y"))).\n'
FACTS = 'p("x") & p("y") & p("z")'


def test_three_objects_as_axioms_contradict_the_axiom():
    """p holds of three different elements, but the axiom allows only two:
    the axioms alone (with the objects they name) have no model, whatever
    the conjecture says, so the verdict is ContradictoryAxioms, not Theorem."""
    p = tptp(f"fof(facts, axiom, {FACTS}).\n" + TWO_ONLY +
             "fof(goal, conjecture, q).\n")
    r = decide(p, "goal", SETTINGS)
    assert r["status"] == V.CONTRADICTORY_AXIOMS, r["reason"]
    assert r["certificate"]["kind"] == "proof-replayed"
    steps = distinct_steps(r["proof"])
    assert steps and all(s["conj"] is False for s in steps)
    assert not any(s.get("conj") for s in r["proof"]["steps"] if s["rule"] == "input")
    assert set(r["axioms_used"]) == {"facts", "two_only", DISTINCT_SOURCE}


def test_three_objects_in_the_conjecture_give_a_theorem():
    """The negated conjecture says p("x"), p("y"), p("z"); the axiom puts
    "z" equal to "x" or "y", which the distinct objects forbid.  The axiom
    alone is satisfiable (p empty), and "z" occurs only in the conjecture, so
    the pairs with "z" are conjecture-derived: Theorem."""
    p = tptp(TWO_ONLY + f"fof(goal, conjecture, ~ ({FACTS})).\n")
    r = decide(p, "goal", SETTINGS)
    assert r["status"] == V.THEOREM, r["reason"]
    assert r["certificate"]["kind"] == "proof-replayed"
    steps = distinct_steps(r["proof"])
    named = {o for s in steps for o in s["clause"][0][1][1:]}
    assert '"z"' in named
    assert all(s["conj"] is ('"z"' in s["clause"][0][1][1:]) for s in steps)
    assert r["axioms_used"] == ["two_only"]


def test_three_objects_asserted_by_the_conjecture_have_a_countermodel():
    """The conjecture p("x") & p("y") & p("z") does not follow (p may be
    empty); the countermodel gives the three objects three elements."""
    p = tptp(TWO_ONLY + f"fof(goal, conjecture, {FACTS}).\n")
    r = decide(p, "goal", SETTINGS)
    assert r["status"] == V.COUNTER_SATISFIABLE, r["reason"]
    assert r["certificate"]["kind"] == "model-evaluated"
    funs = r["model"]["functions"]
    values = [funs[o]["values"][0][1] for o in ('"x"', '"y"', '"z"')]
    assert len(set(values)) == 3
    assert check_model(r["model"], p, "goal").ok


# ------------------------------------------------------------------ models

def test_model_search_gives_different_objects_different_elements():
    p = tptp('fof(a, axiom, p("a") | p("b") | p("c")).\n')
    search = ModelSearch(clausify(p, None), max_size=4)
    m = search.run(None)
    assert m is not None and m["size"] == 3
    assert {1, 2} <= set(search.sizes_excluded)
    vals = {m["functions"][o]["values"][0][1] for o in ('"a"', '"b"', '"c"')}
    assert vals == {0, 1, 2}
    assert check_model(m, p, None).ok


def test_the_evaluator_refuses_a_model_that_merges_two_objects():
    p = tptp(QA)
    merged = {"size": 1, "functions": {'"a"': {"arity": 0, "values": [[[], 0]]},
                                       '"b"': {"arity": 0, "values": [[[], 0]]}},
              "predicates": {}}
    rep = check_model(merged, p, "c")
    assert not rep.ok
    assert '"a"' in rep.detail and '"b"' in rep.detail and "different elements" in rep.detail
    # the same tables for ordinary constants are a fine countermodel
    plain = tptp("fof(c, conjecture, a != b).\n")
    ordinary = {"size": 1, "functions": {"a": {"arity": 0, "values": [[[], 0]]},
                                         "b": {"arity": 0, "values": [[[], 0]]}},
                "predicates": {}}
    assert check_model(ordinary, plain, "c").ok
    # an object of another obligation's conjecture is not held to it
    two = tptp('fof(c, conjecture, p("a")).\nfof(d, conjecture, p("b")).\n')
    model = {"size": 1, "functions": merged["functions"],
             "predicates": {"p": {"arity": 1, "values": [[[0], False]]}}}
    assert check_model(model, two, "c").ok


def test_a_countermodel_with_objects_through_the_command_line(tmp_path, capsys):
    f = tmp_path / "cs.p"
    f.write_text(TWO_ONLY + f"fof(goal, conjecture, {FACTS}).\n")
    assert main(["prove", str(f), "--json", "--time-limit", "10"]) == 0
    line = json.loads(capsys.readouterr().out.strip().splitlines()[-1])
    assert line["status"] == "CounterSatisfiable"
    assert line["certificate"]["kind"] == "model-evaluated"
    funs = line["model"]["functions"]
    assert len({funs[o]["values"][0][1] for o in ('"x"', '"y"', '"z"')}) == 3


# ------------------------------------------------------------------ the checker

def _qa_proof():
    p = tptp(QA)
    r = decide(p, "c", SETTINGS)
    assert r["status"] == V.THEOREM
    return r["proof"]


def _rename(obj, table):
    if isinstance(obj, str):
        return table.get(obj, obj)
    if isinstance(obj, list):
        return [_rename(x, table) for x in obj]
    if isinstance(obj, dict):
        return {k: _rename(v, table) for k, v in obj.items()}
    return obj


def test_a_forged_disequality_of_ordinary_constants_is_refused_at_its_step():
    """The QA proof with "a", "b" renamed to the ordinary constants a, b is
    a proof of a != b; its step 'a != b from the distinct objects' is
    invented, and the checker says so at that step."""
    forged = _rename(_qa_proof(), {'"a"': "a", '"b"': "b"})
    plain = tptp("fof(c, conjecture, a != b).\n")
    cp = clausify(plain, "c")
    step = distinct_steps(forged)[0]
    assert step["clause"] == [[False, ["=", "a", "b"]]]
    rep = check_proof(forged, plain, cp)
    assert not rep.ok
    assert rep.failing_step == step["id"]
    assert "a is not a distinct object" in rep.detail
    # the same clause passed off as a clause of the conjecture: refused too
    as_input = copy.deepcopy(forged)
    st = distinct_steps(as_input)[0]
    st["role"], st["formula"], st["conj"] = "conjecture", "c", True
    rep = check_proof(as_input, plain, cp)
    assert not rep.ok and rep.failing_step == st["id"]


def test_the_checker_holds_distinct_steps_to_the_obligation():
    proof = _qa_proof()
    p = tptp(QA)
    cp = clausify(p, "c")
    assert check_proof(proof, p, cp).ok
    sid = distinct_steps(proof)[0]["id"]

    def refused(change, *words):
        bad = copy.deepcopy(proof)
        change(distinct_steps(bad)[0], bad)
        rep = check_proof(bad, p, cp)
        assert not rep.ok and rep.failing_step == sid, rep.detail
        for w in words:
            assert w in rep.detail, rep.detail

    # the objects only occur in the conjecture: not an axiom
    def unconj(st, pf):
        st["conj"] = False
        pf["axioms_used"] = [DISTINCT_SOURCE]
    refused(unconj, "conjecture-derived")
    # an object the obligation does not have
    refused(lambda st, pf: st.update(clause=[[False, ["=", '"a"', '"zz"']]]),
            '"zz" is not a distinct object of this obligation')
    # a distinct object is equal to itself
    refused(lambda st, pf: st.update(clause=[[False, ["=", '"a"', '"a"']]]),
            "equals itself")
    # anything but one disequation
    refused(lambda st, pf: st.update(clause=[[True, ["=", '"a"', '"b"']]]),
            "is not a disequation")
    refused(lambda st, pf: st.update(formula="c"), "distinct-object step names")
    # a native problem has no distinct objects, whatever its constants are called
    native = parse_text("conjecture c: '\"a\"' != '\"b\"'\n", name="n.nj", language="native")
    rep = check_proof(proof, native, clausify(native, "c"))
    assert not rep.ok and rep.failing_step == sid
    assert "not a distinct object of this obligation" in rep.detail


def test_a_user_statement_named_like_the_source_does_not_confuse_the_checker():
    p = tptp("fof('distinct objects', axiom, p(\"a\")).\n"
             'fof(c, conjecture, ~ p("b")).\n'
             'fof(d, axiom, ![X]: (p(X) => X = "a")).\n')
    r = decide(p, "c", SETTINGS)
    # p("b") with p(X) => X = "a" gives "b" = "a": refuted by the objects
    assert r["status"] == V.THEOREM, r["reason"]
    assert r["certificate"]["kind"] == "proof-replayed"
    assert distinct_steps(r["proof"])


def test_a_finite_domain_proof_counts_the_distinct_objects():
    """Every element is "a" or "b" and the negated conjecture makes all
    elements equal: only the distinctness of "a" and "b" refutes it (a
    one-element interpretation satisfies both statements).  The finite-domain
    step must be accepted with the distinct-object parent, and refused
    without it."""
    p = tptp('fof(two, axiom, ![X]: (X = "a" | X = "b")).\n'
             "fof(goal, conjecture, ?[X, Y]: X != Y).\n")
    cp = clausify(p, "goal")
    got = finite_domain_answer(cp, _closure_candidates(cp), {1, 2}, float("inf"))
    proof = got["proof"]
    assert distinct_steps(proof)
    rep = check_proof(proof, p, cp)
    assert rep.ok, rep.detail
    bad = copy.deepcopy(proof)
    ids = {s["id"] for s in distinct_steps(bad)}
    bad["steps"][-1]["parents"] = [x for x in bad["steps"][-1]["parents"] if x not in ids]
    rep = check_proof(bad, p, cp)
    assert not rep.ok and "have a model of size 1" in rep.detail


# ------------------------------------------------------------------ numbers

def test_numbers_stay_ordinary_constants():
    p = tptp("fof(c, conjecture, 1 != 2).\n")
    cp = clausify(p, "c")
    assert distinct_clauses(cp) == []
    r = decide(p, "c", SETTINGS)
    assert r["status"] == V.COUNTER_SATISFIABLE
    assert r["model"]["functions"]["1"]["values"] == r["model"]["functions"]["2"]["values"]


# ------------------------------------------------------------------ the size limit

def _many(n, per_line=10):
    objs = [f'"o{i}"' for i in range(n)]
    lines = ["fof(c, conjecture, q(\"o0\")).", "fof(a, axiom,"]
    body = [", ".join(objs[k:k + per_line]) for k in range(0, n, per_line)]
    lines.append("  p(" + ",\n    ".join(body) + ")).")
    return "\n".join(lines) + "\n", objs


def test_the_limit_itself_is_accepted():
    text, _ = _many(MAX_DISTINCT_OBJECTS)
    cp = clausify(tptp(text), "c")
    n = MAX_DISTINCT_OBJECTS
    assert len(distinct_clauses(cp)) == n * (n - 1) // 2


def test_past_the_limit_the_first_object_over_it_is_named_with_its_place(tmp_path, capsys):
    text, objs = _many(MAX_DISTINCT_OBJECTS + 5)
    with pytest.raises(LimitError) as e:
        clausify(tptp(text, "many.p"), "c")
    over = objs[MAX_DISTINCT_OBJECTS]                   # "o200"
    lines = text.splitlines()
    line = next(k for k, l in enumerate(lines, 1) if over + "," in l or over + ")" in l)
    col = lines[line - 1].index(over) + 1
    err = e.value
    assert (err.span.file, err.span.line, err.span.col) == ("many.p", line, col)
    assert over in err.message and str(MAX_DISTINCT_OBJECTS) in err.message
    rendered = err.render()
    assert rendered.startswith(f"many.p:{line}:{col}: error: ")
    shown, caret = rendered.splitlines()[1:3]
    assert shown[caret.index("^"):].startswith(over)          # the caret under it
    # through the command line: an input error with its place, no traceback
    f = tmp_path / "many.p"
    f.write_text(text)
    assert main(["prove", str(f), "--time-limit", "5"]) == 1
    out = capsys.readouterr()
    both = out.out + out.err
    assert f"many.p:{line}:{col}: error: the obligation has more than" in both
    assert "Traceback" not in both


def test_the_place_is_in_the_order_written_and_on_the_first_line_too():
    # 200 objects in the first statement (on its first line), the first one
    # past the limit written first inside '<=', which the formula stores the
    # other way round
    objs = [f'"o{i}"' for i in range(MAX_DISTINCT_OBJECTS)]
    text = ("  fof(a, axiom, p(" + ", ".join(objs) + ")).\n"
            'fof(b, axiom, (q("new1") <= q("new2"))).\n'
            "fof(c, conjecture, r).\n")
    with pytest.raises(LimitError) as e:
        clausify(tptp(text, "w.p"), "c")
    assert '"new1"' in e.value.message
    assert (e.value.span.line, e.value.span.col) == (2, text.splitlines()[1].index('"new1"') + 1)
    # past the limit on the statement's first line
    text = "  fof(a, axiom, p(" + ", ".join(objs + ['"last"']) + ")).\nfof(c, conjecture, r).\n"
    with pytest.raises(LimitError) as e:
        clausify(tptp(text, "w.p"), "c")
    assert (e.value.span.line, e.value.span.col) == (1, text.index('"last"') + 1)
    shown, caret = e.value.render().splitlines()[1:3]
    assert shown[caret.index("^"):].startswith('"last"')     # the caret under it


def test_the_limit_counts_the_obligation_only():
    text, _ = _many(MAX_DISTINCT_OBJECTS)
    text += 'fof(d, conjecture, q("extra")).\n'
    p = tptp(text)
    clausify(p, "c")                                     # 200: fine
    with pytest.raises(LimitError):
        clausify(p, "d")                                 # 201 with "extra"


# ------------------------------------------------------------------ the reader

def test_a_single_quoted_name_spelled_like_a_distinct_object_is_refused():
    with pytest.raises(InputError) as e:
        tptp("fof(a, axiom, p('\"a\"')).\n", "q.p")
    assert (e.value.span.line, e.value.span.col) == (1, 17)
    assert "same symbol as the distinct object \"a\"" in e.value.message
    # other single-quoted names with double quotes inside are fine
    tptp("fof(a, axiom, p('say \"a\"')).\n")


@pytest.mark.parametrize("text, line, col", [
    ("fof(a, axiom, p).\nfof(b, axiom, q.\n", 2, 1),
    ("fof(a, axiom, p).\n   cnf(b, axiom, q\n", 2, 4),
])
def test_an_unclosed_statement_names_where_its_word_starts(text, line, col):
    with pytest.raises(InputError) as e:
        tptp(text, "b.p")
    kind = text.split("\n")[1].strip()[:3]
    assert f"the '{kind}(' at line {line}, column {col} is never closed" in e.value.message


def test_objects_from_an_included_tptp_file_count(tmp_path):
    (tmp_path / "names.ax").write_text('fof(n, axiom, p("x") & p("y")).\n')
    (tmp_path / "main.p").write_text("include('names.ax').\n"
                                     'fof(g, conjecture, ~ p("x") | "x" != "y").\n')
    p = load_problem(str(tmp_path / "main.p"))
    r = decide(p, "g", SETTINGS)
    assert r["status"] == V.THEOREM, r["reason"]
    assert r["certificate"]["kind"] == "proof-replayed"
