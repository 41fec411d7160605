"""The native reader: grammar, variables, includes, readers and bundles."""

import os
from pathlib import Path

import pytest

from worker.syntax import (FALSE, TRUE, And, Atom, Iff, Implies, InputError, Not, Or,
                           Quant, bundle_reader, collect_bundle, disk_reader,
                           load_problem, parse_text)

DATA = Path(__file__).parent / "data" / "syntax"


def f1(text):
    """The formula of a one-statement text."""
    p = parse_text("axiom a: " + text)
    assert len(p.statements) == 1
    return p.statements[0].formula


P, Q, R = Atom("p"), Atom("q"), Atom("r")


# ------------------------------------------------------------ connectives

def test_precedence_loosest_first():
    assert f1("p iff q implies r") == Iff(P, Implies(Q, R))
    assert f1("p implies q or r") == Implies(P, Or((Q, R)))
    assert f1("p or q and r") == Or((P, And((Q, R))))
    assert f1("not p and q") == And((Not(P), Q))


def test_implies_is_right_associative_and_chains_flatten():
    assert f1("p -> q -> r") == Implies(P, Implies(Q, R))
    assert f1("p and q and r") == And((P, Q, R))
    # parentheses keep the structure the user wrote
    assert f1("(p and q) and r") == And((And((P, Q)), R))


def test_ascii_and_unicode_spellings_agree():
    ascii_ = f1("forall x. exists y. not p(x) | q(y) & r -> x != y <-> true")
    uni = f1("∀x. ∃y. ¬p(x) ∨ q(y) ∧ r → x ≠ y ↔ true")
    words = f1("forall x. exists y. not p(x) or q(y) and r implies not x = y iff true")
    assert ascii_ == uni == words


def test_quantifier_body_runs_as_far_right_as_it_can():
    f = f1("forall x. p(x) and q")
    assert isinstance(f, Quant) and f.body == And((Atom(("p", 0)), Q))
    g = f1("q and forall x. p(x) or r")
    assert g == And((Q, Quant("forall", (0,), Or((Atom(("p", 0)), R)))))


def test_several_variables_and_varnames():
    p = parse_text("axiom a: forall x y. exists z. f(x, y) = z")
    st = p.statements[0]
    assert st.formula == Quant("forall", (0, 1), Quant("exists", (2,),
                               Atom(("=", ("f", 0, 1), 2))))
    assert st.varnames == {0: "x", 1: "y", 2: "z"}


def test_infix_terms_precedence_and_associativity():
    assert f1("a + b * c = d") == Atom(("=", ("+", "a", ("*", "b", "c")), "d"))
    assert f1("a * b * c = d") == Atom(("=", ("*", ("*", "a", "b"), "c"), "d"))
    assert f1("a + b + c = d") == Atom(("=", ("+", ("+", "a", "b"), "c"), "d"))
    assert f1("a * (b + c) = d") == Atom(("=", ("*", "a", ("+", "b", "c")), "d"))


def test_parenthesis_opens_a_term_or_a_formula():
    assert f1("(x * y) = z") == Atom(("=", ("*", "x", "y"), "z"))
    assert f1("(p and q)") == And((P, Q))
    assert f1("((x)) = (y)") == Atom(("=", "x", "y"))
    assert f1("((p))") == P


def test_constants_true_false_numbers():
    assert f1("true and false") == And((TRUE, FALSE))
    assert f1("s(0) != 1") == Not(Atom(("=", ("s", "0"), "1")))


def test_outer_x_is_a_constant_when_not_bound():
    f = f1("(forall x. p(x, x)) implies p(x, x)")
    assert f == Implies(Quant("forall", (0,), Atom(("p", 0, 0))), Atom(("p", "x", "x")))


def test_shadowing_binds_the_innermost():
    f = f1("forall x. (p(x) and forall x. q(x))")
    assert f == Quant("forall", (0,), And((Atom(("p", 0)),
                                           Quant("forall", (1,), Atom(("q", 1))))))


def test_quoted_names_are_symbols_never_variables():
    f = f1("forall x. p(x, 'x', 'a b')")
    assert f == Quant("forall", (0,), Atom(("p", 0, "x", "a b")))


def test_statements_span_lines_with_comments_text_and_span():
    text = ("# intro\n"
            "axiom a1: p  # trailing comment\n"
            "   and q\n"
            "hypothesis h:\n"
            "  r\n"
            "conjecture c: p")
    p = parse_text(text, name="t.nj")
    a1, h, c = p.statements
    assert (a1.name, a1.role, h.role, c.role) == ("a1", "axiom", "hypothesis", "conjecture")
    assert a1.formula == And((P, Q))
    assert a1.text == "axiom a1: p  # trailing comment\n   and q"
    assert (a1.span.file, a1.span.line, a1.span.col) == ("t.nj", 2, 1)
    assert (h.span.line, c.span.line) == (4, 6)
    assert all(s.language == "native" for s in p.statements)
    assert p.obligations() == ["c"]


def test_signature_kinds_and_arities():
    p = parse_text("axiom a: forall x. p(f(x), c) and q\naxiom b: g(c) * c = c")
    sig = {n: (s.kind, s.arity) for n, s in p.signature.items()}
    assert sig == {"p": ("predicate", 2), "f": ("function", 1), "c": ("function", 0),
                   "q": ("predicate", 0), "g": ("function", 1), "*": ("function", 2)}


def test_the_colleague_example():
    p = load_problem(str(DATA / "robots" / "main.nj"))
    assert [s.name for s in p.statements] == ["fleet", "h1", "a1", "a2", "c1"]
    assert p.files[0].endswith("robots/main.nj") and p.files[1].endswith("robots/common.nj")
    a2 = p.statement("a2")
    assert a2.formula == Quant("forall", (0, 1), Atom(("=", ("*", 0, ("+", 1, "0")),
                                                       ("*", 0, 1))))
    assert p.statement("c1").text == "conjecture c1:\n  exists d. dock(d)"
    assert p.statement("fleet").span.file.endswith("common.nj")


# ---------------------------------------------------------------- includes

def test_diamond_includes_read_the_shared_file_once():
    p = load_problem(str(DATA / "diamond" / "main.nj"))
    assert [s.name for s in p.statements] == ["base", "left", "right", "top"]


def test_include_cycle_is_an_error_at_the_include():
    with pytest.raises(InputError) as e:
        load_problem(str(DATA / "cycle" / "a.nj"))
    msg = e.value.render()
    assert "include cycle" in msg and "a.nj -> " in msg and "b.nj" in msg
    assert e.value.span.file.endswith("b.nj") and e.value.span.line == 1


def test_bundle_gives_the_same_problem_without_a_disk():
    main = DATA / "robots" / "main.nj"
    bundle = collect_bundle(str(main))
    assert list(bundle) == ["main.nj", "common.nj"]
    local = load_problem(str(main))
    remote = load_problem("main.nj", bundle_reader(bundle))
    assert len(local.statements) == len(remote.statements)
    assert all(a.same_as(b) for a, b in zip(local.statements, remote.statements))
    assert remote.files == ["main.nj", "common.nj"]


def test_bundle_with_includes_outside_the_main_folder(tmp_path):
    (tmp_path / "shared").mkdir()
    (tmp_path / "work").mkdir()
    (tmp_path / "shared" / "lib.nj").write_text("axiom lib: p\n")
    (tmp_path / "work" / "main.nj").write_text('include "../shared/lib.nj"\nconjecture c: p\n')
    bundle = collect_bundle(str(tmp_path / "work" / "main.nj"))
    assert set(bundle) == {"main.nj", "../shared/lib.nj"}
    p = load_problem("main.nj", bundle_reader(bundle))
    assert [s.name for s in p.statements] == ["lib", "c"]


def test_bundle_reader_refuses_paths_outside_the_bundle():
    bundle = {"main.nj": 'include "../../etc/passwd"\naxiom a: p\n'}
    with pytest.raises(InputError) as e:
        load_problem("main.nj", bundle_reader(bundle))
    assert "outside the bundle" in e.value.message
    assert e.value.span.line == 1 and e.value.span.col == 9
    bundle = {"main.nj": 'include "/etc/hostname"\naxiom a: p\n'}
    with pytest.raises(InputError, match="outside the bundle"):
        load_problem("main.nj", bundle_reader(bundle))


def test_axiom_library_is_confined_even_through_symlinks(tmp_path):
    lib = tmp_path / "lib"
    lib.mkdir()
    (lib / "ok.nj").write_text("axiom ok: p\n")
    secret = tmp_path / "secret.nj"
    secret.write_text("axiom secret: q\n")
    os.symlink(secret, lib / "link.nj")
    read = bundle_reader({"m.nj": 'include "ok.nj"\nconjecture c: p\n'}, library=str(lib))
    p = load_problem("m.nj", read, include_root=str(lib))
    assert [s.name for s in p.statements] == ["ok", "c"]
    read = bundle_reader({"m.nj": 'include "link.nj"\n'}, library=str(lib))
    with pytest.raises(InputError, match="outside"):
        load_problem("m.nj", read, include_root=str(lib))
    read = bundle_reader({"m.nj": 'include "../secret.nj"\n'}, library=str(lib))
    with pytest.raises(InputError):
        load_problem("m.nj", read, include_root=str(lib))


def test_disk_reader_with_root_refuses_escapes(tmp_path):
    (tmp_path / "a.nj").write_text('include "../x.nj"\naxiom a: p\n')
    (tmp_path.parent / "x.nj").write_text("axiom x: p\n")
    with pytest.raises(InputError, match="outside"):
        load_problem(str(tmp_path / "a.nj"), disk_reader(root=str(tmp_path)))


def test_parse_text_refuses_includes():
    with pytest.raises(InputError, match="cannot be included"):
        parse_text('include "x.nj"\naxiom a: p')


def test_language_told_apart_and_forced():
    assert parse_text("axiom a: p").language == "native"
    assert parse_text("fof(a, axiom, p).").language == "tptp"
    with pytest.raises(InputError):
        parse_text("fof(a, axiom, p).", language="native")
    assert parse_text("# only a comment\naxiom a: p", name="x.p").language == "native"


# ------------------------------------------------------- byte-order mark

BOM = "\ufeff"


def test_a_leading_byte_order_mark_is_not_part_of_the_text(tmp_path):
    text = "axiom a: p(b)\r\nconjecture c: p(b)\n"
    (tmp_path / "bom.nj").write_bytes(BOM.encode() + text.encode())
    (tmp_path / "plain.nj").write_text(text)
    with_bom = load_problem(str(tmp_path / "bom.nj"))
    plain = load_problem(str(tmp_path / "plain.nj"))
    assert [s.formula for s in with_bom.statements] == [s.formula for s in plain.statements]
    assert with_bom.statements[0].span.col == 1 and with_bom.statements[0].text == "axiom a: p(b)"
    # the same through a bundle (an uploaded text keeps its mark) and on its own
    bundle = collect_bundle(str(tmp_path / "bom.nj"))
    assert not bundle["bom.nj"].startswith(BOM)
    for p in (load_problem("bom.nj", bundle_reader({"bom.nj": BOM + text})),
              load_problem("m.nj", bundle_reader({"m.nj": BOM + 'include "i.nj"\n',
                                                  "i.nj": BOM + text})),
              parse_text(BOM + text)):
        assert [s.formula for s in p.statements] == [s.formula for s in plain.statements]


def test_columns_of_line_one_count_without_the_byte_order_mark(tmp_path):
    (tmp_path / "bom.nj").write_bytes(BOM.encode() + b"axiom a: p @ q\n")
    with pytest.raises(InputError) as e:
        load_problem(str(tmp_path / "bom.nj"))
    assert "'@'" in e.value.message and (e.value.span.line, e.value.span.col) == (1, 12)
    assert e.value.render().splitlines()[1] == "    axiom a: p @ q"
    (tmp_path / "bad.nj").write_bytes(BOM.encode() + b"axiom a: caf\xe9\n")
    with pytest.raises(InputError) as e:
        load_problem(str(tmp_path / "bad.nj"))
    assert "not UTF-8" in e.value.message and (e.value.span.line, e.value.span.col) == (1, 13)
    with pytest.raises(InputError) as e:      # only a leading mark is skipped
        parse_text("axiom a: p and " + BOM + "q")
    assert "U+FEFF" in e.value.message and e.value.span.col == 16
