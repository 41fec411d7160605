"""The TPTP reader (FOF and CNF), as the TPTP language defines them."""

from pathlib import Path

import pytest

from worker.syntax import (FALSE, TRUE, And, Atom, Iff, Implies, InputError, Not, Or,
                           Quant, bundle_reader, collect_bundle, load_problem, parse_text)

DATA = Path(__file__).parent / "data" / "syntax"


def f1(text):
    p = parse_text(f"fof(a, axiom, {text}).")
    return p.statements[0].formula


P, Q, R = Atom("p"), Atom("q"), Atom("r")


def test_binary_connectives():
    assert f1("p => q") == Implies(P, Q)
    assert f1("p <= q") == Implies(Q, P)
    assert f1("p <=> q") == Iff(P, Q)
    assert f1("p <~> q") == Not(Iff(P, Q))
    assert f1("p ~| q") == Not(Or((P, Q)))
    assert f1("p ~& q") == Not(And((P, Q)))
    assert f1("p & q & r") == And((P, Q, R))
    assert f1("p | q | r") == Or((P, Q, R))
    assert f1("(p & q) | r") == Or((And((P, Q)), R))


def test_unary_and_quantifiers_bind_tightest():
    # a quantifier's body is a unit formula: the '&' is outside it
    f = parse_text("fof(a, axiom, ( ! [X] : p(X) ) & q).").statements[0].formula
    assert f == And((Quant("forall", (0,), Atom(("p", 0))), Q))
    assert f1("~ p & q") == And((Not(P), Q))
    g = f1("! [X, Y] : ? [Z] : (f(X, Y) = Z)")
    assert g == Quant("forall", (0, 1), Quant("exists", (2,), Atom(("=", ("f", 0, 1), 2))))


def test_equality_constants_and_numbers():
    assert f1("a != b") == Not(Atom(("=", "a", "b")))
    assert f1("$true & $false") == And((TRUE, FALSE))
    assert f1("p(1, 'a b', \"obj\")") == Atom(("p", "1", "a b", '"obj"'))
    assert f1("p('abc')") == f1("p(abc)")


def test_varnames_and_language():
    st = parse_text("fof(a, axiom, ! [Xs, Y] : r(Xs, Y)).").statements[0]
    assert st.varnames == {0: "Xs", 1: "Y"}
    assert st.language == "tptp"


def test_cnf_clauses_are_universally_closed():
    st = parse_text("cnf(c, negated_conjecture, ~ p(X) | q(Y, X) | X != Y).").statements[0]
    assert st.role == "negated_conjecture"
    assert st.formula == Quant("forall", (0, 1), Or((Not(Atom(("p", 0))),
                                                     Atom(("q", 1, 0)),
                                                     Not(Atom(("=", 0, 1))))))
    ground = parse_text("cnf(g, axiom, p(a)).").statements[0]
    assert ground.formula == Atom(("p", "a"))


def test_roles_names_annotations_and_text():
    text = ("% comment\n"
            "fof(ax, axiom, p).\n"
            "fof('hyp one', hypothesis, q).\n"
            "fof(d, definition, r <=> p).\n"
            "fof(l, lemma, p | q).\n"
            "fof(t, theorem, q).\n"
            "fof(2, plain, q, inference(x, [status(thm)], [ax]), [useful]).\n"
            "/* block\n comment */ fof(goal, conjecture, p & q).\n")
    p = parse_text(text, name="x.p")
    roles = [(s.name, s.role) for s in p.statements]
    assert roles == [("ax", "axiom"), ("hyp one", "hypothesis"), ("d", "definition"),
                     ("l", "lemma"), ("t", "theorem"), ("2", "plain"),
                     ("goal", "conjecture")]
    assert p.obligations() == ["goal"]
    assert [s.name for s in p.axioms()] == ["ax", "hyp one", "d", "l", "t", "2"]
    assert p.statement("goal").text == "fof(goal, conjecture, p & q)."
    assert p.statement("goal").span.line == 9


def test_includes_relative_then_root_and_selection():
    hall = DATA / "tptp" / "hall.p"
    p = load_problem(str(hall), include_root=str(DATA / "tptp" / "lib"))
    assert [s.name for s in p.statements] == ["locker_has_key", "keys_distinct",
                                              "locker 7", "anna", "goal"]
    # the excluded clause was still read and checked
    assert "key_of" in p.signature
    with pytest.raises(InputError) as e:
        load_problem(str(hall), include_root=None)
    assert "not found" in e.value.message and e.value.span.line == 2


def test_include_root_from_environment(monkeypatch):
    monkeypatch.setenv("NIGHTJAR_TPTP_ROOT", str(DATA / "tptp" / "lib"))
    p = load_problem(str(DATA / "tptp" / "hall.p"))
    assert len(p.statements) == 5


def test_bundle_of_a_tptp_problem_needs_no_library_on_the_server():
    hall = DATA / "tptp" / "hall.p"
    bundle = collect_bundle(str(hall), include_root=str(DATA / "tptp" / "lib"))
    assert set(bundle) == {"hall.p", "Axioms/lockers.ax", "sub/extra.ax"}
    local = load_problem(str(hall), include_root=str(DATA / "tptp" / "lib"))
    remote = load_problem("hall.p", bundle_reader(bundle))
    assert all(a.same_as(b) for a, b in zip(local.statements, remote.statements))
    assert len(local.statements) == len(remote.statements)


def test_selected_name_missing_is_an_error():
    read = bundle_reader({"m.p": "include('a.ax', [nope]).\n", "a.ax": "fof(x, axiom, p).\n"})
    with pytest.raises(InputError, match="no statement named 'nope'"):
        load_problem("m.p", read)


def test_mixed_languages_through_includes():
    read = bundle_reader({"m.nj": 'include "a.ax"\nconjecture c: p(c0)\n',
                          "a.ax": "fof(ax, axiom, ! [X] : p(X)).\n"})
    p = load_problem("m.nj", read)
    assert [(s.name, s.language) for s in p.statements] == [("ax", "tptp"), ("c", "native")]


@pytest.mark.parametrize("dialect", ["tff", "thf", "tcf", "tpi"])
def test_typed_dialects_are_refused_naming_the_line(dialect):
    with pytest.raises(InputError) as e:
        parse_text(f"fof(a, axiom, p).\n{dialect}(t, type, c: $i).\n", name="x.p")
    assert "not supported" in e.value.message and dialect in e.value.message
    assert e.value.span.line == 2


def test_free_variable_in_fof_is_an_error_with_a_hint():
    with pytest.raises(InputError) as e:
        parse_text("fof(a, axiom, ! [X] : p(X) => q(X)).")
    assert "'X' is not bound" in e.value.message
    assert "unit formula" in e.value.hint


def test_mixing_connectives_needs_parentheses():
    with pytest.raises(InputError, match="parentheses"):
        parse_text("fof(a, axiom, p & q | r).")
    with pytest.raises(InputError, match="parentheses"):
        parse_text("fof(a, axiom, p => q => r).")


# ------------------------------------------- random formulas through TPTP

from hypothesis import given, settings  # noqa: E402

from tests.test_printer_roundtrip import renumber, statements  # noqa: E402
from worker.syntax.printer import format_problem  # noqa: E402


def tptp_name(s):
    if s.isdigit() or (s[:1].islower() and s.replace("_", "").isalnum() and s.isascii()):
        return s
    return "'" + s.replace("\\", "\\\\").replace("'", "\\'") + "'"


def tptp_term(t):
    if type(t) is int:
        return f"X{t}"
    if type(t) is str:
        return tptp_name(t)
    return tptp_name(t[0]) + "(" + ", ".join(tptp_term(a) for a in t[1:]) + ")"


def tptp_formula(f):
    """Fully parenthesized TPTP text of a formula (written for this test)."""
    if isinstance(f, Atom):
        t = f.term
        if type(t) is tuple and t[0] == "=":
            return f"{tptp_term(t[1])} = {tptp_term(t[2])}"
        return tptp_term(t)
    if f == TRUE:
        return "$true"
    if f == FALSE:
        return "$false"
    if isinstance(f, Not):
        return f"~ ({tptp_formula(f.arg)})"
    if isinstance(f, (And, Or)):
        op = " & " if isinstance(f, And) else " | "
        return "(" + op.join(f"({tptp_formula(a)})" for a in f.args) + ")"
    if isinstance(f, Implies):
        return f"(({tptp_formula(f.left)}) => ({tptp_formula(f.right)}))"
    if isinstance(f, Iff):
        return f"(({tptp_formula(f.left)}) <=> ({tptp_formula(f.right)}))"
    q = "!" if f.kind == "forall" else "?"
    vs = ", ".join(f"X{v}" for v in f.vars)
    return f"{q} [{vs}] : ({tptp_formula(f.body)})"


@settings(max_examples=100, deadline=None)
@given(statements())
def test_random_formulas_through_tptp_and_back_to_native(stmt):
    text = f"fof(s, {stmt.role}, {tptp_formula(stmt.formula)}).\n"
    p = parse_text(text, name="gen.p")
    assert p.statements[0].formula == renumber(stmt.formula), text
    q = parse_text(format_problem(p), language="native")
    assert q.statements[0].formula == p.statements[0].formula


def test_a_leading_byte_order_mark_is_skipped_and_the_text_still_decides(tmp_path):
    from worker.syntax import detect_language
    text = "\ufeff% comment\nfof(a, axiom, p).\nfof(c, conjecture, p).\n"
    assert detect_language(text, "upload.nj") == "tptp"
    p = parse_text(text, name="upload.nj")
    assert p.language == "tptp" and [s.name for s in p.statements] == ["a", "c"]
    (tmp_path / "bom.p").write_bytes(text.encode())
    p = load_problem(str(tmp_path / "bom.p"))
    assert p.statements[0].span.line == 2 and p.statements[0].span.col == 1
    with pytest.raises(InputError) as e:
        parse_text("\ufefffof(a, axiom, p @ q).", name="x.p")
    assert e.value.span.col == 17 and e.value.render().splitlines()[1] == \
        "    fof(a, axiom, p @ q)."
    lib = tmp_path / "lib"
    lib.mkdir()
    (lib / "ax.ax").write_bytes(b"\xef\xbb\xbffof(ax, axiom, q).\n")
    read = bundle_reader({"m.p": "\ufeffinclude('ax.ax').\nfof(c, conjecture, q).\n"},
                         library=str(lib))
    p = load_problem("m.p", read, include_root=str(lib))
    assert [s.name for s in p.statements] == ["ax", "c"]
