"""The reader of the native problem language (``.nj``).

A precedence-climbing parser over the token lists of :mod:`.lexer`.  Terms
and formulas share one expression grammar, because a parenthesis can open
either (``(x * y) = z`` and ``(p and q)``); what a piece is gets decided when
it is used:

* a name or an application used where a formula is expected is an atom
  (a predicate), used where a term is expected it is a function or constant;
* a name bound by an enclosing quantifier is a variable (an ``int``).

Binding strength, loosest first (DEVELOPERS.md "The native problem language"):

    iff (1, not associative) < implies (2, right) < or (3) < and (4)
    < not, forall, exists (prefix) < = != (6) < + (7, left) < * (8, left)

Each level of nesting costs the parser a bounded number of Python frames and
one unit of ``depth``; beyond ``MAX_DEPTH`` the parser stops with a
:class:`LimitError` instead of running out of stack.
"""

from __future__ import annotations

import difflib

from .cursor import TokenCursor
from .errors import LimitError
from .formulas import FALSE, TRUE, And, Atom, Iff, Implies, Not, Or, Quant, Statement
from .lexer import (MAX_DEPTH, STATEMENT_KEYWORDS, Source, describe,
                    tokenize_native, unquote_native)
from .terms import intern

_STARTS = frozenset({"name", "num", "quoted", "(", "not", "forall", "exists",
                     "true", "false"})
_STATEMENT_END = frozenset(STATEMENT_KEYWORDS) | {"include", "eof"}
_RESERVED_NAMES = frozenset({"forall", "exists", "not", "and", "or", "implies",
                             "iff", "true", "false", "include"}) | frozenset(STATEMENT_KEYWORDS)
TOP_KEYWORDS = STATEMENT_KEYWORDS + ("include",)
_TPTP_KINDS = frozenset({"fof", "cnf", "tff", "thf", "tcf", "tpi", "tfx"})


class _Tm:
    """A parsed piece that is not (yet) a formula: a name, an application
    or an infix term.  ``kind`` is var, name, app or infix."""

    __slots__ = ("term", "off", "kind", "depth")

    def __init__(self, term, off, kind, depth):
        self.term = term
        self.off = off
        self.kind = kind
        self.depth = depth


def suggest_keyword(word: str, choices=TOP_KEYWORDS) -> str | None:
    m = difflib.get_close_matches(word.lower(), choices, n=1, cutoff=0.6)
    return m[0] if m else None


class NativeParser(TokenCursor):
    """Parse one native file.  ``on_include(path, src, offset, names)``
    returns the statements of an included file (already parsed)."""

    def __init__(self, src: Source, symbols, on_include):
        super().__init__(src, symbols, on_include, tokenize_native)
        self.binders: dict = {}     # var -> offset of its name in the binder
        self.forced = False         # the language was forced (not told from the text)

    def tptp_statement(self, i):
        """Raise if token ``i`` starts what looks like a TPTP statement
        (``fof(``, ``cnf(``, ``include(``, a typed dialect's ``tff(``, ...)."""
        kind, text = self.k[i], self.t[i]
        if self.k[i + 1] != "(" or not (kind == "include" or
                                         (kind == "name" and text in _TPTP_KINDS)):
            return
        if self.forced:
            hint = ("the language was forced to native (--language native); leave "
                    "that out to have each file told apart, or move the TPTP "
                    "statements into a file of their own and include it: "
                    'include "axioms.p"')
        else:
            hint = ("each file is read in one language, told by its first statement "
                    "(then by its ending: .p .ax .tptp .fof .cnf mean TPTP; "
                    "--language forces one): move the TPTP statements into a file of "
                    'their own and include it (include "axioms.p"), or write them '
                    "in the native language")
        raise self.err(f"this looks like a TPTP statement ('{text}(...)'), but the "
                       f"file is read as the native language", i, hint=hint)

    # ------------------------------------------------------------ helpers

    def found(self, i=None) -> str:
        i = self.i if i is None else i
        return describe(self.k[i], self.t[i])

    def unquote(self, i) -> str:
        """The content of the quoted name or string at token ``i``."""
        try:
            return unquote_native(self.t[i])
        except ValueError as e:
            at, msg = e.args
            raise self.src.error(msg, self.o[i] + at) from None

    def unbalanced(self) -> str:
        """Prefix for a missing ')' when the text ends (or a statement starts)
        before it."""
        return "unbalanced brackets: " if self.k[self.i] in _STATEMENT_END else ""

    # ---------------------------------------------------------- top level

    def parse(self) -> list:
        k = self.k
        out = []
        while k[self.i] != "eof":
            kind = k[self.i]
            if kind in STATEMENT_KEYWORDS:
                out.append(self.statement())
            elif kind == "include":
                out.extend(self.include())
            elif kind == "name":
                self.tptp_statement(self.i)
                word = self.t[self.i]
                s = suggest_keyword(word)
                if s:
                    raise self.err(f"unknown keyword '{word}'; did you mean '{s}'?",
                                   hint="a statement starts with axiom, hypothesis "
                                        "or conjecture, then its name and ':'")
                raise self.err(f"expected a statement (axiom, hypothesis or "
                               f"conjecture NAME: FORMULA) or an include, found "
                               f"{self.found()}")
            elif kind == ")":
                raise self.err("unbalanced brackets: this ')' has no matching '('")
            else:
                raise self.err(f"expected a statement (axiom, hypothesis or "
                               f"conjecture NAME: FORMULA) or an include, found "
                               f"{self.found()}")
        return out

    def include(self) -> list:
        inc_i = self.i
        self.tptp_statement(inc_i)
        self.i += 1
        if self.k[self.i] != "string":
            raise self.err(f"expected a file name in double quotes after 'include', "
                           f"found {self.found()}", hint='write include "file.nj"')
        path = self.unquote(self.i)
        at = self.i
        self.i += 1
        self.includes += 1
        if not path:
            raise self.err("the include has an empty file name", at)
        return self.on_include(path, self.src, self.o[at], None)

    def statement_name(self, role_i) -> str:
        kind = self.k[self.i]
        if kind in ("name", "num"):
            name = self.t[self.i]
        elif kind == "quoted":
            name = self.unquote(self.i)
        elif self.t[self.i] in _RESERVED_NAMES:
            raise self.err(f"'{self.t[self.i]}' is a reserved word and cannot name a "
                           f"statement", hint=f"write {self.t[role_i]} NAME: FORMULA")
        else:
            raise self.err(f"expected a name after '{self.t[role_i]}', found "
                           f"{self.found()}", hint=f"write {self.t[role_i]} NAME: FORMULA")
        self.i += 1
        return intern(name)

    def statement(self) -> Statement:
        role_i = self.i
        role = self.k[role_i]
        self.i += 1
        name = self.statement_name(role_i)
        if self.k[self.i] != ":":
            raise self.err(f"expected ':' after the statement name '{name}', found "
                           f"{self.found()}", hint=f"write {role} {name}: FORMULA")
        colon = self.i
        self.i += 1
        self.scope = {}
        self.varnames = {}
        self.binders = {}
        self.nvars = 0
        self.depth = 0
        f = self.formula(self.operand(0, colon, "a formula"))
        if self.k[self.i] not in _STATEMENT_END:
            self.trailing()
        last = self.i - 1
        text = self.src.text[self.o[role_i]:self.o[last] + len(self.t[last])]
        return Statement(name, role, f, self.varnames, self.src.span(self.o[role_i]),
                         "native", text)

    def trailing(self):
        """The formula is complete but something else follows."""
        i = self.i
        kind = self.k[i]
        if kind == ")":
            raise self.err("unbalanced brackets: this ')' has no matching '('")
        if kind == "name":
            self.tptp_statement(i)
            word = self.t[i]
            if self.k[i + 1] in ("name", "num", "quoted") and self.k[i + 2] == ":":
                s = suggest_keyword(word, STATEMENT_KEYWORDS)
                msg = f"unknown keyword '{word}'"
                if s:
                    msg += f"; did you mean '{s}'?"
                raise self.err(msg, hint="a statement starts with axiom, hypothesis "
                                         "or conjecture")
            prev = self.t[i - 1] if self.k[i - 1] == "name" else None
            if prev and self.k[i + 1] in (".", "name"):
                q = suggest_keyword(prev, ("forall", "exists"))
                if q:
                    raise self.err(f"unknown keyword '{prev}'; did you mean '{q}'?", i - 1,
                                   hint=f"write {q} x y. FORMULA")
            c = suggest_keyword(word, ("and", "or", "implies", "iff", "not"))
            if c:
                raise self.err(f"unknown connective '{word}'; did you mean '{c}'?")
            raise self.err(f"expected a connective (and, or, implies, iff) or a new "
                           f"statement, found {self.found()}",
                           hint="a new statement starts with axiom, hypothesis or "
                                "conjecture")
        raise self.err(f"unexpected {self.found()} after a complete formula")

    # -------------------------------------------------------- expressions

    def operand(self, prec, op_i, what):
        if self.k[self.i] in _STARTS:
            return self.expr(prec)
        self.missing(op_i, what)

    def missing(self, op_i, what):
        """No operand where one is needed: the error."""
        kind = self.k[self.i]
        if op_i is not None:
            after = self.t[op_i]
            if kind in _STATEMENT_END and kind != "eof":
                found = f"the keyword '{self.t[self.i]}' that starts a new statement"
            else:
                found = self.found()
            if kind == ")":
                raise self.err(f"missing operand: expected {what} after '{after}', "
                               f"found ')'")
            raise self.err(f"missing operand: expected {what} after '{after}', "
                           f"found {found}")
        raise self.err(f"expected {what}, found {self.found()}")

    def expr(self, min_prec):
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise self.err(f"the formula is nested too deeply: the limit is "
                           f"{MAX_DEPTH:,} levels of nesting", cls=LimitError,
                           hint="split it with definitions (an axiom per "
                                "subformula)")
        k = self.k
        start = self.i
        left = self.prefix()
        while True:
            kind = k[self.i]
            if kind == "and" or kind == "or":
                p = 4 if kind == "and" else 3
                if p < min_prec:
                    break
                args = [self.formula(left)]
                while k[self.i] == kind:
                    op_i = self.i
                    self.i += 1
                    if self.k[self.i] not in _STARTS:
                        self.missing(op_i, "a formula")
                    args.append(self.formula(self.expr(p + 1)))
                left = And(tuple(args)) if kind == "and" else Or(tuple(args))
            elif kind == "implies":
                if 2 < min_prec:
                    break
                op_i = self.i
                self.i += 1
                lf = self.formula(left)
                if self.k[self.i] not in _STARTS:
                    self.missing(op_i, "a formula")
                left = Implies(lf, self.formula(self.expr(2)))
            elif kind == "iff":
                if 1 < min_prec:
                    break
                op_i = self.i
                self.i += 1
                lf = self.formula(left)
                if self.k[self.i] not in _STARTS:
                    self.missing(op_i, "a formula")
                left = Iff(lf, self.formula(self.expr(2)))
                if k[self.i] == "iff":
                    raise self.err("'iff' is not associative: put parentheses around "
                                   "one side, e.g. (p iff q) iff r")
            elif kind == "=" or kind == "!=":
                if 6 < min_prec:
                    break
                op_i = self.i
                self.i += 1
                lt = self.term(left, start, "left", op_i)
                r_i = self.i
                if self.k[self.i] not in _STARTS:
                    self.missing(op_i, "a term")
                rt = self.term(self.expr(7), r_i, "right", op_i)
                atom = Atom(("=", lt[0], rt[0]))
                left = atom if kind == "=" else Not(atom)
                if k[self.i] == "=" or k[self.i] == "!=":
                    raise self.err("equations cannot be chained: write a = b and b = c")
            elif kind == "+" or kind == "*":
                p = 7 if kind == "+" else 8
                if p < min_prec:
                    break
                op_i = self.i
                self.i += 1
                lt = self.term(left, start, "left", op_i)
                r_i = self.i
                if self.k[self.i] not in _STARTS:
                    self.missing(op_i, "a term")
                rt = self.term(self.expr(p + 1), r_i, "right", op_i)
                self.symbols.use(kind, "function", 2, self.src, self.o[op_i])
                d = 1 + max(lt[1], rt[1])
                if d > MAX_DEPTH:
                    raise self.err(f"the term is nested too deeply: the limit is "
                                   f"{MAX_DEPTH:,} levels of nesting", op_i,
                                   cls=LimitError)
                left = _Tm((kind, lt[0], rt[0]), self.o[op_i], "infix", d)
            else:
                break
        self.depth -= 1
        return left

    def prefix(self):
        i = self.i
        kind = self.k[i]
        if kind == "name" or kind == "quoted":
            name = self.t[i] if kind == "name" else self.unquote(i)
            self.i += 1
            v = self.scope.get(name) if kind == "name" else None
            if self.k[self.i] == "(":
                if v is not None:
                    ln, col = self.src.linecol(self.binders[v])
                    raise self.err(f"'{name}' is a variable here (bound at line {ln}, "
                                   f"column {col}); a variable cannot be applied to "
                                   f"arguments",
                                   i, hint="rename the bound variable or the function")
                return self.application(intern(name), i)
            if v is not None:
                return _Tm(v, self.o[i], "var", 0)
            return _Tm(intern(name), self.o[i], "name", 0)
        if kind == "num":
            self.i += 1
            if self.k[self.i] == "(":
                raise self.err(f"a number ('{self.t[i]}') cannot be applied to "
                               f"arguments", i)
            return _Tm(intern(self.t[i]), self.o[i], "name", 0)
        if kind == "(":
            self.i += 1
            if self.k[self.i] not in _STARTS:
                self.missing(i, "a formula or a term")
            inner = self.expr(0)
            if self.k[self.i] != ")":
                raise self.err(f"{self.unbalanced()}expected ')' to close the '(' "
                               f"at {self.where(i)}, found {self.found()}")
            self.i += 1
            return inner
        if kind == "not":
            self.i += 1
            if self.k[self.i] not in _STARTS:
                self.missing(i, "a formula")
            return Not(self.formula(self.expr(5)))
        if kind == "forall" or kind == "exists":
            return self.quantifier()
        if kind == "true":
            self.i += 1
            return TRUE
        if kind == "false":
            self.i += 1
            return FALSE
        raise self.err(f"expected a formula or a term, found {self.found()}")

    def application(self, name, head_i):
        open_i = self.i
        self.i += 1
        if self.k[self.i] == ")":
            raise self.err(f"'{name}()' has an empty argument list; write '{name}' "
                           f"for a constant or a propositional atom")
        args = [name]
        d = 0
        while True:
            a_i = self.i
            if self.k[self.i] not in _STARTS:
                raise self.missing_argument(name, open_i)
            t, td = self.term(self.expr(0), a_i, "arg")
            args.append(t)
            if td > d:
                d = td
            if not self.next_argument(name, open_i):
                break
        if d + 1 > MAX_DEPTH:
            raise self.err(f"the term is nested too deeply: the limit is "
                           f"{MAX_DEPTH:,} levels of nesting", head_i, cls=LimitError)
        return _Tm(tuple(args), self.o[head_i], "app", d + 1)

    def quantifier(self):
        q_i = self.i
        kind = self.k[q_i]
        self.i += 1
        names = []
        offs = []
        while self.k[self.i] == "name":
            names.append(self.t[self.i])
            offs.append(self.o[self.i])
            self.i += 1
        if not names:
            if self.t[self.i] in _RESERVED_NAMES:
                raise self.err(f"'{self.t[self.i]}' is a reserved word and cannot "
                               f"name a variable")
            raise self.err(f"expected a variable name after '{self.t[q_i]}', found "
                           f"{self.found()}", hint=f"write {kind} x y. FORMULA")
        if self.k[self.i] != ".":
            hint = f"write {kind} {' '.join(names)}. FORMULA"
            if self.k[self.i] == ",":
                more, j = list(names), self.i
                while self.k[j] in (",", "name"):
                    if self.k[j] == "name":
                        more.append(self.t[j])
                    j += 1
                hint = (f"separate the variables with spaces, not commas: "
                        f"{kind} {' '.join(more)}. FORMULA")
            elif self.k[self.i] in ("(", "=", "!=") and len(names) > 1:
                hint = (f"the '.' ends the variables: write {kind} "
                        f"{' '.join(names[:-1])}. {names[-1]}...")
            elif self.k[self.i] in ("(", "=", "!="):
                hint = f"the '.' ends the variables: write {kind} VARIABLES. {names[0]}..."
            if self.t[self.i] in _RESERVED_NAMES:
                raise self.err(f"'{self.t[self.i]}' is a reserved word and cannot "
                               f"name a variable", hint=hint)
            raise self.err(f"expected '.' after the variables of '{self.t[q_i]}', "
                           f"found {self.found()}", hint=hint)
        dot = self.i
        self.i += 1
        scope = self.scope
        saved = []
        vs = []
        for n, off in zip(names, offs):
            v = self.nvars
            self.nvars += 1
            self.varnames[v] = n
            self.binders[v] = off
            saved.append((n, scope.get(n)))
            scope[n] = v
            vs.append(v)
        if self.k[self.i] not in _STARTS:
            self.missing(dot, "a formula")
        body = self.formula(self.expr(0))
        for n, old in reversed(saved):
            if old is None:
                del scope[n]
            else:
                scope[n] = old
        return Quant(kind, tuple(vs), body)

    # ------------------------------------------------ deciding what it is

    def formula(self, node):
        if type(node) is not _Tm:
            return node
        kd = node.kind
        if kd == "var":
            name = self.varnames.get(node.term, "?")
            raise self.src.error(f"the variable '{name}' stands for an individual, "
                                 f"not a formula", node.off,
                                 "use it inside an atom such as p(x) or x = y")
        if kd == "infix":
            raise self.src.error(f"'{node.term[0]}' builds a term here, but a formula "
                                 f"is expected", node.off,
                                 "compare terms with '=' (e.g. x * y = z)")
        t = node.term
        if type(t) is str:
            self.symbols.use(t, "predicate", 0, self.src, node.off)
        else:
            self.symbols.use(t[0], "predicate", len(t) - 1, self.src, node.off)
        return Atom(t)

    def term(self, node, start_i, side, op_i=None):
        """Return (term, depth); ``side`` (left, right, arg) and ``op_i``
        say where the term stands, for the error message."""
        if type(node) is not _Tm:
            what = ("a term as argument" if side == "arg" else
                    f"a term on the {side} of '{self.t[op_i]}'")
            raise self.src.error(f"expected {what}, found a formula",
                                 self.o[start_i])
        kd = node.kind
        t = node.term
        if kd == "name":
            self.symbols.use(t, "function", 0, self.src, node.off)
        elif kd == "app":
            self.symbols.use(t[0], "function", len(t) - 1, self.src, node.off)
        return t, node.depth
