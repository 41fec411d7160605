"""The normal-form pipeline: from a parsed problem to the clauses of one proof
obligation.

``clausify(problem, conjecture)`` takes every statement that is not a
conjecture, plus the named conjecture negated, and turns each into clauses:

1. **simplify and NNF** (:func:`_nnf`): ``true``/``false`` are folded away,
   implications are rewritten, negations are pushed onto atoms.  Equivalences
   are *kept* as nodes (``iff`` is its own node in this "NNF with
   equivalences"), so that their cost can be weighed before they are expanded.
   Smart constructors flatten nested and/or and do miniscoping as the tree is
   built (:func:`_quant`).
2. **naming** (:func:`_Namer`): bottom-up, every node gets an estimate of the
   number of clauses its CNF has (``p``) and its negation's CNF has (``n``).
   Where a node's estimate exceeds :data:`NAMING_LIMIT`, children are replaced
   by fresh predicates ``defN(free variables)`` as long as that lowers the
   estimate including the definition's own clauses (definitional CNF).  A
   definition is one-way when the child occurs with one polarity, both ways
   when it occurs under an equivalence.
3. **expand equivalences** by polarity and miniscope again (:func:`_expand`).
4. **Skolemize** (:func:`_Skolemizer`): universally quantified variables get
   fresh numbers (copies made by expansion are renamed apart); every
   existential gets a fresh Skolem symbol whose arguments are only the
   universal variables free in its scope (inner Skolemization).
5. **distribute** or over and (:func:`_cnf`), then drop tautologies and
   repeated literals and number each clause's variables ``0..n-1`` in order of
   first occurrence.

Everything is deterministic: the same problem gives the same clauses in the
same order, with the same Skolem and definition names.
"""

from __future__ import annotations

import sys

from .clauses import (ClausifiedProblem, Definition, InputClause, SkolemSymbol,
                      DISTINCT_ROLE, DISTINCT_SOURCE)
from .syntax.errors import InputError, LimitError, Span
from .syntax.formulas import (And, Atom, Const, Iff, Implies, Not, Or, Quant,
                              Symbol, CONJECTURE, NEGATED_CONJECTURE)
from .syntax.lexer import Source, tokenize_tptp
from .syntax.printer import format_formula
from .syntax.terms import EQ, normalize_vars, symbols as term_symbols
from .syntax.tptp import formula_objects, distinct_objects

# A node's estimated clause count above which its children are named.
NAMING_LIMIT = 32
# Hard limits on the output of one clausification.
MAX_CLAUSES = 1_000_000
MAX_LITERALS = 5_000_000
# Different TPTP distinct objects one obligation may have: each pair becomes
# an input clause "a" != "b", so n objects give n(n-1)/2 clauses (200: 19,900).
MAX_DISTINCT_OBJECTS = 200
# Python recursion limit while clausifying (the readers refuse formulas nested
# deeper than about a thousand levels; each level costs a few frames here).
RECURSION_LIMIT = 20_000

# ------------------------------------------------------------------ nodes
#
# Internal formulas are tuples whose second field is the frozenset of free
# variables (ints):
#   ('L', fv, sign, atom)       literal
#   ('A', fv, children)         conjunction (two or more children)
#   ('O', fv, children)         disjunction (two or more children)
#   ('E', fv, left, right)      equivalence
#   ('F', fv, var, body)        forall (one variable)
#   ('X', fv, var, body)        exists (one variable)
# The constants true/false are the Python bools and never occur inside a node.

_EMPTY = frozenset()


def _atom_vars(t, acc):
    tt = type(t)
    if tt is int:
        acc.add(t)
    elif tt is tuple:
        for a in t[1:]:
            _atom_vars(a, acc)
    return acc


def _lit(sign, atom):
    return ('L', frozenset(_atom_vars(atom, set())), sign, atom)


def _junction(tag, kids):
    """Build an 'A' or 'O' node: flatten, fold constants, unwrap singletons."""
    unit = tag == 'A'        # True is the unit of and, False the unit of or
    flat = []
    for k in kids:
        if k is unit:
            continue
        if k is (not unit):
            return not unit
        if k[0] == tag:
            flat.extend(k[2])
        else:
            flat.append(k)
    if not flat:
        return unit
    if len(flat) == 1:
        return flat[0]
    fv = frozenset().union(*[k[1] for k in flat])
    return (tag, fv, tuple(flat))


def _and(kids):
    return _junction('A', kids)


def _or(kids):
    return _junction('O', kids)


def _quant(kind, v, body):
    """``kind v. body`` with miniscoping: a forall is pushed into every
    conjunct and into the part of a disjunction that mentions ``v`` (dually
    for exists); a quantifier whose variable does not occur is dropped."""
    if type(body) is bool or v not in body[1]:
        return body
    tag = body[0]
    spread = 'A' if kind == 'F' else 'O'     # forall over and, exists over or
    split = 'O' if kind == 'F' else 'A'
    if tag == spread:
        return _junction(spread, [_quant(kind, v, k) for k in body[2]])
    if tag == split:
        inside = [k for k in body[2] if v in k[1]]
        if len(inside) < len(body[2]):
            # the quantified part takes the place of its first member, so
            # the literals keep the order the user wrote them in
            part = inside[0] if len(inside) == 1 else _junction(split, inside)
            out = []
            for k in body[2]:
                if v not in k[1]:
                    out.append(k)
                elif k is inside[0]:
                    out.append(_quant(kind, v, part))
            return _junction(split, out)
    return (kind, body[1] - {v}, v, body)


def _iff(a, b):
    if type(a) is bool:
        return b if a else _neg(b)
    if type(b) is bool:
        return a if b else _neg(a)
    return ('E', a[1] | b[1], a, b)


def _neg(node):
    """Negation of a node, in NNF (an equivalence negates its right side)."""
    if type(node) is bool:
        return not node
    tag = node[0]
    if tag == 'L':
        return ('L', node[1], not node[2], node[3])
    if tag == 'A':
        return ('O', node[1], tuple(_neg(k) for k in node[2]))
    if tag == 'O':
        return ('A', node[1], tuple(_neg(k) for k in node[2]))
    if tag == 'E':
        return ('E', node[1], node[2], _neg(node[3]))
    return ('X' if tag == 'F' else 'F', node[1], node[2], _neg(node[3]))


# ------------------------------------------------------------------ step 1

def _nnf(f, pos, free=None):
    """Simplified negation normal form (with equivalences) of ``f`` if
    ``pos``, of ``not f`` otherwise."""
    while isinstance(f, Not):
        f = f.arg
        pos = not pos
    if isinstance(f, Atom):
        return _lit(pos, f.term)
    if isinstance(f, Const):
        return f.value if pos else not f.value
    if isinstance(f, And):
        kids = [_nnf(a, pos) for a in f.args]
        return _and(kids) if pos else _or(kids)
    if isinstance(f, Or):
        kids = [_nnf(a, pos) for a in f.args]
        return _or(kids) if pos else _and(kids)
    if isinstance(f, Implies):
        left = _nnf(f.left, not pos)
        right = _nnf(f.right, pos)
        return _or([left, right]) if pos else _and([left, right])
    if isinstance(f, Iff):
        return _iff(_nnf(f.left, True), _nnf(f.right, pos))
    if isinstance(f, Quant):
        body = _nnf(f.body, pos)
        forall = (f.kind == "forall") == pos
        kind = 'F' if forall else 'X'
        for v in reversed(f.vars):
            body = _quant(kind, v, body)
        return body
    raise TypeError(f"not a formula: {f!r}")


# ------------------------------------------------------------------ step 2

def _cost(p, n, pol):
    if pol > 0:
        return p
    if pol < 0:
        return n
    return p + n


class _Namer:
    """Definitional CNF.  ``visit(node, pol)`` returns the node with some
    subformulas replaced by definition literals, and the estimated clause
    counts ``(p, n)`` of the result and of its negation."""

    def __init__(self, fresh_def, limit=NAMING_LIMIT):
        self.fresh_def = fresh_def       # () -> a new definition name
        self.limit = limit
        self.defs = []                   # (name, vars, child node, polarity)

    def name(self, child, pol):
        name = self.fresh_def()
        vs = tuple(sorted(child[1]))
        atom = (name, *vs) if vs else name
        self.defs.append((name, vs, child, pol))
        return ('L', child[1], True, atom)

    def visit(self, node, pol):
        tag = node[0]
        if tag == 'L':
            return node, 1, 1
        if tag in ('F', 'X'):
            body, p, n = self.visit(node[3], pol)
            return (tag, node[1], node[2], body), p, n
        if tag == 'E':
            return self._visit_iff(node, pol)
        kids = [self.visit(k, pol) for k in node[2]]
        return self._visit_junction(node, kids, pol)

    def _visit_junction(self, node, kids, pol):
        tag = node[0]
        # For 'O' the positive count multiplies and the negative one adds;
        # for 'A' the other way round.
        mult, add = 1, 0
        for _, p, n in kids:
            a, b = (p, n) if tag == 'O' else (n, p)
            mult *= a
            add += b
        pm, pa = (mult, add)

        def counts():
            return (pm, pa) if tag == 'O' else (pa, pm)

        cost = _cost(*counts(), pol)
        if cost > self.limit:
            order = sorted(range(len(kids)),
                           key=lambda i: -_cost(kids[i][1], kids[i][2], pol))
            for i in order:
                k, p, n = kids[i]
                if k[0] == 'L':
                    continue
                a, b = (p, n) if tag == 'O' else (n, p)
                npm, npa = pm // a, pa - b + 1
                new = _cost(*((npm, npa) if tag == 'O' else (npa, npm)), pol)
                if new + _cost(p, n, pol) >= cost:
                    continue
                kids[i] = (self.name(k, pol), 1, 1)
                pm, pa, cost = npm, npa, new
                if cost <= self.limit:
                    break
        p, n = counts()
        return (tag, node[1], tuple(k for k, _, _ in kids)), p, n

    def _visit_iff(self, node, pol):
        sides = [list(self.visit(node[2], 0)), list(self.visit(node[3], 0))]

        def cost():
            (_, pa, na), (_, pb, nb) = sides
            return _cost(pa * nb + na * pb, pa * pb + na * nb, pol)

        now = cost()
        if now > self.limit:
            # the larger side first (the right one on a tie)
            for i in sorted((0, 1), key=lambda i: (-sum(sides[i][1:]), -i)):
                child, p, n = sides[i]
                if child[0] == 'L':
                    continue
                sides[i] = [child, 1, 1]
                new = cost()
                if new + p + n >= now:           # not worth it
                    sides[i] = [child, p, n]
                    continue
                sides[i][0] = self.name(child, 0)
                now = new
                if now <= self.limit:
                    break
        (a, pa, na), (b, pb, nb) = sides
        return ('E', node[1], a, b), pa * nb + na * pb, pa * pb + na * nb


# ------------------------------------------------------------------ step 3

def _expand(node):
    """Pure NNF: equivalences expanded by polarity, quantifiers miniscoped."""
    tag = node[0]
    if tag == 'L':
        return node
    if tag == 'A':
        return _and([_expand(k) for k in node[2]])
    if tag == 'O':
        return _or([_expand(k) for k in node[2]])
    if tag == 'E':
        a, b = node[2], node[3]
        # a <-> b  ==  (not a or b) and (a or not b)
        return _and([_or([_expand(_neg(a)), _expand(b)]),
                     _or([_expand(a), _expand(_neg(b))])])
    return _quant(tag, node[2], _expand(node[3]))


# ------------------------------------------------------------------ step 4

def _subst(t, env):
    tt = type(t)
    if tt is int:
        return env.get(t, t)
    if tt is str:
        return t
    return (t[0], *[_subst(a, env) for a in t[1:]])


class _Skolemizer:
    """Replaces quantifiers: universals by fresh variables, existentials by
    Skolem terms over the universals free in their scope."""

    def __init__(self, fresh_skolem, varnames, reuse):
        self.fresh_skolem = fresh_skolem  # (arity, user var name) -> name
        self.varnames = varnames
        self.env = {}                     # bound variable -> term
        self.origin = {}                  # fresh variable -> the bound variable it stands for
        self.next_var = 0
        # Copies of one existential subformula (made by expanding an
        # equivalence, or by a definition used both ways) over the same
        # arguments share one Skolem symbol.
        self.reuse = reuse

    def run(self, node):
        # Free variables of the whole formula (e.g. of a TPTP cnf clause)
        # are read as universally quantified.
        for v in sorted(node[1]):
            self.env[v] = self._fresh_var()
            self.origin[self.env[v]] = v
        return self.walk(node)

    def _fresh_var(self):
        self.next_var += 1
        # fresh variables are negative until renamed, so they never meet a
        # bound variable's number
        return -self.next_var

    def walk(self, node):
        tag = node[0]
        env = self.env
        if tag == 'L':
            return (node[2], _subst(node[3], env))
        if tag == 'A' or tag == 'O':
            return (tag, [self.walk(k) for k in node[2]])
        v, body = node[2], node[3]
        if tag == 'F':
            env[v] = self._fresh_var()
            self.origin[env[v]] = v
        else:
            # The Skolem arguments: the universal variables that occur in the
            # terms standing for the scope's free variables (inner
            # Skolemization), in order of first occurrence.
            scope = [env[w] for w in sorted(node[1])]
            shape, mapping = normalize_vars(scope)
            args = list(mapping)
            key = (node, tuple(shape))
            name = self.reuse.get(key)
            if name is None:
                name = self.fresh_skolem(len(args),
                                         self.varnames.get(v, f"X{v}"))
                self.reuse[key] = name
            env[v] = (name, *args) if args else name
        out = self.walk(body)
        del env[v]
        return out


# ------------------------------------------------------------------ step 5

class _Budget:
    def __init__(self):
        self.clauses = 0
        self.literals = 0

    def check(self, clauses, literals, statement):
        if clauses > MAX_CLAUSES or literals > MAX_LITERALS:
            raise LimitError(
                f"clausifying statement '{statement.name}' would give more "
                f"than {MAX_CLAUSES} clauses or {MAX_LITERALS} literals, "
                f"the limit of one problem", statement.span)


def _count(node):
    """The number of clauses distribution will give (before clean-up)."""
    if type(node[0]) is bool:
        return 1
    tag, kids = node
    if tag == 'A':
        return sum(_count(k) for k in kids)
    n = 1
    for k in kids:
        n *= _count(k)
        if n > MAX_CLAUSES:
            return n
    return n


def _cnf(node, budget, statement):
    """Distribute or over and: a list of clauses (tuples of literals)."""
    if type(node[0]) is bool:           # a literal (sign, atom)
        return [(node,)]
    tag, kids = node
    if tag == 'A':
        out = []
        for k in kids:
            out.extend(_cnf(k, budget, statement))
        return out
    # Each partial clause is a chain (earlier chain, segment), flattened at
    # the end, so a wide disjunction costs linear, not quadratic, time.
    acc = [None]
    for k in kids:
        part = _cnf(k, budget, statement)
        if len(part) == 1:
            seg = part[0]
            acc = [(a, seg) for a in acc]
            continue
        budget.check(budget.clauses + len(acc) * len(part), 0, statement)
        acc = [(a, b) for a in acc for b in part]
    out = []
    for chain in acc:
        segs = []
        while chain is not None:
            chain, seg = chain
            segs.append(seg)
        segs.reverse()
        out.append(tuple(lit for seg in segs for lit in seg))
    return out


def _clean(lits, names=None):
    """Drop repeated literals; None for a tautology; variables renumbered.
    With ``names`` (fresh variable -> the user's name) returns also the
    names of the renumbered variables (a tuple, "" where none is known)."""
    seen = set()
    out = []
    for lit in lits:
        if lit in seen:
            continue
        sign, atom = lit
        if (not sign, atom) in seen:
            return None
        if sign and type(atom) is tuple and atom[0] == EQ and atom[1] == atom[2]:
            return None
        seen.add(lit)
        out.append(lit)
    atoms, mapping = normalize_vars([a for _, a in out])
    clean = tuple((s, a) for (s, _), a in zip(out, atoms))
    if names is None:
        return clean
    return clean, _unique_names([names.get(f, "") for f in mapping])


def _unique_names(names: list) -> tuple:
    """The user's names of one clause's variables, each used once: a second
    variable of the same name (copies made by expanding an equivalence, or
    the same name bound twice) gets ``_2``, ``_3``, ..."""
    out = []
    taken = set(n for n in names if n)
    seen: dict = {}
    for n in names:
        if not n:
            out.append("")
            continue
        k = seen.get(n, 0) + 1
        seen[n] = k
        if k == 1:
            out.append(n)
            continue
        m = k
        while f"{n}_{m}" in taken:
            m += 1
        out.append(f"{n}_{m}")
        taken.add(f"{n}_{m}")
    return tuple(out)


# ------------------------------------------------------------------ distinct objects

def _distinct_clauses(objects: dict) -> list:
    """For every pair of different distinct objects (``objects``: name ->
    occurs outside the conjecture, in order of first occurrence) the input
    clause ``a != b``, the earlier object on the left.  It is
    conjecture-derived unless both objects occur in statements that are not,
    so that axioms are called contradictory only on their own objects."""
    names = list(objects)
    out = []
    for i, a in enumerate(names):
        for b in names[i + 1:]:
            out.append(InputClause(lits=((False, (EQ, a, b)),), source=DISTINCT_SOURCE,
                                   role=DISTINCT_ROLE,
                                   conj=not (objects[a] and objects[b])))
    return out


def _occurrences(st, mine: list):
    """``(name, span, line text)`` of each distinct object of ``mine`` (the
    objects of statement ``st``'s formula) where the statement's text has it,
    in the order written (the text read again with the TPTP tokenizer, so
    an annotation's strings do not count); without a text, at the statement."""
    wanted = set(mine)
    if st.span is None or not st.text:
        return [(n, st.span, None) for n in mine]
    try:
        kinds, texts, offs = tokenize_tptp(Source(st.span.file, st.text))
    except InputError:
        return [(n, st.span, None) for n in mine]
    text = st.text
    out = []
    for k, t, o in zip(kinds, texts, offs):
        if k != "distinct" or t not in wanted:
            continue
        before = text.rfind("\n", 0, o)
        end = text.find("\n", o)
        rest = text[before + 1:] if end < 0 else text[before + 1:end]
        if before < 0:               # the statement's first line
            span = Span(st.span.file, st.span.line, st.span.col + o)
            line_text = " " * (st.span.col - 1) + rest
        else:
            span = Span(st.span.file, st.span.line + text.count("\n", 0, o), o - before)
            line_text = rest
        out.append((t, span, line_text))
    return out


def _too_many_objects(problem, conjecture, objects: dict) -> LimitError:
    """The refusal of an obligation with more than MAX_DISTINCT_OBJECTS
    distinct objects, at the first occurrence of the first one past the
    limit, in the order the statements are written."""
    limit = MAX_DISTINCT_OBJECTS
    seen: set = set()
    name, where, line_text = list(objects)[limit], None, None
    for st in problem.statements:
        if st.language != "tptp" or (st.role == CONJECTURE and st.name != conjecture):
            continue
        mine: list = []
        formula_objects(st.formula, mine)
        for t, span, text in _occurrences(st, mine):
            if t in seen:
                continue
            seen.add(t)
            if len(seen) > limit:
                name, where, line_text = t, span, text
                break
        if where is not None:
            break
    return LimitError(
        f"the obligation has more than {limit} different distinct objects "
        f"({len(objects)} in all); {name} here is number {limit + 1}. Each "
        f"pair of distinct objects is unequal and becomes an input clause, and "
        f"{limit} of them already give {limit * (limit - 1) // 2:,} clauses",
        where, line_text,
        f"the limit is {limit} distinct objects per obligation; use ordinary "
        f"constants with explicit disequality axioms where only some pairs matter")


# ------------------------------------------------------------------ driver

def _to_formula(node):
    """A node back as a Formula (for printing a definition)."""
    tag = node[0]
    if tag == 'L':
        a = Atom(node[3])
        return a if node[2] else Not(a)
    if tag == 'A':
        return And(tuple(_to_formula(k) for k in node[2]))
    if tag == 'O':
        return Or(tuple(_to_formula(k) for k in node[2]))
    if tag == 'E':
        return Iff(_to_formula(node[2]), _to_formula(node[3]))
    vs = [node[2]]
    body = node[3]
    while body[0] == tag:
        vs.append(body[2])
        body = body[3]
    return Quant("forall" if tag == 'F' else "exists", tuple(vs),
                 _to_formula(body))


def _statement_symbols(st, acc):
    stack = [st.formula]
    while stack:
        f = stack.pop()
        if isinstance(f, Atom):
            t = f.term
            if type(t) is tuple:
                if t[0] != EQ:
                    acc.setdefault(t[0], ("predicate", len(t) - 1))
                for a in t[1:]:
                    for name, ar in term_symbols(a).items():
                        acc.setdefault(name, ("function", ar))
            elif type(t) is str:
                acc.setdefault(t, ("predicate", 0))
        elif isinstance(f, Not):
            stack.append(f.arg)
        elif isinstance(f, (And, Or)):
            stack.extend(f.args)
        elif isinstance(f, (Implies, Iff)):
            stack.append(f.left)
            stack.append(f.right)
        elif isinstance(f, Quant):
            stack.append(f.body)


class _Names:
    """Fresh names ``stem1, stem2, ...``; a name already used gets a suffix."""

    def __init__(self, used):
        self.used = used
        self.count = {}

    def fresh(self, stem):
        n = self.count.get(stem, 0) + 1
        self.count[stem] = n
        name = f"{stem}{n}"
        k = 0
        while name in self.used:
            k += 1
            name = f"{stem}{n}_{k}"
        self.used.add(name)
        return sys.intern(name)


def clausify(problem, conjecture: str | None, *,
             naming_limit: int = NAMING_LIMIT) -> ClausifiedProblem:
    """The input clauses of one proof obligation: every non-conjecture
    statement of ``problem``, plus the conjecture named ``conjecture``
    negated (none when ``conjecture`` is None).

    ``naming_limit`` is the estimated clause count of a subformula above
    which its parts are named (definitional CNF); a very large value turns
    naming off (benchmarks compare the two)."""
    old = sys.getrecursionlimit()
    if old < RECURSION_LIMIT:
        sys.setrecursionlimit(RECURSION_LIMIT)
    try:
        return _clausify(problem, conjecture, naming_limit)
    finally:
        if old < RECURSION_LIMIT:
            sys.setrecursionlimit(old)


def _clausify(problem, conjecture, naming_limit):
    if conjecture is not None:
        goals = [s for s in problem.statements
                 if s.role == CONJECTURE and s.name == conjecture]
        if not goals:
            raise InputError(f"the problem has no conjecture named "
                             f"'{conjecture}'")
    chosen = [s for s in problem.statements
              if s.role != CONJECTURE or s.name == conjecture]
    objects = distinct_objects(problem, conjecture)
    if len(objects) > MAX_DISTINCT_OBJECTS:
        raise _too_many_objects(problem, conjecture, objects)

    found = {}
    for st in problem.statements:
        _statement_symbols(st, found)
    signature = dict(problem.signature)
    for name, (kind, ar) in found.items():
        if name not in signature:
            signature[name] = Symbol(name, kind, ar)
    names = _Names(set(signature) | set(found))

    clauses = []
    skolems = {}
    definitions = {}
    budget = _Budget()
    trivial = None
    for st in chosen:
        negate = st.role == CONJECTURE
        conj = negate or st.role == NEGATED_CONJECTURE
        node = _nnf(st.formula, not negate)
        if node is True:
            continue
        mine = []             # Skolem symbols of this statement, in order
        defs_here = []        # definition symbols of this statement

        def fresh_skolem(arity, varname, st=st, mine=mine):
            name = names.fresh("sk")
            skolems[name] = SkolemSymbol(name, arity, st.name, varname)
            signature[name] = Symbol(name, "function", arity)
            mine.append(name)
            return name

        if node is False:
            formulas = []
            found_clauses = [((), {})]
            if trivial is None:
                trivial = (f"the conjecture '{st.name}' simplifies to true"
                           if negate else
                           f"statement '{st.name}' simplifies to false")
        else:
            namer = _Namer(lambda: names.fresh("def"), naming_limit)
            node, _, _ = namer.visit(node, 1)
            formulas = [node]
            for name, vs, child, pol in namer.defs:
                lit = ('L', child[1], True, (name, *vs) if vs else name)
                if pol >= 0:
                    formulas.append(_or([_neg(lit), child]))
                if pol <= 0:
                    formulas.append(_or([lit, _neg(child)]))
                text = format_formula(_to_formula(child), st.varnames)
                definitions[name] = Definition(name, len(vs), st.name, text,
                                               pol)
                signature[name] = Symbol(name, "predicate", len(vs))
                defs_here.append(name)
            found_clauses = []
            reuse = {}
            vn = st.varnames or {}
            for f in formulas:
                flat = _expand(f)
                if type(flat) is bool:      # cannot happen for named nodes
                    if flat is False:
                        found_clauses.append(((), {}))
                    continue
                sk = _Skolemizer(fresh_skolem, st.varnames, reuse)
                body = sk.run(flat)
                user_names = {f: vn.get(v, "") for f, v in sk.origin.items()}
                budget.check(budget.clauses + len(found_clauses)
                             + _count(body), 0, st)
                found_clauses.extend((c, user_names) for c in _cnf(body, budget, st))
        seen = set()
        for lits, user_names in found_clauses:
            cleaned = _clean(lits, user_names)
            if cleaned is None:
                continue
            lits, varnames = cleaned
            if lits in seen:
                continue
            seen.add(lits)
            budget.clauses += 1
            budget.literals += len(lits)
            budget.check(budget.clauses, budget.literals, st)
            used = {}
            if mine or defs_here:
                for _, atom in lits:
                    term_symbols(atom, used)
            clauses.append(InputClause(
                lits=lits, source=st.name, role=st.role, conj=conj,
                skolems=tuple(n for n in mine if n in used),
                definitions=tuple(n for n in defs_here if n in used),
                varnames=varnames))

    # What the input language implies: distinct objects are pairwise unequal
    # (DEVELOPERS.md, "TPTP import").
    clauses.extend(_distinct_clauses(objects))

    figures = {
        "formulas": len(chosen),
        "clauses": len(clauses),
        "skolems": len(skolems),
        "definitions": len(definitions),
        "literals": sum(len(c.lits) for c in clauses),
    }
    return ClausifiedProblem(clauses=clauses, conjecture=conjecture,
                             skolems=skolems, definitions=definitions,
                             signature=signature, trivial=trivial,
                             figures=figures)

