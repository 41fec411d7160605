"""Printing terms, literals, clauses, formulas and problems in the native
notation.  What this prints, the native reader reads back to the same thing.

Infix operators ``*`` (binds tighter) and ``+`` are printed infix and left
associative; everything else prints as ``f(a, b)``.
"""

from __future__ import annotations

from .formulas import And, Atom, Const, Iff, Implies, Not, Or, Quant
from .terms import EQ

INFIX = {"*": 2, "+": 1}   # binding strength; higher binds tighter

# Names the engine introduces keep their spelling; variables of clauses print
# as X0, X1, ... unless a name map is given.


def var_name(v: int, names: dict | None) -> str:
    if names and v in names:
        return names[v]
    return f"X{v}"


def format_term(t, names: dict | None = None, _ctx: int = 0) -> str:
    tt = type(t)
    if tt is int:
        return var_name(t, names)
    if tt is str:
        return t
    f = t[0]
    if f in INFIX and len(t) == 3:
        p = INFIX[f]
        left = format_term(t[1], names, p)        # left associative
        right = format_term(t[2], names, p + 1)
        s = f"{left} {f} {right}"
        return f"({s})" if p < _ctx else s
    return f"{f}(" + ", ".join(format_term(a, names) for a in t[1:]) + ")"


def format_atom(a, names: dict | None = None) -> str:
    if type(a) is tuple and a[0] == EQ and len(a) == 3:
        return f"{format_term(a[1], names)} = {format_term(a[2], names)}"
    return format_term(a, names)


def format_literal(lit, names: dict | None = None) -> str:
    sign, a = lit
    if type(a) is tuple and a[0] == EQ and len(a) == 3:
        op = "=" if sign else "!="
        return f"{format_term(a[1], names)} {op} {format_term(a[2], names)}"
    s = format_term(a, names)
    return s if sign else f"not {s}"


def format_clause(lits, names: dict | None = None) -> str:
    if not lits:
        return "false"
    return " or ".join(format_literal(l, names) for l in lits)


# Formula precedence: higher binds tighter.
_P_IFF, _P_IMP, _P_OR, _P_AND, _P_UNARY = 1, 2, 3, 4, 5


def format_formula(f, names: dict | None = None, _ctx: int = 0) -> str:
    """Print a formula with the fewest parentheses that read back the same."""
    if isinstance(f, Atom):
        return format_atom(f.term, names)
    if isinstance(f, Const):
        return "true" if f.value else "false"
    if isinstance(f, Not):
        a = f.arg
        if isinstance(a, Atom) and type(a.term) is tuple and a.term[0] == EQ:
            return (f"{format_term(a.term[1], names)} != "
                    f"{format_term(a.term[2], names)}")
        return "not " + format_formula(a, names, _P_UNARY)
    if isinstance(f, Quant):
        vs = " ".join(var_name(v, names) for v in f.vars)
        s = f"{f.kind} {vs}. {format_formula(f.body, names, 0)}"
        return f"({s})" if _ctx > 0 else s
    if isinstance(f, And):
        s = " and ".join(format_formula(a, names, _P_AND + 1) for a in f.args)
        return f"({s})" if _P_AND < _ctx else s
    if isinstance(f, Or):
        s = " or ".join(format_formula(a, names, _P_OR + 1) for a in f.args)
        return f"({s})" if _P_OR < _ctx else s
    if isinstance(f, Implies):   # right associative
        s = (f"{format_formula(f.left, names, _P_IMP + 1)} implies "
             f"{format_formula(f.right, names, _P_IMP)}")
        return f"({s})" if _P_IMP < _ctx else s
    if isinstance(f, Iff):
        s = (f"{format_formula(f.left, names, _P_IFF + 1)} iff "
             f"{format_formula(f.right, names, _P_IFF + 1)}")
        return f"({s})" if _P_IFF < _ctx else s
    raise TypeError(f"not a formula: {f!r}")


def format_statement(st) -> str:
    return f"{st.role} {st.name}: {format_formula(st.formula, st.varnames)}"


def format_problem(problem) -> str:
    """The whole problem in the native language, includes expanded."""
    return "\n".join(format_statement(s) for s in problem.statements) + "\n"
