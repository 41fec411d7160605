"""The TPTP reader: the FOF and CNF dialects, as an import format.

Grammar followed (the TPTP language's own): ``fof(name, role, formula[,
annotations]).``, ``cnf(...)`` and ``include('file'[, [names]]).``.  A
quantifier's body and the operand of ``~`` are unit formulas (``! [X] : p(X)
& q`` is ``(! [X] : p(X)) & q``); ``&`` and ``|`` chain, the other binary
connectives take exactly two operands, and mixing needs parentheses.

Names: lowercase words, single-quoted names (``'a b'``; ``'abc'`` is the same
symbol as ``abc``), integers and other numbers, and double-quoted distinct
objects (whose name keeps its double quotes) are symbols; uppercase words are
variables.  Two different distinct objects are unequal (the language
interprets each as itself): :func:`distinct_objects` lists an obligation's,
and clausification adds their disequalities.  Numbers are ordinary constants
(``1 != 2`` needs an axiom).  CNF clauses are universally closed over their
variables, in order of first occurrence.  ``$true`` and ``$false`` are the
constants; the typed dialects and other ``$`` words are refused with a clear
message.
"""

from __future__ import annotations

import difflib

from .cursor import TokenCursor
from .errors import LimitError
from .formulas import (FALSE, TRUE, And, Atom, Iff, Implies, Not, Or, Quant,
                       Statement, CONJECTURE, NEGATED_CONJECTURE)
from .lexer import MAX_DEPTH, Source, describe, tokenize_tptp, unquote
from .terms import intern

ROLES = frozenset({"axiom", "hypothesis", "definition", "assumption", "lemma",
                   "theorem", "corollary", "conjecture", "negated_conjecture",
                   "plain", "unknown", "fi_domain", "fi_functors", "fi_predicates"})
TYPED = ("tff", "thf", "tcf", "tpi", "tfx")
_BINARY = frozenset({"&", "|", "=>", "<=", "<=>", "<~>", "~|", "~&"})
_NONASSOC = frozenset({"=>", "<=", "<=>", "<~>", "~|", "~&"})
_NAMEKINDS = ("lower", "quoted", "num")
_TERM_STARTS = frozenset({"var", "lower", "quoted", "num", "distinct", "dollar"})


def is_distinct_object(name) -> bool:
    """Whether a symbol's name is a TPTP distinct object: the reader keeps the
    double quotes in the name (``"a"``), and refuses a single-quoted name that
    would read the same (``'"a"'``), so the spelling tells them apart."""
    return type(name) is str and len(name) >= 2 and name[0] == '"' and name[-1] == '"'


def _term_objects(t, out: list) -> None:
    stack = [t]
    while stack:
        x = stack.pop()
        tx = type(x)
        if tx is str:
            if is_distinct_object(x):
                out.append(x)
        elif tx is tuple:
            stack.extend(reversed(x[1:]))


def formula_objects(f, out: list) -> None:
    """Distinct objects in term positions of ``f``, in the order met."""
    stack = [f]
    while stack:
        x = stack.pop()
        if isinstance(x, Atom):
            t = x.term
            if type(t) is tuple:
                for a in t[1:]:
                    _term_objects(a, out)
        elif isinstance(x, Not):
            stack.append(x.arg)
        elif isinstance(x, (And, Or)):
            stack.extend(reversed(x.args))
        elif isinstance(x, (Implies, Iff)):
            stack.append(x.right)
            stack.append(x.left)
        elif isinstance(x, Quant):
            stack.append(x.body)


def distinct_objects(problem, conjecture) -> dict:
    """The distinct objects of one proof obligation (its statements: every
    one that is not a conjecture, plus the conjecture named ``conjecture``),
    as ``name -> bool``, in order of first occurrence: True when the object
    occurs in a statement that is not conjecture-derived (neither the
    conjecture nor a negated conjecture).  Only TPTP statements contribute:
    the native language has no distinct objects.

    The TPTP language interprets a distinct object as itself, so two
    different ones are unequal without any axiom saying so (from memory of
    the TPTP syntax documentation, which gives an example of this kind);
    clausification adds that disequality for every pair, the proof checker
    and the model evaluator hold the engines to it (DEVELOPERS.md, "TPTP
    import")."""
    out: dict = {}
    for st in problem.statements:
        if st.language != "tptp":
            continue
        if st.role == CONJECTURE and st.name != conjecture:
            continue
        axiom = st.role not in (CONJECTURE, NEGATED_CONJECTURE)
        found: list = []
        formula_objects(st.formula, found)
        for name in found:
            if name not in out:
                out[name] = axiom
            elif axiom:
                out[name] = True
    return out


def _tdescribe(kind, text):
    if kind == "lower":
        return f"the name '{text}'"
    if kind == "distinct":
        return f"the distinct object {text}"
    if kind == "dollar":
        return f"'{text}'"
    return describe(kind, text)


class TptpParser(TokenCursor):
    def __init__(self, src: Source, symbols, on_include):
        super().__init__(src, symbols, on_include, tokenize_tptp)
        self.cnf = False
        self.free: list = []

    def found(self, i=None):
        i = self.i if i is None else i
        return _tdescribe(self.k[i], self.t[i])

    def unbalanced(self) -> str:
        return "unbalanced brackets: " if self.k[self.i] in ("eof", ".") else ""

    def expect(self, kind, what, hint=None):
        if self.k[self.i] != kind:
            raise self.err(f"expected '{kind}' {what}, found {self.found()}", hint=hint)
        self.i += 1

    # ---------------------------------------------------------- top level

    def parse(self) -> list:
        out = []
        while self.k[self.i] != "eof":
            kind, text = self.k[self.i], self.t[self.i]
            if kind == "lower" and text in ("fof", "cnf"):
                out.append(self.annotated())
            elif kind == "lower" and text == "include":
                out.extend(self.include())
            elif kind == "lower" and text in TYPED:
                raise self.err(f"the typed TPTP dialect '{text}' is not supported: "
                               f"Nightjar reads the fof and cnf dialects only")
            elif kind == "lower":
                m = difflib.get_close_matches(text, ("fof", "cnf", "include"), n=1,
                                              cutoff=0.6)
                msg = f"unknown kind of statement '{text}'"
                if m:
                    msg += f"; did you mean '{m[0]}'?"
                raise self.err(msg, hint="TPTP statements are fof(...), cnf(...) "
                                         "and include(...)")
            elif kind == ")":
                raise self.err("unbalanced brackets: this ')' has no matching '('")
            else:
                raise self.err(f"expected fof(...), cnf(...) or include(...), found "
                               f"{self.found()}")
        return out

    def include(self):
        self.i += 1
        self.expect("(", "after 'include'", "write include('file.ax').")
        if self.k[self.i] != "quoted":
            raise self.err(f"expected a file name in single quotes, found {self.found()}",
                           hint="write include('file.ax').")
        at = self.i
        path = unquote(self.t[at])
        self.i += 1
        names = None
        if self.k[self.i] == ",":
            self.i += 1
            self.expect("[", "to open the list of names to include")
            names = []
            if self.k[self.i] != "]":
                while True:
                    if self.k[self.i] not in _NAMEKINDS:
                        raise self.err(f"expected a statement name, found {self.found()}")
                    nm = self.t[self.i]
                    names.append((intern(unquote(nm) if self.k[self.i] == "quoted" else nm),
                                  self.o[self.i]))
                    self.i += 1
                    if self.k[self.i] == ",":
                        self.i += 1
                        continue
                    break
            self.expect("]", "to close the list of names")
        self.expect(")", "to close the include")
        self.expect(".", "at the end of the include")
        if not path:
            raise self.err("the include has an empty file name", at)
        self.includes += 1
        return self.on_include(path, self.src, self.o[at], names)

    def annotated(self) -> Statement:
        start = self.i
        dialect = self.t[start]
        self.i += 1
        open_i = self.i
        self.expect("(", f"after '{dialect}'")
        kind = self.k[self.i]
        if kind not in _NAMEKINDS:
            raise self.err(f"expected the statement's name, found {self.found()}",
                           hint=f"write {dialect}(name, role, formula).")
        name = intern(unquote(self.t[self.i]) if kind == "quoted" else self.t[self.i])
        self.i += 1
        self.expect(",", "after the statement's name")
        if self.k[self.i] != "lower":
            raise self.err(f"expected a role (axiom, conjecture, ...), found {self.found()}")
        role = self.t[self.i]
        if role == "type":
            raise self.err("the role 'type' belongs to the typed TPTP dialects, which "
                           "are not supported")
        if role not in ROLES:
            m = difflib.get_close_matches(role, sorted(ROLES), n=1, cutoff=0.6)
            raise self.err(f"unknown role '{role}'" + (f"; did you mean '{m[0]}'?" if m else ""),
                           hint="roles are axiom, hypothesis, definition, lemma, "
                                "conjecture, negated_conjecture, ...")
        self.i += 1
        self.expect(",", "after the role")
        self.scope = {}
        self.varnames = {}
        self.nvars = 0
        self.depth = 0
        self.cnf = dialect == "cnf"
        self.free = []
        f = self.formula()
        if self.cnf and self.free:
            f = Quant("forall", tuple(self.free), f)
        if self.k[self.i] == ",":
            self.skip_annotations(open_i)
        if self.k[self.i] != ")":
            if self.k[self.i] in _BINARY:
                raise self.err(f"'{self.t[self.i]}' cannot follow here without "
                               "parentheses: TPTP needs them when connectives are "
                               "mixed or a non-associative one is chained")
            if self.k[self.i] in ("eof", "."):
                # the place of the statement's word (where 'fof' starts), not
                # of its '('
                raise self.err(f"unbalanced brackets: the '{dialect}(' at "
                               f"{self.where(start)} is never closed")
            raise self.err(f"expected ')' to end the {dialect} statement begun at "
                           f"{self.where(start)} (or ',' before its annotations), "
                           f"found {self.found()}")
        self.i += 1
        if self.k[self.i] == ")":
            raise self.err("unbalanced brackets: this ')' has no matching '('")
        if self.k[self.i] != ".":
            raise self.err(f"expected '.' at the end of the statement, found {self.found()}")
        self.i += 1
        last = self.i - 1
        text = self.src.text[self.o[start]:self.o[last] + 1]
        return Statement(name, role, f, self.varnames, self.src.span(self.o[start]),
                         "tptp", text)

    def skip_annotations(self, open_i):
        depth = 0
        k = self.k
        while True:
            kind = k[self.i]
            if kind == "eof":
                raise self.err(f"unbalanced brackets: the '(' at {self.where(open_i)} "
                               f"is never closed")
            if kind in ("(", "["):
                depth += 1
            elif kind in (")", "]"):
                if depth == 0:
                    if kind == "]":
                        raise self.err("unbalanced brackets: this ']' has no matching '['")
                    return
                depth -= 1
            self.i += 1

    # ----------------------------------------------------------- formulas

    def formula(self):
        left = self.unit()
        kind = self.k[self.i]
        if kind == "&" or kind == "|":
            args = [left]
            while self.k[self.i] == kind:
                self.i += 1
                args.append(self.unit())
            if self.k[self.i] in _BINARY:
                raise self.err(f"'{self.t[self.i]}' after a chain of '{kind}' needs "
                               f"parentheses (TPTP does not rank connectives)")
            return And(tuple(args)) if kind == "&" else Or(tuple(args))
        if kind in _NONASSOC:
            self.i += 1
            right = self.unit()
            if self.k[self.i] in _BINARY:
                raise self.err(f"'{self.t[self.i]}' cannot follow '{kind}' without "
                               f"parentheses (TPTP does not rank connectives)")
            if kind == "=>":
                return Implies(left, right)
            if kind == "<=":
                return Implies(right, left)
            if kind == "<=>":
                return Iff(left, right)
            if kind == "<~>":
                return Not(Iff(left, right))
            if kind == "~|":
                return Not(Or((left, right)))
            return Not(And((left, right)))
        return left

    def unit(self):
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise self.err(f"the formula is nested too deeply: the limit is "
                           f"{MAX_DEPTH:,} levels of nesting", cls=LimitError)
        kind = self.k[self.i]
        if kind == "~":
            self.i += 1
            r = Not(self.unit())
        elif kind == "!" or kind == "?":
            r = self.quantified()
        elif kind == "(":
            open_i = self.i
            self.i += 1
            r = self.formula()
            if self.k[self.i] != ")":
                if self.k[self.i] in _BINARY:
                    raise self.err(f"'{self.t[self.i]}' cannot follow here without "
                                   "parentheses (TPTP does not rank connectives)")
                raise self.err(f"{self.unbalanced()}expected ')' to close the '(' at "
                               f"{self.where(open_i)}, found {self.found()}")
            self.i += 1
        elif kind == "dollar":
            w = self.t[self.i]
            if w == "$true":
                self.i += 1
                r = TRUE
            elif w == "$false":
                self.i += 1
                r = FALSE
            else:
                raise self.err(f"the defined symbol '{w}' is not supported (only "
                               f"$true and $false; arithmetic and types are not read)")
        elif kind in ("lower", "quoted", "num", "var", "distinct"):
            r = self.atom()
        elif kind in ("eof", ")", ",", "."):
            raise self.err(f"missing operand: expected a formula, found {self.found()}")
        else:
            raise self.err(f"expected a formula, found {self.found()}")
        self.depth -= 1
        return r

    def quantified(self):
        q_i = self.i
        kind = "forall" if self.k[q_i] == "!" else "exists"
        self.i += 1
        self.expect("[", f"after '{self.t[q_i]}'", hint=f"write {self.t[q_i]} [X, Y] : ...")
        names = []
        while True:
            if self.k[self.i] != "var":
                raise self.err(f"expected a variable (a word starting with an uppercase "
                               f"letter), found {self.found()}")
            names.append(self.t[self.i])
            self.i += 1
            if self.k[self.i] == ":":
                raise self.err("typed variables belong to the typed TPTP dialects, "
                               "which are not supported")
            if self.k[self.i] == ",":
                self.i += 1
                continue
            break
        self.expect("]", "to close the variable list")
        self.expect(":", "after the variable list", hint=f"write {self.t[q_i]} [X] : (...)")
        scope = self.scope
        saved = []
        vs = []
        for n in names:
            v = self.nvars
            self.nvars += 1
            self.varnames[v] = n
            saved.append((n, scope.get(n)))
            scope[n] = v
            vs.append(v)
        body = self.unit()
        for n, old in reversed(saved):
            if old is None:
                del scope[n]
            else:
                scope[n] = old
        return Quant(kind, tuple(vs), body)

    def atom(self):
        a_i = self.i
        t = self.term()
        kind = self.k[self.i]
        if kind == "=" or kind == "!=":
            self.i += 1
            r_i = self.i
            r = self.term()
            self.fun(t, a_i)
            self.fun(r, r_i)
            a = Atom(("=", t, r))
            return a if kind == "=" else Not(a)
        if type(t) is int:
            raise self.err(f"the variable '{self.t[a_i]}' stands for an individual, "
                           f"not a formula", a_i)
        if self.k[a_i] == "distinct" or self.k[a_i] == "num":
            raise self.err(f"{self.found(a_i)} is a term, not a formula", a_i)
        if type(t) is str:
            self.symbols.use(t, "predicate", 0, self.src, self.o[a_i])
        else:
            self.symbols.use(t[0], "predicate", len(t) - 1, self.src, self.o[a_i])
        return Atom(t)

    def fun(self, t, i):
        """Record term ``t`` (starting at token ``i``) as a function use."""
        if type(t) is str:
            self.symbols.use(t, "function", 0, self.src, self.o[i])
        elif type(t) is tuple:
            self.symbols.use(t[0], "function", len(t) - 1, self.src, self.o[i])

    def term(self):
        """Parse a term; the head symbol of an application is checked by the
        caller (function or predicate), arguments are checked here."""
        i = self.i
        kind = self.k[i]
        text = self.t[i]
        if kind == "var":
            self.i += 1
            v = self.scope.get(text)
            if v is None:
                if not self.cnf:
                    raise self.err(f"the variable '{text}' is not bound by a quantifier",
                                   i, hint="fof formulas must be closed; note that a "
                                           "quantifier's body is a unit formula: write "
                                           "! [X] : ( ... ) around a longer body")
                v = self.nvars
                self.nvars += 1
                self.varnames[v] = text
                self.scope[text] = v
                self.free.append(v)
            if self.k[self.i] == "(":
                raise self.err(f"the variable '{text}' cannot be applied to arguments", i)
            return v
        if kind in ("lower", "quoted"):
            name = intern(unquote(text) if kind == "quoted" else text)
            if kind == "quoted" and is_distinct_object(name):
                raise self.err(f"the quoted name {text} would be the same symbol as "
                               f"the distinct object {name}: Nightjar keeps a distinct "
                               f"object's double quotes in its name",
                               hint="rename the symbol, or write the distinct object "
                                    "without the single quotes if that is what is meant")
            self.i += 1
            if self.k[self.i] == "(":
                return self.application(name, i)
            return name
        if kind == "num" or kind == "distinct":
            self.i += 1
            return intern(text)
        if kind == "dollar":
            raise self.err(f"'{text}' is not a term here (only $true and $false are "
                           f"read, as formulas)")
        raise self.err(f"expected a term, found {self.found()}")

    def application(self, name, head_i):
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise self.err(f"the term is nested too deeply: the limit is "
                           f"{MAX_DEPTH:,} levels of nesting", cls=LimitError)
        open_i = self.i
        self.i += 1
        args = [name]
        while True:
            a_i = self.i
            if self.k[a_i] not in _TERM_STARTS:
                raise self.missing_argument(name, open_i)
            a = self.term()
            self.fun(a, a_i)
            args.append(a)
            if not self.next_argument(name, open_i):
                break
        self.depth -= 1
        return tuple(args)
