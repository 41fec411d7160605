"""A TPTP distinct object reads in a proof as the user wrote it, "a" (it
read '"a"' = '"b"' there while the model said "a" = 0).  The proof text is
for reading only: the native reader refuses "a" in a term, so statements
printed to be read back (format_statement, format_problem) keep '"a"', an
ordinary constant of that name, which is what the native language can say."""

from __future__ import annotations

import pytest

from worker import verdict as V
from worker.models.display import format_model
from worker.pipeline import decide
from worker.saturation.proof import clause_text, format_proof
from worker.syntax import parse_text
from worker.syntax.errors import InputError
from worker.syntax.printer import format_clause, format_problem, format_term

# ours: two lockers and their keys, told apart only by being distinct objects
LOCKERS = """\
fof(key_of_each, axiom, ![L]: (locker(L) => opens(key(L), L))).
fof(one_key, axiom, ![K, L, M]: ((opens(K, L) & opens(K, M)) => L = M)).
fof(lockers, axiom, locker("north") & locker("south")).
fof(shared, conjecture, key("north") != key("south")).
"""


def test_a_proof_prints_distinct_objects_as_written():
    p = parse_text(LOCKERS, "lockers.p", language="tptp")
    r = decide(p, "shared", V.Settings(limits=V.Limits(time=10), model_search=False))
    assert r["status"] == V.THEOREM and r["certificate"]["kind"] == "proof-replayed"
    text = format_proof(r["proof"])
    assert "'\"" not in text, text                      # no '"north"' anywhere
    assert '"north"' in text and '"south"' in text
    clauses = [clause_text(st) for st in r["proof"]["steps"]]
    assert '"north" != "south"' in clauses, clauses    # the distinct-objects input
    assert any('locker("north")' in c for c in clauses), clauses
    assert not any("'\"" in c for c in clauses)


def test_the_model_and_the_proof_spell_an_object_alike():
    p = parse_text('fof(a, axiom, p("a")).\nfof(c, conjecture, p("b")).\n', "m.p",
                   language="tptp")
    r = decide(p, "c", V.Settings(limits=V.Limits(time=10)))
    assert r["status"] == V.COUNTER_SATISFIABLE and r["model"]
    assert '"a" = ' in format_model(r["model"])
    assert format_clause(((True, ("p", '"a"')),)) == 'p("a")'


def test_printed_clauses_are_for_reading_statements_read_back():
    # what a proof prints is not native input: the native reader refuses it
    with pytest.raises(InputError) as e:
        parse_text("axiom x: " + format_clause(((False, ("=", '"a"', '"b"')),)) + "\n", "x.nj")
    assert 'the string "a"' in e.value.render()
    # a TPTP problem printed as native reads back, its objects quoted
    p = parse_text(LOCKERS, "lockers.p", language="tptp")
    native = format_problem(p)
    assert "locker('\"north\"')" in native
    again = parse_text(native, "lockers.nj", language="native")
    assert [s.formula for s in again.statements] == [s.formula for s in p.statements]
    # a character that does not print is escaped in an object as well
    assert format_term('"a\x1bb"') == '"a\\u{1B}b"'
    # applied to arguments a quoted name stays a quoted symbol
    assert format_term(('"f"', "x")) == "'\"f\"'(x)"
