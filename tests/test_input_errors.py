"""Every bad input gets a message in plain words with file:line:col, the line
and a caret, and the command line exits 1 without a traceback."""

from pathlib import Path

import pytest

from service.cli import main as cli_main
from worker.syntax import (MAX_DEPTH, InputError, LimitError, bundle_reader,
                           load_problem, parse_text, require_conjecture)

DATA = Path(__file__).parent / "data" / "syntax"


def error_of(text, name="x.nj", **kw) -> InputError:
    with pytest.raises(InputError) as e:
        parse_text(text, name=name, **kw)
    return e.value


def where(e: InputError):
    return (e.span.line, e.span.col)


def caret_col(e: InputError) -> int:
    """The column the caret of the rendered message points at."""
    lines = e.render().splitlines()
    caret = next(l for l in lines[2:] if l.strip() == "^")
    return len(caret) - len("    ")


# (text, expected words in the message, line, col)
CASES = [
    ("axiom a: p @ q", "unknown character '@'", 1, 12),
    ("axiom a: (p and q", "unbalanced brackets: expected ')' to close the '(' at line 1, "
     "column 10", 1, 18),
    ("axiom a: p and q)", "unbalanced brackets: this ')' has no matching '('", 1, 17),
    ("axiom a: p and", "missing operand: expected a formula after 'and'", 1, 15),
    ("axiom a: p and\naxiom b: q", "missing operand: expected a formula after 'and', "
     "found the keyword 'axiom'", 2, 1),
    ("axiom a: a = ", "missing operand: expected a term after '='", 1, 13),
    ("axoim a: p", "unknown keyword 'axoim'; did you mean 'axiom'?", 1, 1),
    ("axiom a: p\nconjecure c: q", "unknown keyword 'conjecure'; did you mean 'conjecture'?",
     2, 1),
    ("axiom a: foral x. p(x)", "did you mean 'forall'?", 1, 10),
    ("axiom a: p adn q", "unknown connective 'adn'; did you mean 'and'?", 1, 12),
    ("axiom a: p(a) and p(a, b)", "'p' is used here as a predicate of 2 arguments, but at "
     "x.nj:1:10 as a predicate of 1 argument", 1, 19),
    ("axiom a: f(a) = b\naxiom b: f(c)", "as both a function and a predicate", 2, 10),
    ("axiom a: forall f. f(a)", "a variable cannot be applied to arguments", 1, 20),
    ("axiom a: forall x. x", "the variable 'x' stands for an individual", 1, 20),
    ("axiom a: x * y", "a formula is expected", 1, 12),
    ("axiom a: p\naxiom a: q", "duplicate statement name 'a': it already names the "
     "statement at x.nj:1:1", 2, 1),
    ("axiom a: p iff q iff r", "'iff' is not associative", 1, 18),
    ("axiom a: a = b = c", "equations cannot be chained", 1, 16),
    ("axiom a p", "expected ':' after the statement name 'a'", 1, 9),
    ("axiom and: p", "'and' is a reserved word", 1, 7),
    ("axiom a: forall x: p(x)", "expected '.' after the variables of 'forall'", 1, 18),
    ("axiom a: f() = a", "empty argument list", 1, 12),
    ("axiom a: p 'open", "unterminated quote", 1, 12),
    # operators of other notations: what to write instead
    ("axiom a: p(x) => q(x)", "'=>' is not an operator here; write 'implies' (or '->', "
     "'→')", 1, 15),
    ("axiom a: p <=> q", "'<=>' is not an operator here; write 'iff' (or '<->', '↔')",
     1, 12),
    ("axiom a: p <= q", "'<=' is not an operator here; for 'p <= q' write 'q implies p'",
     1, 12),
    ("axiom a: p <~> q", "for 'p <~> q' write 'not (p iff q)'", 1, 12),
    ("axiom a: a == b", "'==' is not an operator here; an equation is written with one "
     "'='", 1, 12),
    ("axiom a: p=>q", "'=>' is not an operator here", 1, 11),
    # TPTP statements in a native file
    ("axiom a: p(a)\nfof(b, axiom, q).", "this looks like a TPTP statement ('fof(...)'), "
     "but the file is read as the native language", 2, 1),
    ("axiom a: p and q\n  cnf(b, axiom, q).", "looks like a TPTP statement ('cnf(...)')",
     2, 3),
    ("axiom a: p\ntff(b, axiom, q).", "looks like a TPTP statement ('tff(...)')", 2, 1),
    ("axiom a: p\ninclude('Axioms/SET001-0.ax').", "looks like a TPTP statement "
     "('include(...)')", 2, 1),
    ("", "the file is empty", 1, 1),
    ("# nothing here\n", "without statements", 1, 1),
]


@pytest.mark.parametrize("text,words,line,col", CASES)
def test_native_error_messages(text, words, line, col):
    e = error_of(text)
    assert words in e.message
    assert where(e) == (line, col)
    rendered = e.render()
    assert rendered.startswith(f"x.nj:{line}:{col}: error: ")
    assert caret_col(e) == col


TPTP_CASES = [
    ("fof(a, axoim, p).", "unknown role 'axoim'; did you mean 'axiom'?", 1, 8),
    ("foff(a, axiom, p).", "unknown kind of statement 'foff'; did you mean 'fof'?", 1, 1),
    ("fof(a, axiom, p(X)).", "the variable 'X' is not bound", 1, 17),
    ("fof(a, axiom, (p & q).", "unbalanced brackets", 1, 22),
    ("fof(a, axiom, p & ).", "missing operand", 1, 19),
    ("fof(a, axiom, p(a) & p(a,b)).", "with two arities", 1, 22),
    ("fof(a, axiom, p).\ntff(b, axiom, p).", "typed TPTP dialect 'tff' is not supported", 2, 1),
    ("fof(a, axiom, $less(a, b)).", "'$less' is not supported", 1, 15),
    ("fof(a, axiom, p).\n/* open", "unterminated comment", 2, 1),
    ("fof(a, axiom, p & q | r).", "needs parentheses", 1, 21),
    ("fof(a, axiom, p).\nfof(a, axiom, q).", "duplicate statement name 'a'", 2, 1),
]


@pytest.mark.parametrize("text,words,line,col", TPTP_CASES)
def test_tptp_error_messages(text, words, line, col):
    e = error_of(text, name="x.p")
    assert words in e.message
    assert where(e) == (line, col)
    assert e.render().startswith(f"x.p:{line}:{col}: error: ")


def test_missing_include_names_the_include():
    read = bundle_reader({"m.nj": 'axiom a: p\ninclude "nothere.nj"\n'})
    with pytest.raises(InputError) as e:
        load_problem("m.nj", read)
    assert "include file 'nothere.nj' not found" in e.value.message
    assert (e.value.span.file, *where(e.value)) == ("m.nj", 2, 9)


def test_include_cycle_names_the_chain():
    with pytest.raises(InputError) as e:
        load_problem(str(DATA / "cycle" / "a.nj"))
    assert "include cycle" in e.value.message


def test_arity_clash_across_files_names_the_first_use():
    read = bundle_reader({"m.nj": 'include "lib.nj"\naxiom a: q(b, c)\n',
                          "lib.nj": "axiom l: q(b)\n"})
    with pytest.raises(InputError) as e:
        load_problem("m.nj", read)
    assert "but at lib.nj:1:10 as a predicate of 1 argument" in e.value.message
    assert e.value.span.file == "m.nj"


def test_require_conjecture():
    p = parse_text("axiom a: p", name="x.nj")
    with pytest.raises(InputError) as e:
        require_conjecture(p)
    assert "has no conjecture" in e.value.message and e.value.span.file == "x.nj"
    require_conjecture(parse_text("conjecture c: p"))   # fine


@pytest.mark.parametrize("build", [
    lambda n: "axiom a: " + "(" * n + "p" + ")" * n,
    lambda n: "axiom a: " + "not " * n + "p",
    lambda n: "axiom a: " + "p -> " * n + "p",
    lambda n: "axiom a: " + "forall x. " * n + "p(x)",
    lambda n: "axiom a: p(" + "f(" * n + "c" + ")" * n + ")",
    lambda n: "axiom a: c = " + " + ".join(["c"] * n),
    lambda n: "fof(a, axiom, " + "(" * n + "p" + ")" * n + ").",
    lambda n: "fof(a, axiom, " + "~ " * n + "p).",
    lambda n: "fof(a, axiom, p(" + "f(" * n + "c" + ")" * n + ")).",
])
def test_deep_nesting_is_refused_with_the_limit(build):
    with pytest.raises(LimitError) as e:
        parse_text(build(100_000))
    assert "nested too deeply" in e.value.message and f"{MAX_DEPTH:,}" in e.value.message


def test_nesting_just_under_the_limit_is_read_and_printed():
    from worker.syntax.printer import format_problem
    n = MAX_DEPTH - 10
    for text in ["(" * n + "p(c)" + ")" * n,
                 "p(" + "f(" * n + "c" + ")" * (n + 1),
                 "c = " + " + ".join(["c"] * n),
                 "not " * n + "p",
                 "p -> " * n + "p",
                 "forall x. " * n + "p(x)"]:
        p = parse_text("axiom a: " + text)
        q = parse_text(format_problem(p))
        assert q.statements[0].same_as(p.statements[0])


def test_long_flat_formulas_are_fine():
    p = parse_text("axiom a: " + " and ".join(f"p{i}" for i in range(100_000)))
    assert len(p.statements[0].formula.args) == 100_000


def test_a_50_mb_file_is_refused_with_the_limit(tmp_path):
    big = tmp_path / "big.nj"
    with open(big, "w") as fh:
        line = "axiom a: p\n" * 1000
        for _ in range(50_000_000 // len(line) + 1):
            fh.write(line)
    with pytest.raises(LimitError) as e:
        load_problem(str(big))
    assert "20,000,000" in e.value.message and "20 MB" in e.value.message
    e2 = error_of("axiom a: p\n" * 2_000_000)
    assert isinstance(e2, LimitError)


def test_bundle_limit():
    part = "# " + "x" * 16_500_000 + "\n"      # 16.5 MB each, under the file limit
    files = {"m.nj": "".join(f'include "f{i}.nj"\n' for i in range(4))}
    for i in range(4):
        files[f"f{i}.nj"] = part
    with pytest.raises(LimitError, match="50 MB"):
        load_problem("m.nj", bundle_reader(files))


# ------------------------------------------------------ the command line

def run(argv, capsys):
    code = cli_main(argv)
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


@pytest.mark.parametrize("text,words", [
    ("axoim a: p\n", "did you mean 'axiom'?"),
    ("axiom a: (p\n", "unbalanced brackets"),
    ("axiom a: p and\n", "missing operand"),
    ("axiom a: p(a) and p\n", "two arities"),
    ("axiom a: p ? q\n", "unknown character"),
    ("", "the file is empty"),
])
def test_cli_exit_code_1_with_location(tmp_path, capsys, text, words):
    f = tmp_path / "bad.nj"
    f.write_text(text)
    code, out, err = run(["check", str(f)], capsys)
    assert code == 1
    assert words in err and f"{f}:1:" in err and "^" in err


def test_cli_missing_file_and_include(tmp_path, capsys):
    code, out, err = run(["check", str(tmp_path / "none.nj")], capsys)
    assert code == 1 and "no such file" in err
    f = tmp_path / "m.nj"
    f.write_text('include "gone.nj"\n')
    code, out, err = run(["check", str(f)], capsys)
    assert code == 1 and f"{f}:1:9: error: include file 'gone.nj' not found" in err


def test_cli_cycle_and_require_conjecture(tmp_path, capsys):
    code, out, err = run(["check", str(DATA / "cycle" / "a.nj")], capsys)
    assert code == 1 and "include cycle" in err
    f = tmp_path / "noconj.nj"
    f.write_text("axiom a: p\n")
    assert run(["check", str(f)], capsys)[0] == 0
    code, out, err = run(["check", "--require-conjecture", str(f)], capsys)
    assert code == 1 and "has no conjecture" in err


def test_cli_deep_nesting_is_an_input_error(tmp_path, capsys):
    f = tmp_path / "deep.nj"
    f.write_text("axiom a: " + "(" * 100_000 + "p" + ")" * 100_000 + "\n")
    code, out, err = run(["check", str(f)], capsys)
    assert code == 1 and "nested too deeply" in err


def test_cli_usage_error_is_exit_2(capsys):
    with pytest.raises(SystemExit) as e:
        cli_main(["check", "--language", "klingon", "x.nj"])
    assert e.value.code == 2


# ------------------------------------------------------------- fuzzing

from hypothesis import given, settings, strategies as hst  # noqa: E402

from worker.syntax.printer import format_problem  # noqa: E402

NATIVE_PIECES = ["axiom", "conjecture", "hypothesis", "negated_conjecture", "include",
                 " ", "\n", "a", "x", "f", "p", "(", ")", ",", ".", ":", "forall",
                 "exists", "not", "and", "or", "implies", "iff", "->", "<->", "=", "!=",
                 "*", "+", "0", "'q r'", "'", '"', '"f.nj"', "#c\n", "true", "false",
                 "¬", "∀", "≠", "@", "~", "&", "|"]
TPTP_PIECES = ["fof", "cnf", "tff", "include", "(", ")", "[", "]", ",", ".", ":", "!",
               "?", "~", "&", "|", "=>", "<=", "<=>", "<~>", "~|", "~&", "=", "!=", "X",
               "Y", "a", "f", "p", "axiom", "conjecture", "negated_conjecture", "'x y'",
               "'", "$true", "$false", "$less", "%c\n", "/*", "*/", " ", "\n", "12",
               '"d"', "lemma"]


@settings(max_examples=300, deadline=None)
@given(hst.sampled_from(["", "axiom a: ", "fof(a, axiom, "]),
       hst.lists(hst.sampled_from(NATIVE_PIECES + TPTP_PIECES), max_size=25),
       hst.lists(hst.booleans(), min_size=25, max_size=25))
def test_token_soup_gives_an_input_error_or_a_problem_that_reads_back(head, pieces, spaces):
    """Whatever the text, the reader either reads it (and then its native
    printing reads back the same) or raises an InputError that renders;
    never another exception.  (A run of 200,000 such inputs found none.)"""
    text = head + "".join(p + (" " if s else "") for p, s in zip(pieces, spaces))
    try:
        p = parse_text(text)
    except InputError as e:
        assert e.render().count("error:") == 1
        return
    q = parse_text(format_problem(p), language="native")
    assert [s.formula for s in p.statements] == [s.formula for s in q.statements]


def test_non_utf8_file_points_at_the_bad_byte(tmp_path, capsys):
    f = tmp_path / "latin.nj"
    f.write_bytes(b"axiom a: p\naxiom b: caf\xe9\n")
    with pytest.raises(InputError) as e:
        load_problem(str(f))
    assert "not UTF-8" in e.value.message and where(e.value) == (2, 13)
    m = tmp_path / "m.nj"
    m.write_text('include "latin.nj"\n')
    code, out, err = run(["check", str(m)], capsys)
    assert code == 1 and f"{f}:2:13: error: the file is not UTF-8 text" in err


def test_a_folder_is_not_a_file(tmp_path, capsys):
    code, out, err = run(["check", str(tmp_path)], capsys)
    # no line in a folder to point at: one nightjar: line, as prove and submit
    assert code == 1 and err == f"nightjar: cannot read '{tmp_path}': it is a folder, not a file\n"


@pytest.mark.parametrize("text,hint", [
    ("axiom a: forall x, y. p(x, y)", "not commas: forall x y. FORMULA"),
    ("axiom a: forall x y p(x)", "write forall x y. p..."),
    ("axiom a: exists x x = x", "write exists x. x..."),
])
def test_quantifier_slips_get_a_hint(text, hint):
    e = error_of(text)
    assert "expected '.' after the variables" in e.message and hint in e.hint


# ------------------------------------------- argument lists, both readers

@pytest.mark.parametrize("text,name,words,line,col", [
    ("axiom a: p(a b)", "x.nj", "expected ',' or ')' in the arguments of 'p' (opened at "
     "line 1, column 11), found the name 'b'", 1, 14),
    ("axiom a: p(f(a, b c))", "x.nj", "expected ',' or ')' in the arguments of 'f' "
     "(opened at line 1, column 13), found the name 'c'", 1, 19),
    ("axiom a: p(a,\n  b", "x.nj", "unbalanced brackets: expected ',' or ')' in the "
     "arguments of 'p' (opened at line 1, column 11), found the end of the file", 2, 4),
    ("fof(a, axiom, p(a b)).", "x.p", "expected ',' or ')' in the arguments of 'p' "
     "(opened at line 1, column 16), found the name 'b'", 1, 19),
    ("fof(a, axiom, p(f(a, b c))).", "x.p", "expected ',' or ')' in the arguments of "
     "'f' (opened at line 1, column 18), found the name 'c'", 1, 24),
    ("fof(a, axiom, p(a,\n  b", "x.p", "unbalanced brackets: expected ',' or ')' in "
     "the arguments of 'p' (opened at line 1, column 16), found", 2, 4),
    # a gap in the list: the message names the token just before it
    ("axiom a: p(a,,b)", "x.nj", "missing argument: expected an argument of 'p' after "
     "the ',' (at line 1, column 13), found ','", 1, 14),
    ("fof(a, axiom, p(a,,b)).", "x.p", "missing argument: expected an argument of 'p' "
     "after the ',' (at line 1, column 18), found ','", 1, 19),
    ("axiom a: p(f(a, ), b)", "x.nj", "expected an argument of 'f' after the ',' (at "
     "line 1, column 15), found ')'", 1, 17),
    ("fof(a, axiom, p(f(a, ), b)).", "x.p", "expected an argument of 'f' after the ',' "
     "(at line 1, column 20), found ')'", 1, 22),
    ("axiom a: p(,b)", "x.nj", "missing argument: expected an argument of 'p' after "
     "the '(', found ','", 1, 12),
    ("fof(a, axiom, p(,b)).", "x.p", "missing argument: expected an argument of 'p' "
     "after the '(', found ','", 1, 17),
])
def test_argument_list_errors_read_alike_in_both_languages(text, name, words, line, col):
    e = error_of(text, name=name)
    assert words in e.message
    assert where(e) == (line, col)
    assert e.render().startswith(f"{name}:{line}:{col}: error: ")
    assert caret_col(e) == col


def test_one_argument_list_reader_serves_both_languages():
    """The ',' / ')' step after an argument and its message are one piece of
    code (worker/syntax/cursor.py), not a copy in each reader."""
    from worker.syntax.cursor import TokenCursor
    from worker.syntax.native import NativeParser
    from worker.syntax.tptp import TptpParser
    for cls in (NativeParser, TptpParser):
        assert issubclass(cls, TokenCursor)
        assert cls.next_argument is TokenCursor.next_argument
        assert "next_argument" not in vars(cls)


# --------------------------------- what does not print is not echoed raw

UNPRINTABLE = [chr(c) for c in range(0x20) if c != 9] + ["\x7f"] + \
    [chr(c) for c in range(0x80, 0xA0)] + ["\u202a", "\u202e", "\u2066", "\u2069",
                                          "\u200b", "\u2028", "\ufeff", "\ud800"]


def raw_free(text: str) -> bool:
    return not any(ch in text for ch in UNPRINTABLE if ch != "\n")


@pytest.mark.parametrize("text,words,col", [
    ("axiom a: \x1b[31mRED", "unknown character '\u241b' (U+001B)", 10),
    ("axiom a: p \x9b2J", "unknown character '?' (U+009B)", 12),
    ("axiom a: p \u202e and q", "unknown character '?' (U+202E)", 12),
    ("axiom a: p \u2066 q", "unknown character '?' (U+2066)", 12),
    ("axiom a: \x7f", "unknown character '\u2421' (U+007F)", 10),
    ("axiom a:\tp('\x1b[2J\x07'\t\t@)", "unknown character '@'", 21),
    ("axiom a: p('x\x1b]0;pwned\x07') and\r\n", "missing operand", 30),
])
def test_control_characters_are_shown_as_stand_ins(text, words, col):
    e = error_of(text)
    shown = e.render()
    assert words in shown and raw_free(shown), repr(shown)
    assert caret_col(e) == col == e.span.col
    line = shown.splitlines()[1][4:]
    assert len(line) == len(text.split("\n")[0].rstrip("\r"))   # one column each
    assert raw_free(e.to_json()["text"]) and raw_free(e.to_json()["message"])


def test_quoted_names_in_messages_are_shown_as_stand_ins():
    e = error_of("axiom a: 'r\x1b[8m\u202e'(a) and 'r\x1b[8m\u202e'(a, b)")
    assert "'r\x1b[8m\u202e' is used here" in e.message     # the data is kept
    shown = e.render()
    assert "'r\u241b[8m?' is used here" in shown and raw_free(shown)
    e = error_of("fof('n\x1b[1m', axiom, p).\nfof('n\x1b[1m', axiom, q).", name="x.p")
    assert "duplicate statement name 'n\u241b[1m'" in e.render()
    assert raw_free(e.render())


def test_every_unprintable_character_renders_visibly():
    for ch in UNPRINTABLE:
        if ch in "\n\r\t\x0b\x0c":
            continue
        for text, name in ((f"axiom a: p {ch} q", "x.nj"), (f"fof(a, axiom, {ch}).", "x.p")):
            try:
                parse_text(text, name=name)
            except InputError as e:
                shown = e.render()
                assert raw_free(shown), (ch, shown)
                assert caret_col(e) == e.span.col
            else:
                assert ch == "\ufeff"   # nothing else is read


def test_a_file_name_with_control_characters_is_shown_visibly(tmp_path):
    f = tmp_path / "evil\x1b[2J.nj"
    f.write_text("axiom a: p @\n")
    with pytest.raises(InputError) as e:
        load_problem(str(f))
    assert e.value.span.file == str(f)
    assert "evil\u241b[2J.nj:1:12: error:" in e.value.render()
    assert raw_free(e.value.render())


def test_a_tptp_statement_in_a_native_file_says_how_the_language_is_chosen(tmp_path):
    e = error_of("conjecture c: p\nfof(b, axiom, p).")
    assert "unknown connective" not in e.message and "did you mean" not in e.message
    assert "first statement" in e.hint and ".p" in e.hint and "--language" in e.hint
    e = error_of("fof(b, axiom, p).", name="x.p", language="native")
    assert "looks like a TPTP statement ('fof(...)')" in e.message
    assert "forced to native (--language native)" in e.hint
    # a name spelled like a TPTP kind is still a name where it is no statement
    assert parse_text("axiom a: fof(x) and cnf").statements[0].formula is not None
    # told apart per file, a TPTP file included from a native one is fine
    (tmp_path / "ax.p").write_text("fof(b, axiom, p).\n")
    (tmp_path / "m.nj").write_text('include "ax.p"\nconjecture c: p\n')
    assert [s.name for s in load_problem(str(tmp_path / "m.nj")).statements] == ["b", "c"]
