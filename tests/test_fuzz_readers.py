"""Fuzzing the native and TPTP readers (hypothesis).

Every input, however broken, must end in one of two ways: a ``Problem``, or an
``InputError`` whose ``render()`` names the place (``file:line:col``).  Any
other exception (a traceback for the user), or taking longer than
``HANG_SECONDS``, fails the test.

Two kinds of input, for each reader:

* grammar-aware: statements built from the language's own grammar (every
  connective spelling, quantifiers, terms with ``+``/``*``, comments, deep
  nesting), with a share of them corrupted by splicing in stray tokens;
* mutations: byte-level edits (delete, insert, overwrite, duplicate, swap
  halves) of valid seed problems, decoded as UTF-8 with replacement.

At least 10,000 inputs per reader in CI (``FUZZ_EXAMPLES`` per test, 5,000 by
default, two tests per reader).  ``NIGHTJAR_FUZZ_EXAMPLES=N`` raises it and
``NIGHTJAR_FUZZ_RANDOM=1`` draws fresh random inputs instead of the fixed
CI sequence (``python3 bootstrap.py soak`` does both).
"""

from __future__ import annotations

import os
import random
import signal

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from worker.syntax import parse_text
from worker.syntax.errors import InputError

FUZZ_EXAMPLES = int(os.environ.get("NIGHTJAR_FUZZ_EXAMPLES", "5000"))
HANG_SECONDS = 5.0
FUZZ = settings(
    max_examples=FUZZ_EXAMPLES,
    deadline=None,                       # hangs are caught by the alarm below
    derandomize=os.environ.get("NIGHTJAR_FUZZ_RANDOM") != "1",
    database=None,
    suppress_health_check=list(HealthCheck),
    print_blob=True,
)


class Hang(Exception):
    pass


def _alarm(signum, frame):
    raise Hang(f"the reader ran longer than {HANG_SECONDS} s")


@pytest.fixture(autouse=True, scope="module")
def _alarm_handler():
    old = signal.signal(signal.SIGALRM, _alarm)
    yield
    signal.setitimer(signal.ITIMER_REAL, 0)
    signal.signal(signal.SIGALRM, old)


COUNTS: dict[str, int] = {}      # test name -> inputs read, for the summary test


def read_once(text: str, language: str | None, tally: str | None = None) -> None:
    """Run the reader on ``text``; fail on anything but Problem or InputError."""
    if tally:
        COUNTS[tally] = COUNTS.get(tally, 0) + 1
    signal.setitimer(signal.ITIMER_REAL, HANG_SECONDS)
    try:
        problem = parse_text(text, name="fuzz.p", language=language)
    except InputError as e:
        signal.setitimer(signal.ITIMER_REAL, 0)
        shown = e.render()
        assert isinstance(shown, str) and "error:" in shown
        assert e.span is not None, f"an input error without its place: {shown!r}"
        assert shown.startswith(f"fuzz.p:{e.span.line}:{e.span.col}: ") or \
            shown.startswith(f"{e.span.file}:{e.span.line}:{e.span.col}: "), shown
        assert e.span.line >= 1 and e.span.col >= 1, shown
        return
    except Hang:
        pytest.fail(f"reader hung on {text[:300]!r}...")
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
    assert problem is not None
    assert isinstance(problem.statements, (list, tuple))


# --------------------------------------------------------------------- seeds

NATIVE_SEEDS = [
    """# groups
axiom assoc: forall x y z. (x * y) * z = x * (y * z)
axiom unit:  forall x. e * x = x and x * e = x
axiom inv:   forall x. i(x) * x = e
conjecture right_inv: forall x. x * i(x) = e
""",
    """axiom a1: p(a) | q(b)
axiom a2: ~p(a) -> r
hypothesis h: forall x. (r <-> exists y. s(x, y))
conjecture c: q(b) ∨ r ∧ ¬false
""",
    """axiom ord: ∀ x y. le(x, y) ∧ le(y, x) → x = y
axiom tot: ∀ x y. le(x, y) or le(y, x)
conjecture refl:
    forall x.
        le(x, x)
""",
    """axiom plus0: forall x. x + 0 = x
axiom plusS: forall x y. x + s(y) = s(x + y)
conjecture one: s(0) + s(0) != s(s(s(0)))
""",
    "axiom t: true\nconjecture f: (forall x. p(x, x)) implies p(x, x)\n",
]

TPTP_SEEDS = [
    """% a small group theory problem
fof(assoc, axiom, ! [X, Y, Z] : mult(mult(X, Y), Z) = mult(X, mult(Y, Z))).
fof(left_unit, axiom, ! [X] : mult(e, X) = X).
fof(left_inv, axiom, ! [X] : mult(inv(X), X) = e).
fof(right_unit, conjecture, ! [X] : mult(X, e) = X).
""",
    """cnf(c1, axiom, (p(X) | ~q(X, a))).
cnf(c2, axiom, q(b, a)).
cnf(c3, negated_conjecture, ~p(b)).
""",
    """/* block comment */
fof(d1, definition, ! [X] : (big(X) <=> ? [Y] : (Y != X & less(X, Y)))).
fof(h1, hypothesis, (a => b) & (b <= c) & (c <~> d)).
fof(h2, lemma, ~ (a ~| b) | (a ~& b)).
fof(goal, conjecture, $true & ~ $false).
""",
    """fof('quoted name', axiom, r('A b', "distinct")).
fof(n2, axiom, ! [X] : (p(X) => q(f(X, g(X))))).
fof(n3, conjecture, ? [Y] : q(Y)).
""",
]


# ------------------------------------------------------- native grammar
#
# The grammar generators are plain functions of a seeded random.Random (the
# seed is what hypothesis draws): hypothesis's own recursive strategies cost
# ~90 ms per problem here, these ~0.1 ms, which is what makes 10,000 inputs per
# reader fit in CI.  A failing seed is printed by hypothesis and replays.

NAMES = ["a", "b", "c", "e", "x", "y", "z", "0", "1", "_k", "x1", "s"] * 4 + \
    ["axiom", "forall", "true", "iff"]          # some reserved words on purpose
VARS = ["x", "y", "z", "u", "v", "w"]
# Mostly tagged with their arity (f2, p1) so that most generated problems pass
# the symbol check and reach deeper; sometimes plain, to hit the clash errors.
FUN_NAMES = ["f", "g", "h", "mult"]
PRED_NAMES = ["p", "q", "r", "le"]


def _name(rng, names, arity):
    n = rng.choice(names)
    return n if rng.random() < 0.1 else f"{n}{arity}"


def native_term(rng, budget):
    if budget <= 0 or rng.random() < 0.35:
        return rng.choice(NAMES + VARS)
    k = rng.randrange(4)
    if k == 0:
        args = [native_term(rng, budget // 2) for _ in range(rng.randint(1, 3))]
        return f"{_name(rng, FUN_NAMES, len(args))}({', '.join(args)})"
    if k == 1:
        return native_term(rng, budget // 2) + rng.choice([" + ", " * ", "+", "*"]) + \
            native_term(rng, budget // 2)
    if k == 2:
        return f"({native_term(rng, budget - 1)})"
    return rng.choice(VARS)


def native_atom(rng, budget):
    k = rng.randrange(5)
    if k == 0:
        return native_term(rng, budget) + rng.choice([" = ", " != ", " ≠ ", "="]) + \
            native_term(rng, budget)
    if k == 1:
        args = [native_term(rng, budget // 2) for _ in range(rng.randint(1, 3))]
        return f"{_name(rng, PRED_NAMES, len(args))}({', '.join(args)})"
    if k == 2:
        return rng.choice(["true", "false"])
    return rng.choice(PRED_NAMES) + ("0" if rng.random() < 0.9 else "")


def native_formula(rng, budget):
    if budget <= 0 or rng.random() < 0.3:
        return native_atom(rng, 4)
    k = rng.randrange(5)
    if k == 0:
        return native_formula(rng, budget // 2) + rng.choice(
            [" and ", " & ", " ∧ ", " or ", " | ", " ∨ ", " implies ", " -> ", " → ",
             " iff ", " <-> ", " ↔ "]) + native_formula(rng, budget // 2)
    if k == 1:
        return rng.choice(["not ", "~", "¬", "not not "]) + native_formula(rng, budget - 1)
    if k == 2:
        vs = " ".join(rng.sample(VARS, rng.randint(1, 3)))
        return f"{rng.choice(['forall ', 'exists ', '∀ ', '∃ '])}{vs}. " + \
            native_formula(rng, budget - 1)
    return f"({native_formula(rng, budget - 1)})"


NATIVE_NOISE = [
    "(", ")", ",", ".", ":", "=", "!=", "->", "<-", "<->", "forall", "exists x",
    "axiom", "conjecture c:", "include", 'include "x.nj"', 'include "../../etc/passwd"',
    "#", "\n", "\r\n", "\t", "\x00", "\x7f", "\ufeff", "\u200b", "é", "𝔸", "\ud800",
    '"', "'", "$", "%", "/*", "@", "\\", "9" * 40, "x" * 300, "∀", "¬¬¬", "axiom s0: p0",
]


def corrupt(rng, text, noise):
    for _ in range(rng.randint(1, 3)):
        at = rng.randint(0, len(text))
        text = text[:at] + rng.choice(noise) + text[at:]
    return text


def native_problem_text(rng) -> str:
    lines = []
    for i in range(rng.randint(1, 5)):
        kind = rng.choice(["axiom", "hypothesis", "conjecture"])
        name = rng.choice([f"s{i}"] * 30 + ["s0", "a", "forall", "x_1"])
        lines.append(f"{kind} {name}: {native_formula(rng, rng.randint(0, 24))}")
        if rng.random() < 0.3:
            lines.append("# a comment" + rng.choice(["", " ∀ é", " axiom x:", "\t#"]))
    text = "\n".join(lines) + rng.choice(["\n", "", "\r\n", "\n\n"])
    return corrupt(rng, text, NATIVE_NOISE) if rng.random() < 0.35 else text


# ---------------------------------------------------------- TPTP grammar

TP_FUNS = ["a", "b", "f", "g", "mult", "inv", "e", "'q d'", '"obj"', "12", "$sum"]
TP_VARS = ["X", "Y", "Z", "X1", "W_2"]
TP_PREDS = ["p", "q", "r", "'P r'"]


def tptp_term(rng, budget):
    if budget <= 0 or rng.random() < 0.4:
        return rng.choice(TP_FUNS[:10] * 3 + TP_VARS * 3 + TP_FUNS[10:])
    args = [tptp_term(rng, budget // 2) for _ in range(rng.randint(1, 3))]
    f = rng.choice(TP_FUNS[:7] * 5 + TP_FUNS[7:])   # numbers and "objects" rarely applied
    if f[0].isalpha() and rng.random() < 0.9:
        f = f"{f}{len(args)}"
    return f"{f}({', '.join(args)})"


def tptp_atom(rng, budget):
    k = rng.randrange(4)
    if k == 0:
        return tptp_term(rng, budget) + rng.choice([" = ", " != ", "="]) + tptp_term(rng, budget)
    if k == 1:
        args = [tptp_term(rng, budget // 2) for _ in range(rng.randint(1, 3))]
        p = rng.choice(TP_PREDS)
        if p[0].isalpha() and rng.random() < 0.9:
            p = f"{p}{len(args)}"
        return f"{p}({', '.join(args)})"
    if k == 2:
        return rng.choice(["$true", "$false"])
    return rng.choice(TP_PREDS[:3]) + "0"


def tptp_formula(rng, budget):
    if budget <= 0 or rng.random() < 0.3:
        return tptp_atom(rng, 4)
    k = rng.randrange(4)
    if k == 0:
        op = rng.choice([" & ", " | ", " => ", " <= ", " <=> ", " <~> ", " ~| ", " ~& "])
        return f"({tptp_formula(rng, budget // 2)}{op}{tptp_formula(rng, budget // 2)})"
    if k == 1:
        return "~ " + tptp_formula(rng, budget - 1)
    if k == 2:
        vs = ", ".join(rng.sample(TP_VARS, rng.randint(1, 3)))
        return f"{rng.choice(['!', '?'])} [{vs}] : {tptp_formula(rng, budget - 1)}"
    return f"({tptp_formula(rng, budget - 1)})"


def tptp_clause(rng):
    lits = []
    for _ in range(rng.randint(1, 4)):
        if rng.random() < 0.3:
            lits.append(tptp_term(rng, 3) + rng.choice([" = ", " != "]) + tptp_term(rng, 3))
        else:
            lits.append(rng.choice(["", "~"]) + tptp_atom(rng, 3).lstrip("$"))
    return "(" + " | ".join(lits) + ")" if rng.random() < 0.9 else " | ".join(lits)


TPTP_ROLES = ["axiom"] * 20 + ["hypothesis", "definition", "lemma", "theorem",
                              "conjecture", "negated_conjecture", "plain", "unknown", "type",
                              "bogus"]
TPTP_NOISE = [
    "(", ")", "[", "]", ",", ".", ":", "!", "?", "~", "=>", "<=>", "'", '"', "%", "/*",
    "*/", "include('Axioms/x.ax').", "include('/etc/passwd').", "fof(", "cnf(", "thf(",
    "tff(", "$", "$$", "\n", "\x00", "\ufeff", "é", "\ud800", "X" * 300, "9" * 40,
]


def tptp_problem_text(rng) -> str:
    parts = []
    for i in range(rng.randint(1, 5)):
        role = rng.choice(TPTP_ROLES)
        if rng.random() < 0.6:
            body = tptp_formula(rng, rng.randint(0, 24))
            if rng.random() < 0.85:    # close it: a free variable in fof is an error
                body = f"! [{', '.join(TP_VARS)}] : ({body})"
            parts.append(f"fof(f{i}, {role}, {body}).")
        else:
            parts.append(f"cnf(c{i}, {role}, {tptp_clause(rng)}).")
        if rng.random() < 0.2:
            parts.append(rng.choice(["% note", "/* note */", "%", "/* a\n b */"]))
    text = "\n".join(parts) + rng.choice(["\n", "", "\r\n"])
    return corrupt(rng, text, TPTP_NOISE) if rng.random() < 0.35 else text


SEEDS = st.integers(min_value=0, max_value=2**63)


# ----------------------------------------------------------- mutations

@st.composite
def mutated(draw, seeds):
    data = bytearray(draw(st.sampled_from(seeds)).encode("utf-8"))
    for _ in range(draw(st.integers(1, 6))):
        op = draw(st.integers(0, 5))
        at = draw(st.integers(0, len(data)))
        if op == 0 and data:                                   # delete a run
            del data[at:at + draw(st.integers(1, 12))]
        elif op == 1:                                          # insert bytes
            data[at:at] = draw(st.binary(min_size=1, max_size=6))
        elif op == 2 and at < len(data):                       # overwrite one byte
            data[at] = draw(st.integers(0, 255))
        elif op == 3:                                          # duplicate a chunk
            n = draw(st.integers(1, 40))
            data[at:at] = data[at:at + n]
        elif op == 4:                                          # swap halves
            data = data[at:] + data[:at]
        else:                                                  # insert a character
            data[at:at] = draw(st.characters(codec="utf-8")).encode("utf-8")
    return data.decode("utf-8", errors="replace")


def deep(open_: str, close: str, core: str, depth: int) -> str:
    return open_ * depth + core + close * depth


# ------------------------------------------------------------------ tests

def test_seeds_are_valid_problems():
    """The mutation seeds must be read without error, or mutating them tests little."""
    for text in NATIVE_SEEDS:
        assert parse_text(text, name="seed.nj", language="native").statements
    for text in TPTP_SEEDS:
        assert parse_text(text, name="seed.p", language="tptp").statements


@pytest.mark.parametrize("language", ["native", "tptp", None])
@pytest.mark.parametrize("depth", [200, 5_000, 100_000])
def test_deep_nesting_is_refused_or_read(language, depth):
    """Deep nesting must give a Problem or a limit message, never RecursionError."""
    if language == "tptp":
        cases = [f"fof(d, axiom, {deep('(', ')', 'p', depth)}).",
                 f"fof(d, axiom, {'~ ' * depth}p).",
                 f"fof(d, axiom, p({deep('f(', ')', 'a', depth)})).",
                 f"fof(d, axiom, {'! [X] : ' * depth}p(X))."]
    else:
        cases = [f"axiom d: {deep('(', ')', 'p', depth)}",
                 f"axiom d: {'not ' * depth}p",
                 f"axiom d: p({deep('f(', ')', 'a', depth)})",
                 f"axiom d: {'forall x. ' * depth}p(x)",
                 "axiom d: p(" + " + ".join(["a"] * depth) + ")",
                 "axiom d: " + " implies ".join(["p"] * depth)]
    for text in cases:
        read_once(text, language)


@FUZZ
@given(SEEDS)
def test_native_grammar_fuzz(seed):
    read_once(native_problem_text(random.Random(seed)), "native", "native")


@FUZZ
@given(mutated(NATIVE_SEEDS))
def test_native_mutation_fuzz(text):
    read_once(text, "native" if len(text) % 2 else None, "native")


@FUZZ
@given(SEEDS)
def test_tptp_grammar_fuzz(seed):
    read_once(tptp_problem_text(random.Random(seed)), "tptp", "tptp")


@FUZZ
@given(mutated(TPTP_SEEDS))
def test_tptp_mutation_fuzz(text):
    read_once(text, "tptp" if len(text) % 2 else None, "tptp")


@settings(max_examples=300, deadline=None, derandomize=True, database=None)
@given(st.text(max_size=400))
def test_arbitrary_text_either_reader(text):
    read_once(text, None)


def test_inputs_per_reader_counted():
    """Runs after the fuzz tests above (file order): at least 10,000 inputs each."""
    if len(COUNTS) < 2:
        pytest.skip("the fuzz tests above were not all run in this session")
    print(f"fuzz inputs read: {COUNTS}")
    for reader, n in COUNTS.items():
        assert n >= min(10_000, 2 * FUZZ_EXAMPLES), (reader, n)
