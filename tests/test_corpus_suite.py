"""Suites: the manifests that ship, loading with every problem reported at
once, statement hashes, and the native copy of the Pelletier set."""

from __future__ import annotations

import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from service.corpus import (SuiteError, axiom_table, load_suite, obligation_key,
                            statement_hash, submission)
from worker.syntax import load_problem, parse_text

REPO = Path(__file__).resolve().parent.parent
CORPUS = REPO / "corpus"


def write(root: Path, files: dict) -> Path:
    for name, text in files.items():
        p = root / name
        p.parent.mkdir(parents=True, exist_ok=True)
        p.write_text(textwrap.dedent(text))
    return root


MANIFEST = """\
[suite]
name = "tiny"
description = "a small suite"
source = "made up for a test"
time_limit = 5
axioms = ["ax/*.nj"]
problems = ["goals/*.nj"]
"""


# -- the suites that ship ---------------------------------------------------

@pytest.mark.parametrize("path,name,obligations", [
    ("demo", "greywater", 31),
    ("demo/suite-v2.toml", "greywater", 31),
    ("checks/pelletier", "pelletier", 67),
    ("checks/pelletier-native", "pelletier-native", 67),
    ("checks/group-completion", "group-completion", 10),
    ("checks/algebra", "algebra", 15),
])
def test_shipped_suites_load_and_every_obligation_has_an_expectation(path, name, obligations):
    s = load_suite(str(CORPUS / path))
    assert s.name == name
    assert len(s.keys()) == obligations
    assert set(s.expectations) == set(s.keys())
    assert s.source and s.description


def test_demo_has_about_twenty_axioms_and_a_mix_of_verdicts():
    s = load_suite(str(CORPUS / "demo"))
    table = axiom_table(s.problems[0].problem)
    assert len(table) == 21
    assert sorted(set(s.expectations.values())) == ["CounterSatisfiable", "Theorem"]
    v2 = load_suite(str(CORPUS / "demo" / "suite-v2.toml"))
    t2 = axiom_table(v2.problems[0].problem)
    # the second version: one edited, one removed, one added
    assert sorted(set(table) - set(t2)) == ["tide_rule"]
    assert sorted(set(t2) - set(table)) == ["route_ashford_dunmere"]
    assert [n for n in table if n in t2 and table[n] != t2[n]] == ["maud_home"]


def test_pelletier_files_say_where_they_come_from():
    for p in sorted((CORPUS / "checks" / "pelletier").glob("p*.p")):
        head = p.read_text().split("fof(", 1)[0]
        assert "% source: F. J. Pelletier" in head, p
        assert "% written from memory" in head, p
        assert "% expected status: Theorem" in head, p


def test_propositional_pelletier_problems_are_tautologies_by_sympy():
    """Pelletier 1986, problems 1-17 (written from memory): each conjecture
    follows from its premises, checked with sympy (a reference library)."""
    from sympy import And, Not, Symbol
    from sympy.logic.boolalg import Equivalent, Implies, Or
    from sympy.logic.inference import satisfiable
    from worker.syntax import formulas as F

    def conv(f):
        if isinstance(f, F.Atom):
            return Symbol(f.term)
        if isinstance(f, F.Not):
            return Not(conv(f.arg))
        if isinstance(f, F.And):
            return And(*map(conv, f.args))
        if isinstance(f, F.Or):
            return Or(*map(conv, f.args))
        if isinstance(f, F.Implies):
            return Implies(conv(f.left), conv(f.right))
        if isinstance(f, F.Iff):
            return Equivalent(conv(f.left), conv(f.right))
        raise AssertionError(f"not propositional: {f}")

    for n in range(1, 18):
        prob = load_problem(str(CORPUS / "checks" / "pelletier" / f"p{n:02d}.p"))
        ax = [conv(s.formula) for s in prob.axioms()]
        (goal,) = [conv(s.formula) for s in prob.conjectures()]
        assert satisfiable(And(*ax, Not(goal))) is False, n
        assert satisfiable(And(*ax, True)) is not False, n


def test_native_pelletier_copy_is_up_to_date_and_reads_to_the_same_formulas():
    r = subprocess.run([sys.executable, str(CORPUS / "tools" / "to_native.py"), "--check"],
                       capture_output=True, text=True)
    assert r.returncode == 0, r.stdout + r.stderr
    for p in sorted((CORPUS / "checks" / "pelletier").glob("p*.p")):
        a = load_problem(str(p))
        b = load_problem(str(CORPUS / "checks" / "pelletier-native" / (p.stem + ".nj")))
        assert [(s.name, s.role, s.formula) for s in a.statements] == \
               [(s.name, s.role, s.formula) for s in b.statements], p.name


# -- loading ------------------------------------------------------------------

def test_a_good_suite_gives_bundles_with_the_axioms_included(tmp_path):
    write(tmp_path, {
        "suite.toml": MANIFEST + '\n[expectations]\n"goals/g.nj#one" = "Theorem"\n'
                                 '"goals/h.nj" = "CounterSatisfiable"\n',
        "ax/a.nj": "axiom a1: forall x. p(x) implies q(x)\n",
        "ax/b.nj": "axiom a2: p(c)\n",
        "goals/g.nj": "conjecture one: q(c)\nconjecture two: p(c)\n",
        "goals/h.nj": "conjecture three: q(d)\n"})
    s = load_suite(str(tmp_path))
    assert s.axioms == ["ax/a.nj", "ax/b.nj"]
    assert [p.file for p in s.problems] == ["goals/g.nj", "goals/h.nj"]
    assert s.keys() == ["goals/g.nj#one", "goals/g.nj#two", "goals/h.nj#three"]
    assert s.expectations == {"goals/g.nj#one": "Theorem",
                              "goals/h.nj#three": "CounterSatisfiable"}
    body = submission(s, full=True)
    assert body["full"] is True and body["suite"] == "tiny" and body["time_limit"] == 5
    b = body["problems"][0]["bundle"]
    assert set(b["files"]) == {b["main"], "ax/a.nj", "ax/b.nj", "goals/g.nj"}
    # the bundle reads back without the disk, axioms first
    from worker.syntax import bundle_reader
    p = load_problem(b["main"], bundle_reader(b["files"]))
    assert [st.name for st in p.statements] == ["a1", "a2", "one", "two"]


def test_every_problem_is_reported_at_once_with_its_location(tmp_path):
    write(tmp_path, {
        "suite.toml": """\
            [suite]
            name = "broken"
            description = "x"
            source = "y"
            time_limit = 5
            axioms = []
            problems = ["*.nj", "absent/*.nj"]

            [expectations]
            "two.nj" = "Theorem"
            "one.nj#nothing" = "Theorem"
            "one.nj#c1" = "Proved"
            "ghost.nj" = "Theorem"
            """,
        "one.nj": "axiom a: p(a)\nconjecture c1: p(a)\n",
        "two.nj": "conjecture c1: q(a)\nconjecture c2: q(b)\n",
        "three.nj": 'include "nowhere.nj"\nconjecture c3: r(a)\n',
        "four.nj": "axiom b: p(a) and\n",
    })
    with pytest.raises(SuiteError) as ei:
        load_suite(str(tmp_path))
    text = ei.value.render()
    m = str(tmp_path / "suite.toml")
    expected = [
        f"{m}:7:21: error: problem 'absent/*.nj' matches no file",
        "four.nj:1:18: error: missing operand",
        "three.nj:1:9: error: include file 'nowhere.nj' not found",
        "two.nj:1:1: error: duplicate conjecture name 'c1'",
        f"{m}:10:1: error: 'two.nj' has 2 conjectures",
        f"{m}:11:1: error: 'one.nj' has no conjecture named 'nothing'",
        f"{m}:12:1: error: 'Proved' is not an SZS status name",
        f"{m}:13:1: error: expectation for 'ghost.nj', which is not a problem",
    ]
    for e in expected:
        assert e in text, (e, text)
    assert len(ei.value.errors) == len(expected)
    assert text.endswith(f"{len(expected)} problems in the suite; nothing was submitted")


def test_a_misspelt_status_gets_the_closest_name(tmp_path):
    write(tmp_path, {
        "suite.toml": """\
            [suite]
            name = "typos"
            description = "x"
            source = "y"
            time_limit = 5
            axioms = []
            problems = ["*.nj"]

            [expectations]
            "a.nj" = "Theorm"
            "b.nj" = "Proved"
            """,
        "a.nj": "conjecture c: p\n",
        "b.nj": "conjecture d: q\n",
    })
    with pytest.raises(SuiteError) as ei:
        load_suite(str(tmp_path))
    errors = ei.value.render().split(str(tmp_path / "suite.toml") + ":")[1:]
    assert len(errors) == 2, errors
    assert errors[0].startswith("10:1: error: 'Theorm' is not an SZS status name")
    assert "did you mean 'Theorem'?" in errors[0]
    assert errors[1].startswith("11:1: error: 'Proved' is not an SZS status name")
    assert "did you mean" not in errors[1] and "one of: Theorem," in errors[1]


def test_manifest_field_errors_name_their_lines(tmp_path):
    write(tmp_path, {"suite.toml": """\
        [suite]
        name = "a b"
        time_limit = "soon"
        axioms = []
        problems = []
        colour = "red"
        """})
    with pytest.raises(SuiteError) as ei:
        load_suite(str(tmp_path))
    text = ei.value.render()
    m = str(tmp_path / "suite.toml")
    for e in (f"{m}:1:1: error: [suite] has no 'description'",
              f"{m}:1:1: error: [suite] has no 'source'",
              f"{m}:3:1: error: 'time_limit' must be a number of seconds",
              f"{m}:2:1: error: 'name' must be 1 to 80 letters",
              f"{m}:6:1: error: unknown field 'colour' in [suite]",
              f"{m}:5:1: error: 'problems' lists nothing"):
        assert e in text, (e, text)


def test_toml_syntax_error_has_line_and_column(tmp_path):
    write(tmp_path, {"suite.toml": '[suite]\nname = "x"\ntime_limit = = 3\n'})
    with pytest.raises(SuiteError) as ei:
        load_suite(str(tmp_path))
    (err,) = ei.value.errors
    assert err.span.line == 3 and err.span.col == 14
    assert "not valid TOML" in err.message


def test_missing_manifest_and_axiom_files_with_conjectures(tmp_path):
    with pytest.raises(SuiteError) as ei:
        load_suite(str(tmp_path))
    assert "has no manifest" in ei.value.render()
    write(tmp_path, {"suite.toml": MANIFEST, "ax/a.nj": "axiom a: p(a)\nconjecture sneaky: p(b)\n",
                     "goals/g.nj": "conjecture g: p(a)\n"})
    with pytest.raises(SuiteError) as ei:
        load_suite(str(tmp_path))
    assert "ax/a.nj:2:1: error: the axiom file has a conjecture 'sneaky'" in ei.value.render()


def test_paths_may_not_leave_the_suite_folder(tmp_path):
    write(tmp_path, {"s/suite.toml": MANIFEST.replace('["goals/*.nj"]', '["../x.nj"]'),
                     "x.nj": "conjecture g: p(a)\n", "s/ax/a.nj": "axiom a: p(a)\n"})
    with pytest.raises(SuiteError) as ei:
        load_suite(str(tmp_path / "s"))
    assert "lies outside the suite's folder" in ei.value.render()


def test_tptp_problems_and_files_without_conjectures(tmp_path):
    write(tmp_path, {
        "suite.toml": MANIFEST.replace('["ax/*.nj"]', "[]").replace('["goals/*.nj"]', '["*.p"]')
                      + '\n[expectations]\n"sat.p" = "Satisfiable"\n',
        "sat.p": "fof(a, axiom, p(a)).\n",
        "thm.p": "fof(a, axiom, p(a)).\nfof(g, conjecture, ? [X] : p(X)).\n"})
    s = load_suite(str(tmp_path))
    assert s.keys() == ["sat.p", "thm.p#g"]
    assert s.expectations == {"sat.p": "Satisfiable"}
    assert obligation_key("sat.p", None) == "sat.p"


# -- statement hashes ---------------------------------------------------------

def test_statement_hash_ignores_layout_and_variable_names_but_not_content():
    a = parse_text("axiom a1: forall x y. p(x, y) implies q(y)  # a comment\n")
    b = parse_text("axiom a1:\n   forall u v.\n      p(u, v) -> q(v)\n")
    c = parse_text("axiom a1: forall x y. p(x, y) implies q(x)\n")
    d = parse_text("hypothesis a1: forall x y. p(x, y) implies q(y)\n")
    h = [statement_hash(p.statements[0]) for p in (a, b, c, d)]
    assert h[0] == h[1]
    assert h[0] != h[2]
    assert h[0] == h[3]            # axiom and hypothesis play the same part
    t = parse_text("fof(a1, axiom, ! [X, Y] : (p(X, Y) => q(Y))).\n")
    assert statement_hash(t.statements[0]) == h[0]   # TPTP and native alike


def test_pelletier_53_holds_in_all_sixteen_models_of_its_premise():
    """Pelletier 53 (written from memory): its premise says there are exactly
    two things, so the conjecture is a theorem iff it holds for each of the
    16 binary relations on two elements; the model evaluator checks each."""
    import itertools

    from worker.certify.evaluate import check_model
    prob = load_problem(str(CORPUS / "checks" / "pelletier" / "p53.p"))
    (goal,) = prob.conjectures()
    pairs = [(x, y) for x in range(2) for y in range(2)]
    for bits in itertools.product([False, True], repeat=4):
        model = {"size": 2, "functions": {},
                 "predicates": {"f": {"arity": 2, "values": [[[x, y], b] for (x, y), b
                                                             in zip(pairs, bits)]}}}
        rep = check_model(model, prob, goal.name)
        assert not rep.ok and "holds in the model" in rep.detail, (bits, rep.detail)
