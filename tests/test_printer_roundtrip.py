"""Printing a parsed problem in the native language and reading it back gives
the same problem (Statement.same_as), for native and TPTP sources, and for
random formulas (hypothesis)."""

from pathlib import Path

from hypothesis import given, settings, strategies as st

from worker.syntax import (FALSE, TRUE, And, Atom, Iff, Implies, Not, Or, Quant,
                           Statement, load_problem, parse_text)
from worker.syntax.formulas import Problem
from worker.syntax.printer import (format_clause, format_formula, format_problem,
                                   format_statement, format_term, is_identifier,
                                   quote_name)

DATA = Path(__file__).parent / "data" / "syntax"

NATIVE_ROLES = {"axiom", "hypothesis", "conjecture", "negated_conjecture"}


def same_problem(p, q, roles_mapped=False):
    assert len(p.statements) == len(q.statements)
    for a, b in zip(p.statements, q.statements):
        role = a.role if (a.role in NATIVE_ROLES or not roles_mapped) else "axiom"
        assert (a.name, role, a.formula) == (b.name, b.role, b.formula), (a, b)


def roundtrip(problem, roles_mapped=False):
    text = format_problem(problem)
    again = parse_text(text, language="native")
    same_problem(problem, again, roles_mapped)
    # printing is stable (role comments aside: the native reader maps other
    # TPTP roles to axiom)
    strip = lambda s: [l for l in s.splitlines() if not l.startswith("# ")]
    assert strip(format_problem(again)) == strip(text)
    return text


# ------------------------------------------------------------- fixtures

def test_fixture_problems_read_back():
    for path in ["robots/main.nj", "diamond/main.nj"]:
        roundtrip(load_problem(str(DATA / path)))


def test_tptp_problems_print_as_native_and_read_back():
    p = load_problem(str(DATA / "tptp" / "hall.p"), include_root=str(DATA / "tptp" / "lib"))
    text = roundtrip(p, roles_mapped=True)
    assert "axiom 'locker 7': locker(l7)" in text
    q = parse_text(
        "fof(a, axiom, ! [X] : (p(X, 'X', 'and', 'two words') <=> ~ (X = \"obj\"))).\n"
        "fof(d, definition, ! [X, Y] : (q(X) <= r(X, Y))).\n"
        "fof(l, lemma, p(a, b, c, d) <~> (p(a, b, c, d) ~| p(a, a, a, a))).\n"
        "cnf(n, negated_conjecture, ~ r(X, Y) | X = Y | '+'(X, Y) = f(Y, 12)).\n"
        "fof(infix_pred, axiom, '*'(a, b) & '7'(a) = b).\n"
        "fof(c, conjecture, $true => ~ $false).\n", name="x.p")
    text = roundtrip(q, roles_mapped=True)
    assert "'X'" in text and "'and'" in text and "'two words'" in text
    assert "# definition\naxiom d:" in text
    assert "negated_conjecture n:" in text


def test_printer_avoids_capture():
    # a constant named like a bound variable is quoted; shadowed names renamed
    f = Quant("forall", (0,), Atom(("p", 0, "x")))
    s = format_formula(f, {0: "x"})
    assert s == "forall x. p(x, 'x')"
    st_ = Statement("a", "axiom", Quant("forall", (0,), Quant("forall", (1,),
                    Atom(("p", 0, 1)))), {0: "x", 1: "x"})
    text = format_statement(st_)
    assert text == "axiom a: forall x. forall x_1. p(x, x_1)"
    assert parse_text(text).statements[0].same_as(st_)


def test_identifiers_and_quotes():
    assert is_identifier("a_1") and is_identifier("42") and is_identifier("αβ")
    assert not is_identifier("and") and not is_identifier("a b") and not is_identifier("1a")
    assert quote_name("it's") == "'it\\'s'"
    assert format_term(("f", "it's", ("+", "a", ("*", "b", "c")))) == "f('it\\'s', a + b * c)"
    f = parse_text("axiom a: p('it\\'s', '\\\\')").statements[0].formula
    assert f == Atom(("p", "it's", "\\"))


# --------------------------------------------------- random formulas

PREDS = {"p": 0, "q": 1, "r": 2, "x": 1}        # 'x' also a variable name below
FUNS = {"c": 0, "y": 0, "f": 1, "g": 2, "+": 2, "*": 2, "0": 0, "a b": 1,
        "e\x1b[2J\u202e\t\x7f\x9b\\'": 1}   # controls, bidi, tab, DEL, C1, escapes
VARNAMES = ["x", "y", "z", "f", "X"]


@st.composite
def terms(draw, bound, depth):
    choices = ["fun"] + (["var"] if bound else [])
    if draw(st.sampled_from(choices)) == "var":
        return draw(st.sampled_from(bound))
    name = draw(st.sampled_from(sorted(FUNS)))
    ar = FUNS[name]
    if ar and depth <= 0:
        name, ar = "c", 0
    if ar == 0:
        return name
    return (name, *[draw(terms(bound, depth - 1)) for _ in range(ar)])


@st.composite
def formulas(draw, bound, depth, counter):
    kinds = ["atom", "eq", "const"]
    if depth > 0:
        kinds += ["not", "and", "or", "implies", "iff", "quant", "quant"]
    k = draw(st.sampled_from(kinds))
    sub = lambda: draw(formulas(bound, depth - 1, counter))
    if k == "atom":
        name = draw(st.sampled_from(sorted(PREDS)))
        ar = PREDS[name]
        args = [draw(terms(bound, 2)) for _ in range(ar)]
        return Atom((name, *args) if ar else name)
    if k == "eq":
        return Atom(("=", draw(terms(bound, 2)), draw(terms(bound, 2))))
    if k == "const":
        return draw(st.sampled_from([TRUE, FALSE]))
    if k == "not":
        return Not(sub())
    if k in ("and", "or"):
        n = draw(st.integers(2, 3))
        args = tuple(sub() for _ in range(n))
        return And(args) if k == "and" else Or(args)
    if k == "implies":
        return Implies(sub(), sub())
    if k == "iff":
        return Iff(sub(), sub())
    n = draw(st.integers(1, 2))
    vs = []
    for _ in range(n):
        v = counter[0]
        counter[0] += 1
        counter[1][v] = draw(st.sampled_from(VARNAMES))
        vs.append(v)
    body = draw(formulas(bound + vs, depth - 1, counter))
    return Quant(draw(st.sampled_from(["forall", "exists"])), tuple(vs), body)


def renumber(f):
    """Number bound variables in binder order (the reader's numbering)."""
    m = {}

    def t(x):
        if type(x) is int:
            return m[x]
        if type(x) is tuple:
            return (x[0], *[t(a) for a in x[1:]])
        return x

    def go(g):
        if isinstance(g, Atom):
            return Atom(t(g.term))
        if isinstance(g, Not):
            return Not(go(g.arg))
        if isinstance(g, (And, Or)):
            return type(g)(tuple(go(a) for a in g.args))
        if isinstance(g, (Implies, Iff)):
            return type(g)(go(g.left), go(g.right))
        if isinstance(g, Quant):
            for v in g.vars:
                m[v] = len(m)
            return Quant(g.kind, tuple(m[v] for v in g.vars), go(g.body))
        return g
    return go(f)


@st.composite
def statements(draw):
    counter = [0, {}]
    f = draw(formulas([], 4, counter))
    role = draw(st.sampled_from(["axiom", "hypothesis", "conjecture"]))
    name = draw(st.sampled_from(["a1", "goal", "two words", "7", "n\x1b]0;x\x07"]))
    return Statement(name, role, f, counter[1])


@settings(max_examples=150, deadline=None)
@given(statements())
def test_random_formulas_read_back(stmt):
    text = format_statement(stmt)
    back = parse_text(text).statements[0]
    assert back.name == stmt.name and back.role == stmt.role
    assert back.formula == renumber(stmt.formula), text
    # and the printed form is a fixed point
    assert format_statement(back) == format_statement(Statement(
        back.name, back.role, back.formula, back.varnames))


@settings(max_examples=40, deadline=None)
@given(st.lists(statements(), min_size=1, max_size=4))
def test_random_problems_read_back(stmts):
    for i, s in enumerate(stmts):
        s.name = f"s{i}"
    p = Problem(stmts, {}, ["<gen>"])
    back = parse_text(format_problem(p))
    assert [s.name for s in back.statements] == [s.name for s in stmts]
    for a, b in zip(stmts, back.statements):
        assert b.formula == renumber(a.formula)


def test_degenerate_junctions_print_readably():
    # the readers never build these, other passes might
    assert format_formula(And(())) == "true" and format_formula(Or(())) == "false"
    f = And((Or((Atom("p"), Atom("q"))),))
    assert parse_text("axiom a: " + format_formula(f)).statements[0].formula == f.args[0]


def test_clause_printing_quotes_constants_spelled_like_its_variables():
    from worker.syntax.printer import format_clause
    lits = ((True, ("p", 0, "X0", "a")), (False, ("=", 1, "X1")), (False, "q"))
    assert format_clause(lits) == "p(X0, 'X0', a) or X1 != 'X1' or not q"
    assert format_clause(()) == "false"


RAW = ["\x1b", "\x07", "\x00", "\t", "\n", "\r", "\x7f", "\x9b", "\u202e", "\u2066",
       "\u2028", "\ud800"]


def test_names_with_control_characters_print_escaped_and_read_back():
    """A quoted name may carry an escape sequence or a bidi override (from a
    TPTP file, say); printed proofs, models and problems show it as
    \\u{HEX}, never raw, and the native reader reads that back."""
    nasty = "red\x1b[31m\u202egnp.exe\x7f\x9b\x00\tx\ud800"
    assert quote_name(nasty) == ("'red\\u{1B}[31m\\u{202E}gnp.exe\\u{7F}\\u{9B}"
                                 "\\u{0}\\u{9}x\\u{D800}'")
    for name in [nasty] + RAW + ["a\\u{1B}b", "it's\n"]:
        for text in (format_term(("f", name)), format_clause(((False, (name, 0)),)),
                     format_statement(Statement(name, "axiom", Atom((name, name)), {}))):
            assert not any(ch in text for ch in RAW), repr(text)
        back = parse_text(format_statement(Statement(name, "axiom", Atom(("p", name)),
                                                     {}))).statements[0]
        assert back.name == name and back.formula == Atom(("p", name))
    # from TPTP (where the quoted name holds the raw characters) to native and back
    p = parse_text("fof('a\x1b[0m', axiom, 'p\u202eq'('c\x07')).", name="x.p")
    text = roundtrip(p)
    assert "'a\\u{1B}[0m'" in text and "'p\\u{202E}q'('c\\u{7}')" in text
    assert not any(ch in text for ch in RAW if ch != "\n")


def test_a_malformed_character_escape_is_an_input_error_at_the_escape():
    from worker.syntax import InputError
    for bad in ("'a\\u{}'", "'a\\u{110000}'", "'a\\u{12'", "'a\\u{zz}'"):
        try:
            parse_text(f"axiom s: p({bad})")
        except InputError as e:
            assert "\\u{HEX}" in e.message and (e.span.line, e.span.col) == (1, 14)
        else:
            raise AssertionError(bad)
    # a backslash before other letters still just drops the backslash
    assert parse_text("axiom s: p('\\u\\x')").statements[0].formula == Atom(("p", "ux"))


def test_a_left_operand_of_the_same_operator_keeps_its_parentheses():
    """Associativity prints as people write it, and reads back the same."""
    text = "axiom assoc: forall x y z. (x * y) * z = x * (y * z)\n" \
           "axiom mixed: forall x y z. (x + y) + z = x * y + z * (x + y)\n"
    p = parse_text(text, "t.nj")
    printed = format_problem(p)
    assert "(x * y) * z = x * (y * z)" in printed
    assert "(x + y) + z = x * y + z * (x + y)" in printed
    roundtrip(p)
