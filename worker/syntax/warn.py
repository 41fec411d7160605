"""Warnings: likely slips in a problem that reads without error.

A warning never changes what was read, a verdict or an exit code; it says
what the reader assumed and points at the place (``file:line:col``, the
line and a caret, like an :class:`~.errors.InputError`).  Two kinds:

``free-name`` (native language only)
    In the native language a name bound by a quantifier is a variable in its
    scope and any other name is a constant, so a mistyped variable
    (``forall u. admin(v) implies staff(u)``) silently becomes a constant.
    A constant ``c`` used free inside the scope of a quantifier of statement
    ``S`` is reported when

    1. no other statement of the problem (includes counted) uses ``c``, and
    2. ``c`` looks like a variable of ``S``: ``S`` binds a variable named
       ``c`` somewhere else (that quantifier's scope ended before this use:
       ``forall y. (forall x. p(x)) implies q(x, y)``); or ``c`` is named
       like a variable (one letter, optionally followed by digits: ``v``,
       ``x2``, ``y_1``) and so is some variable ``S`` binds, with the same
       case (``v`` beside ``u``; not ``a`` beside ``X``); or ``c`` is one
       edit away from a variable of ``S`` of at least 3 characters
       (``fery`` beside ``ferry``); and
    3. unless ``S`` binds ``c`` elsewhere, ``S`` does not also use ``c``
       outside every quantifier (``p(a) and forall x. q(x, a)`` says ``a``
       is meant as a constant).

    Only the first such use in a statement is reported.  A quoted name
    (``'v'``) is always a symbol and never reported: quoting is how an
    author says "this is a constant", and it silences the warning.

``misspelt-symbol`` (both languages)
    A predicate or function name of at least 4 characters used exactly once
    in the problem, one edit (insert, delete, replace, swap two neighbours;
    a digit does not count) away from a name of the same kind and arity used
    at least 3 times.

The rules were chosen against ``corpus/`` (DEVELOPERS.md, "Warnings"): the
constants that occur in only one statement there are the ``a``, ``b``, ``c``
of single-statement Pelletier problems, whose variables are capitalised.

In TPTP a variable is capitalised wherever it occurs and a free variable in
``fof`` is already an error, so whether a name is a variable never depends
on a quantifier's scope, and the free-name rule does not apply there.

:func:`find_warnings` works on a read :class:`~.formulas.Problem` alone (the
statements keep their text); ``text_of(file)`` may supply whole file texts so
that the echoed line is the file's line, not rebuilt from the statement.
"""

from __future__ import annotations

import bisect
import gc
import re
from collections import Counter
from dataclasses import dataclass

from .errors import InputError, Span, visible
from .formulas import And, Atom, Iff, Implies, Not, Or, Quant
from .lexer import Source, tokenize_native, tokenize_tptp, unquote, unquote_native
from .symbols import describe_use

FREE_NAME = "free-name"
MISSPELT = "misspelt-symbol"

MISSPELT_MIN_LEN = 4      # both names at least this long
MISSPELT_FREQUENT = 3     # "frequently used": at least this many uses

_VAR_SHAPE = re.compile(r"[^\W\d_](?:_?[0-9]+)?")


@dataclass(frozen=True, slots=True)
class InputWarning:
    kind: str                  # FREE_NAME | MISSPELT
    name: str                  # the symbol the warning is about
    statement: str             # the statement it is in
    role: str                  # that statement's role
    message: str
    span: Span
    line_text: str | None = None
    hint: str | None = None

    def render(self) -> str:
        """``file:line:col: warning: message`` + source line + caret (+ hint),
        laid out exactly like an input error."""
        text = InputError(self.message, self.span, self.line_text, self.hint).render()
        where = f"{visible(str(self.span))}: "
        return f"{where}warning: " + text[len(where) + len("error: "):]

    def to_json(self) -> dict:
        return {"kind": self.kind, "name": visible(self.name),
                "statement": visible(self.statement),
                "message": visible(self.message), "file": visible(self.span.file),
                "line": self.span.line, "col": self.span.col,
                "hint": visible(self.hint) if self.hint else None,
                "text": self.render()}


def for_obligation(warnings, conjecture: str | None) -> list:
    """The warnings about statements of one proof obligation: everything but
    the other conjectures."""
    return [w for w in warnings
            if w.role != "conjecture" or conjecture is None or w.statement == conjecture]


# ------------------------------------------------------------ the formulas

def _walk(f, heads: list) -> tuple:
    """The constants of ``f`` (a set) and those of them under a quantifier
    (a set); every use of a predicate or function is appended to ``heads``."""
    free, scoped = [], []
    stack = [(f, False)]
    pop, push = stack.pop, stack.append
    hd = heads.append
    while stack:
        g, q = pop()
        t = type(g)
        if t is Atom:
            tm = g.term
            if type(tm) is str:
                hd(tm)                           # a propositional atom
                continue
            if tm[0] != "=":
                hd(tm[0])
            cs = scoped if q else free
            terms = list(tm[1:])
            while terms:
                x = terms.pop()
                tx = type(x)
                if tx is str:
                    cs.append(x)
                elif tx is tuple:
                    hd(x[0])
                    terms.extend(x[1:])
        elif t is Quant:
            push((g.body, True))
        elif t is Not:
            push((g.arg, q))
        elif t is And or t is Or:
            for a in g.args:
                push((a, q))
        elif t is Implies or t is Iff:
            push((g.left, q))
            push((g.right, q))
    sc = set(scoped)
    return sc.union(free), sc


def _var_shaped(name: str) -> bool:
    return _VAR_SHAPE.fullmatch(name) is not None


def _upper(name: str) -> bool:
    return name[:1].isupper()


# -------------------------------------------------------------- the tokens

class _Located:
    """A statement's tokens, with offsets in its file and line texts."""

    def __init__(self, st, file_source):
        self.st = st
        src = Source(st.span.file, st.text)
        tok = tokenize_native if st.language == "native" else tokenize_tptp
        self.k, self.t, self.o = tok(src)
        self.stmt_src = src
        self._file_src = None
        self._file_source = file_source

    def file_source(self):
        """The Source of the statement's file, if its text is known and the
        statement stands where its span says; else None."""
        if self._file_src is None:
            src = self._file_source(self.st.span.file)
            ok = src is not None and src.text.startswith(self.st.text, self._start(src))
            self._file_src = src if ok else False
        return self._file_src or None

    def _start(self, src) -> int:
        st = src.starts()
        ln = self.st.span.line
        return (st[ln - 1] if ln <= len(st) else len(src.text)) + self.st.span.col - 1

    def place(self, i):
        """(Span, line text) of token ``i``."""
        off = self.o[i]
        fsrc = self.file_source()
        if fsrc is not None:
            at = self._start(fsrc) + off
            return fsrc.span(at), fsrc.line_text(at)
        ln, col = self.stmt_src.linecol(off)
        line = self.stmt_src.line_text(off)
        sp = self.st.span
        if ln == 1:
            line = " " * (sp.col - 1) + line
            col += sp.col - 1
        return Span(sp.file, sp.line + ln - 1, col), line

    def formula_start(self) -> int:
        """The index of the formula's first token."""
        k = self.k
        if self.st.language == "native":
            i = 0
            while k[i] != ":" and k[i] != "eof":
                i += 1
            return i + 1
        commas = 0
        i = 0
        while k[i] != "eof":
            if k[i] == ",":
                commas += 1
                if commas == 2:
                    return i + 1
            i += 1
        return i

    def free_in_scope(self):
        """Native, over bare names not applied to arguments: ``{name: token
        index}`` of the first free use under a quantifier, the set of names
        used outside every quantifier, and ``{variable name: token index of
        its first binder}``."""
        k, t = self.k, self.t
        i = self.formula_start()
        depth = 0
        binders = []            # (paren depth, names)
        bound_at: dict = {}
        found: dict = {}
        outside = set()
        while k[i] != "eof":
            kind = k[i]
            if kind == "(":
                depth += 1
            elif kind == ")":
                depth -= 1
                while binders and binders[-1][0] > depth:
                    binders.pop()
            elif kind == "forall" or kind == "exists":
                names = []
                i += 1
                while k[i] == "name":
                    names.append(t[i])
                    bound_at.setdefault(t[i], i)
                    i += 1
                binders.append((depth, frozenset(names)))
                if k[i] != ".":
                    continue
            elif kind == "name" and k[i + 1] != "(":
                name = t[i]
                if not binders:
                    outside.add(name)
                elif name not in found and not any(name in b for _, b in binders):
                    found[name] = i
            i += 1
        return found, outside, bound_at

    def first_use(self, name: str):
        """The token index of the first use of symbol ``name`` in the formula."""
        k, t = self.k, self.t
        native = self.st.language == "native"
        bare = ("name",) if native else ("lower",)
        for i in range(self.formula_start(), len(k)):
            kind = k[i]
            if kind in bare and t[i] == name:
                return i
            if kind == "quoted":
                try:
                    text = unquote_native(t[i]) if native else unquote(t[i])
                except ValueError:
                    continue
                if text == name:
                    return i
        return None


# ------------------------------------------------------------- the checks

def _one_edit(a: str, b: str) -> bool:
    """One insert, delete, replace or neighbour swap turns ``a`` into ``b``,
    and the edit does not touch a digit."""
    la, lb = len(a), len(b)
    if a == b or abs(la - lb) > 1:
        return False
    if la == lb:
        d = [i for i in range(la) if a[i] != b[i]]
        if len(d) == 1:
            return not (a[d[0]].isdigit() or b[d[0]].isdigit())
        return (len(d) == 2 and d[1] == d[0] + 1 and a[d[0]] == b[d[1]]
                and a[d[1]] == b[d[0]] and not a[d[0]].isdigit()
                and not a[d[1]].isdigit())
    if la > lb:
        a, b = b, a
    i = 0
    while i < len(a) and a[i] == b[i]:
        i += 1
    return a[i:] == b[i + 1:] and not b[i].isdigit()


def _free_name_warning(st, name, loc, i, like, bound_at) -> InputWarning:
    span, line = loc.place(i)
    msg = (f"'{name}' is read as a constant; bind it with forall/exists if it is "
           f"meant as a variable")
    if name in bound_at:
        bspan, _ = loc.place(bound_at[name])
        why = (f"this statement binds '{name}' at line {bspan.line}, column "
               f"{bspan.col}, but that quantifier's scope ends before this use")
    else:
        why = (f"no other statement uses '{name}', and this statement's variables "
               f"({', '.join(like)}) are named like it")
    hint = f"{why}; if a constant is meant, write it in quotes: '{name}'"
    return InputWarning(FREE_NAME, name, st.name, st.role, msg, span, line, hint)


def _deletions(name: str):
    yield name
    for i in range(len(name)):
        yield name[:i] + name[i + 1:]


def _misspellings(uses: Counter, sig: dict) -> dict:
    """``{name used once: the frequent name it is one edit away from}``."""
    index: dict = {}                   # deletion key -> frequent names
    for m, c in uses.items():
        if c >= MISSPELT_FREQUENT and len(m) >= MISSPELT_MIN_LEN and m in sig:
            for key in _deletions(m):
                index.setdefault(key, set()).add(m)
    if not index:
        return {}
    out = {}
    for n, c in uses.items():
        if c != 1 or len(n) < MISSPELT_MIN_LEN or n not in sig:
            continue
        s = sig[n]
        near = set()
        for key in _deletions(n):
            near.update(index.get(key, ()))
        near = [m for m in near if sig[m].kind == s.kind and sig[m].arity == s.arity
                and _one_edit(n, m)]
        if near:
            out[n] = max(near, key=lambda m: (uses[m], m))
    return out


def find_warnings(problem, text_of=None) -> list:
    """Every warning of ``problem``, in the order of its statements.
    ``text_of(file) -> str | None`` (optional) gives a file's text for the
    echoed lines; without it they are rebuilt from the statements' text."""
    # No reference cycles are made; the cyclic collector would rescan the
    # problem's formulas again and again (5 MB: 0.5 s with it, 0.2 s without).
    was = gc.isenabled()
    gc.disable()
    try:
        return _find(problem, text_of)
    finally:
        if was:
            gc.enable()


def _find(problem, text_of) -> list:
    stmts = problem.statements
    per = []
    in_stmts: Counter = Counter()      # constant -> statements using it
    uses: Counter = Counter()          # predicate/function -> uses
    heads: list = []
    ends = []                          # statement i's uses end at heads[ends[i]]
    for st in stmts:
        consts, scoped = _walk(st.formula, heads)
        in_stmts.update(consts)
        per.append(scoped)
        ends.append(len(heads))
    uses.update(heads)
    sig = problem.signature
    misspelt = _misspellings(uses, sig)
    spelt_in: dict = {}                # statement index -> its misspelt names
    if misspelt:
        for at, h in enumerate(heads):
            if h in misspelt:
                spelt_in.setdefault(bisect.bisect_right(ends, at), []).append(h)

    sources: dict = {}

    def file_source(name):
        if name not in sources:
            text = None
            if text_of is not None:
                try:
                    text = text_of(name)
                except Exception:      # e.g. a file gone since: rebuild the line
                    text = None
            if isinstance(text, str) and text.startswith("\ufeff"):
                text = text[1:]
            sources[name] = Source(name, text) if isinstance(text, str) else None
        return sources[name]

    out = []
    for si, (st, scoped) in enumerate(zip(stmts, per)):
        if st.span is None:
            continue
        cands = {}                     # constant -> variables named like it
        if st.language == "native" and scoped:
            bound = sorted(set(st.varnames.values()))
            for c in scoped:
                if in_stmts[c] != 1:
                    continue
                like = [b for b in bound if _var_shaped(b) and _upper(b) == _upper(c)]
                if c in bound or (_var_shaped(c) and like):
                    cands[c] = like
                else:
                    near = [b for b in bound if len(b) >= 3 and _one_edit(c, b)]
                    if near:
                        cands[c] = near
        spelt = spelt_in.get(si, ())
        if not cands and not spelt:
            continue
        try:
            loc = _Located(st, file_source)
        except InputError:
            continue
        found = []
        if cands:
            free, outside, bound_at = loc.free_in_scope()
            for c, like in cands.items():
                if c in free and (c in bound_at or c not in outside):
                    i = free[c]
                    found.append((i, _free_name_warning(st, c, loc, i, like, bound_at)))
        for n in spelt:
            i = loc.first_use(n)
            if i is None:
                continue
            m = misspelt[n]
            s = sig[n]
            span, line = loc.place(i)
            found.append((i, InputWarning(
                MISSPELT, n, st.name, st.role,
                f"'{n}' is used only here and is read as a symbol of its own "
                f"({describe_use(s.kind, s.arity)}); did you mean '{m}' (used "
                f"{uses[m]} times)?",
                span, line,
                f"a name used once is a symbol nothing else is said about; if "
                f"'{n}' is meant, ignore this warning")))
        found.sort(key=lambda p: p[0])
        out.extend(w for _, w in found)
    return out
