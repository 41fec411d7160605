"""Printing terms, literals, clauses, formulas and problems in the native
notation.  What this prints, the native reader reads back to the same thing.

Infix operators ``*`` (binds tighter) and ``+`` are printed infix and read
left associative; a left operand of the same operator is printed in
parentheses all the same (``(x * y) * z``); everything else prints as
``f(a, b)``.

Names that are not native identifiers (a letter or ``_`` then letters, digits,
``_``; or a run of digits), reserved words, and symbol names that coincide
with a variable in scope are printed in single quotes (``'a b'``, ``'and'``);
a quoted name always reads back as a symbol, never as a variable.  A bound
variable whose name is already bound further out (shadowing), or is not an
identifier, is printed under a fresh name (``x_1``), which reads back to the
same formula.

A TPTP distinct object (a name that starts and ends with ``"``, kept so by
the TPTP reader: ``tptp.is_distinct_object``) is printed as the user wrote
it, ``"a"``, by everything that prints for reading: terms, literals, clauses
and formulas (proofs, clause listings, the checker's messages).  The native
language has no distinct objects and its reader refuses ``"a"`` in a term, so
statements and problems (``format_statement``, ``format_problem``: text that
is read back) print such a name quoted, ``'"a"'``, an ordinary constant of
that name.

Roles: ``axiom``, ``hypothesis``, ``conjecture`` and ``negated_conjecture``
print as themselves; every other TPTP role (definition, lemma, theorem, ...)
prints as ``axiom`` with the original role in a comment.
"""

from __future__ import annotations

import re

from .formulas import And, Atom, Const, Iff, Implies, Not, Or, Quant
from .terms import EQ
from .tptp import is_distinct_object

INFIX = {"*": 2, "+": 1}   # binding strength; higher binds tighter

RESERVED = frozenset({"axiom", "hypothesis", "conjecture", "negated_conjecture",
                      "include", "forall", "exists", "not", "and", "or", "implies",
                      "iff", "true", "false"})
NATIVE_ROLES = frozenset({"axiom", "hypothesis", "conjecture", "negated_conjecture"})

_IDENT = re.compile(r"[^\W\d]\w*|[0-9]+")

# Names the engine introduces keep their spelling; variables of clauses print
# as X0, X1, ... unless a name map is given.


def is_identifier(name: str) -> bool:
    """True when ``name`` can be written bare in the native language."""
    return _IDENT.fullmatch(name) is not None and name not in RESERVED


def _escape(ch: str) -> str:
    if ch == "\\" or ch == "'":
        return "\\" + ch
    if ch.isprintable():
        return ch
    return f"\\u{{{ord(ch):X}}}"   # a control or other non-printing character


def quote_name(name: str) -> str:
    """``name`` in single quotes; ``\\`` and ``'`` escaped, and every character
    that does not print (controls, tabs, bidi overrides, ...) written as
    ``\\u{HEX}``, so a printed proof or model never carries them raw."""
    if name.isprintable():
        return "'" + name.replace("\\", "\\\\").replace("'", "\\'") + "'"
    return "'" + "".join(_escape(ch) for ch in name) + "'"


def symbol_name(name: str, bound=None, head: bool = False, reread: bool = False) -> str:
    """How a symbol is written: bare when that reads back as the symbol
    (``head``: it is applied to arguments, where a number cannot stand); a
    distinct object as written (``"a"``) unless the text is to be read back
    (``reread``)."""
    if not reread and not head and is_distinct_object(name):
        # as the TPTP text had it (its escapes included); a character that
        # does not print is written \u{HEX} there too
        return name if name.isprintable() else "".join(
            ch if ch.isprintable() else f"\\u{{{ord(ch):X}}}" for ch in name)
    if (is_identifier(name) and not (bound and name in bound)
            and not (head and name[0].isdigit())):
        return name
    return quote_name(name)


def var_name(v: int, names: dict | None) -> str:
    if names and v in names:
        return names[v]
    return f"X{v}"


def format_term(t, names: dict | None = None, _ctx: int = 0, _bound=None,
                _reread: bool = False) -> str:
    tt = type(t)
    if tt is int:
        return var_name(t, names)
    if tt is str:
        return symbol_name(t, _bound, reread=_reread)
    f = t[0]
    if f in INFIX and len(t) == 3:
        p = INFIX[f]
        # left associative, but a left operand of the same operator keeps its
        # parentheses: (x * y) * z, which is how people write associativity
        a = t[1]
        same = type(a) is tuple and len(a) == 3 and a[0] == f
        left = format_term(a, names, p + 1 if same else p, _bound, _reread)
        right = format_term(t[2], names, p + 1, _bound, _reread)
        s = f"{left} {f} {right}"
        return f"({s})" if p < _ctx else s
    return (symbol_name(f, _bound, True) + "("
            + ", ".join(format_term(a, names, 0, _bound, _reread) for a in t[1:]) + ")")


def _format_pred(a, names, bound, reread=False) -> str:
    """An atom that is not an equation: a predicate named like an infix
    operator is written in prefix form with a quoted name."""
    if type(a) is tuple and a[0] in INFIX:
        return (quote_name(a[0]) + "("
                + ", ".join(format_term(x, names, 0, bound, reread) for x in a[1:]) + ")")
    if type(a) is tuple:
        return format_term(a, names, 0, bound, reread)
    return symbol_name(a, bound, reread=True)     # a proposition, never an object


def format_atom(a, names: dict | None = None, _bound=None, _reread: bool = False) -> str:
    if type(a) is tuple and a[0] == EQ and len(a) == 3:
        return (f"{format_term(a[1], names, 0, _bound, _reread)} = "
                f"{format_term(a[2], names, 0, _bound, _reread)}")
    return _format_pred(a, names, _bound, _reread)


def format_literal(lit, names: dict | None = None, _bound=None) -> str:
    sign, a = lit
    if type(a) is tuple and a[0] == EQ and len(a) == 3:
        op = "=" if sign else "!="
        return (f"{format_term(a[1], names, 0, _bound)} {op} "
                f"{format_term(a[2], names, 0, _bound)}")
    s = _format_pred(a, names, _bound)
    return s if sign else f"not {s}"


def format_clause(lits, names: dict | None = None) -> str:
    """A clause, its variables as X0, X1, ... (or ``names``); a constant
    spelled like one of them is quoted."""
    if not lits:
        return "false"
    vs = set()
    for _, a in lits:
        _vars(a, vs)
    bound = {var_name(v, names) for v in vs}
    return " or ".join(format_literal(l, names, bound) for l in lits)


def _vars(t, acc):
    stack = [t]
    while stack:
        x = stack.pop()
        if type(x) is int:
            acc.add(x)
        elif type(x) is tuple:
            stack.extend(x[1:])


# Formula precedence: higher binds tighter.
_P_IFF, _P_IMP, _P_OR, _P_AND, _P_UNARY = 1, 2, 3, 4, 5


class _Names:
    """Printed names of bound variables, kept unambiguous while printing."""

    __slots__ = ("given", "printed", "bound", "reread")

    def __init__(self, given, reread=False):
        self.given = given or {}
        self.reread = reread        # distinct objects as '"a"' (text read back)
        self.printed: dict = {}     # var -> printed name (for variables in scope)
        self.bound: dict = {}       # printed name -> count of binders in scope

    def bind(self, v: int) -> str:
        want = self.given.get(v) or f"X{v}"
        if not is_identifier(want) or want[0].isdigit():
            want = f"X{v}"
        name = want
        n = 0
        while name in self.bound or not is_identifier(name):
            n += 1
            name = f"{want}_{n}"
        self.printed[v] = name
        self.bound[name] = 1
        return name

    def unbind(self, v: int, name: str, old) -> None:
        del self.bound[name]
        if old is None:
            self.printed.pop(v, None)
        else:
            self.printed[v] = old


def format_formula(f, names: dict | None = None, _ctx: int = 0, reread: bool = False) -> str:
    """Print a formula with the fewest parentheses that read back the same
    (distinct objects as written, ``"a"``, unless ``reread``)."""
    return _fmt(f, _Names(names, reread), _ctx)


def _fmt(f, nm: _Names, ctx: int) -> str:
    if isinstance(f, Atom):
        return format_atom(f.term, _VarView(nm), nm.bound, nm.reread)
    if isinstance(f, Const):
        return "true" if f.value else "false"
    if isinstance(f, Not):
        a = f.arg
        if isinstance(a, Atom) and type(a.term) is tuple and a.term[0] == EQ:
            view = _VarView(nm)
            return (f"{format_term(a.term[1], view, 0, nm.bound, nm.reread)} != "
                    f"{format_term(a.term[2], view, 0, nm.bound, nm.reread)}")
        return "not " + _fmt(a, nm, _P_UNARY)
    if isinstance(f, Quant):
        olds = [(v, nm.printed.get(v)) for v in f.vars]
        vs = [nm.bind(v) for v in f.vars]
        s = f"{f.kind} {' '.join(vs)}. {_fmt(f.body, nm, 0)}"
        for (v, old), name in zip(reversed(olds), reversed(vs)):
            nm.unbind(v, name, old)
        return f"({s})" if ctx > 0 else s
    if isinstance(f, (And, Or)) and len(f.args) < 2:
        # not made by the readers; printed so that it still reads back
        if not f.args:
            return "true" if isinstance(f, And) else "false"
        return _fmt(f.args[0], nm, ctx)
    if isinstance(f, And):
        s = " and ".join(_fmt(a, nm, _P_AND + 1) for a in f.args)
        return f"({s})" if _P_AND < ctx else s
    if isinstance(f, Or):
        s = " or ".join(_fmt(a, nm, _P_OR + 1) for a in f.args)
        return f"({s})" if _P_OR < ctx else s
    if isinstance(f, Implies):   # right associative
        s = f"{_fmt(f.left, nm, _P_IMP + 1)} implies {_fmt(f.right, nm, _P_IMP)}"
        return f"({s})" if _P_IMP < ctx else s
    if isinstance(f, Iff):
        s = f"{_fmt(f.left, nm, _P_IFF + 1)} iff {_fmt(f.right, nm, _P_IFF + 1)}"
        return f"({s})" if _P_IFF < ctx else s
    raise TypeError(f"not a formula: {f!r}")


class _VarView(dict):
    """A read-only mapping var -> printed name for format_term (free
    variables fall back to the given names, then X<n>)."""

    __slots__ = ("nm",)

    def __init__(self, nm: _Names):
        super().__init__()
        self.nm = nm

    def __contains__(self, v):
        return True

    def __getitem__(self, v):
        p = self.nm.printed.get(v)
        if p is not None:
            return p
        return self.nm.given.get(v) or f"X{v}"

    def __bool__(self):
        return True


def statement_keyword(role: str) -> str:
    return role if role in NATIVE_ROLES else "axiom"


def format_statement(st) -> str:
    kw = statement_keyword(st.role)
    head = f"{kw} {symbol_name(st.name, reread=True)}: "
    body = format_formula(st.formula, st.varnames, reread=True)
    if kw != st.role:
        return f"# {st.role}\n{head}{body}"
    return head + body


def format_problem(problem) -> str:
    """The whole problem in the native language, includes expanded."""
    return "\n".join(format_statement(s) for s in problem.statements) + "\n"
