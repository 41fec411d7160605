"""Replay a recorded proof, step by step, independently of the engine.

``check_proof(proof, problem, cp) -> CheckReport``.

The engine (worker/saturation, worker/portfolio, worker/models) records for
every step the rule, the parents, the literals involved, the renaming offsets,
the substitution and (for equational rules) the position and side.  This
module recomputes each conclusion from those data alone and compares it with
the recorded clause.  It needs no unification and no matching against the
engine's indexes: the substitution is given, so it is enough to apply it and
compare terms for identity.  Nothing here imports engine code; only the plain
term helpers of :mod:`worker.syntax.terms` and the printer are shared.

What is checked (DEVELOPERS.md, "Proofs" and "Proof checking"):

* the proof's shape: steps in order, ids unique, parents earlier steps, the
  last step the empty clause, ``conjecture`` the obligation's, ``axioms_used``
  the statements the input steps name;
* every inference step: the rule's conclusion under the recorded data is the
  recorded clause, as a set of literals, up to a renaming of variables and
  the orientation of equations;
* every input step: the statement exists and may be used in this obligation,
  the role and conjecture flag are right, the clause is one the
  clausification produced for that statement, and, on its own account, every
  symbol of the clause is the statement's or a fresh Skolem / definition
  symbol declared for that statement;
* every input step of the input language (role ``distinct_objects``): the
  clause is ``a != b`` for two different distinct objects of the
  obligation's TPTP statements, which the language makes unequal; nothing
  else is accepted on the language's account (see :meth:`_Checker._distinct`);
* every equality axiom step: the clause is reflexivity, symmetry,
  transitivity or a congruence axiom of a known symbol with its arity;
* a ``finite_domain`` step (the empty clause from input steps only): see
  :meth:`_Checker._finite_domain`.

Ordering side conditions are not checked: they matter for completeness, not
for soundness.
"""

from __future__ import annotations

import time

from ..clauses import DISTINCT_ROLE, DISTINCT_SOURCE
from ..syntax import terms as T
from ..syntax.formulas import (And, Atom, Const, Iff, Implies, Not, Or, Quant,
                               CONJECTURE, NEGATED_CONJECTURE)
from ..syntax.printer import format_clause, format_term
from ..syntax.tptp import distinct_objects, is_distinct_object
from . import exhaust, spotcheck
from .report import CheckReport

EQ = T.EQ

# How much work the variant test may spend on one pair of clauses before it
# gives up (and refuses: a refusal is never unsound, only unhelpful).
VARIANT_BUDGET = 200_000

# A finite_domain step is refused when the exhaustive evaluation would have
# to look at more interpretations than this (over all sizes 1..bound).  The
# portfolio (worker/portfolio.py) uses the same figure before it claims one.
FINITE_DOMAIN_CAP = 300_000

# Input clauses are also evaluated in the small models of their statement
# (worker/certify/spotcheck.py); the benchmark switches this off to measure
# the replay alone.
SPOT_CHECK = True


class _OutOfTime(Exception):
    """The replay ran past its deadline (not a refusal)."""


class Refused(Exception):
    """A step (or the proof as a whole, step None) does not check."""

    def __init__(self, detail: str, step=None):
        super().__init__(detail)
        self.detail = detail
        self.step = step


# ------------------------------------------------------------- literals

def _is_eq(atom) -> bool:
    return type(atom) is tuple and atom[0] == EQ and len(atom) == 3


def _same_atom(a, b) -> bool:
    """Identical atoms; an equation is the same as its mirror."""
    if a == b:
        return True
    return _is_eq(a) and _is_eq(b) and a[1] == b[2] and a[2] == b[1]


def _same_lit(k, m) -> bool:
    return k[0] == m[0] and _same_atom(k[1], m[1])


def _complementary(k, m) -> bool:
    return k[0] != m[0] and _same_atom(k[1], m[1])


def _oriented(lit):
    """A fixed orientation of an equation, so that a literal and its mirror
    get the same key (used to merge duplicates within one clause)."""
    sign, atom = lit
    if _is_eq(atom):
        l, r = atom[1], atom[2]
        if repr(r) < repr(l):
            return (sign, (EQ, r, l))
    return lit


def _merge(lits) -> list:
    """The literals with duplicates (up to mirroring equations) merged."""
    seen = set()
    out = []
    for lit in lits:
        key = _oriented(lit)
        if key not in seen:
            seen.add(key)
            out.append(key)
    return out


def _apply_lit(lit, s):
    return (lit[0], T.apply(lit[1], s)) if s else lit


def _rename_lit(lit, off):
    return (lit[0], T.rename(lit[1], off)) if off else lit


def _lit_vars(lits) -> set:
    acc: set = set()
    for _, atom in lits:
        T.variables(atom, acc)
    return acc


def _show(lits) -> str:
    return format_clause(tuple(lits))


def _normalized(lits) -> list:
    """Duplicates merged, variables renamed 0..n-1 in order of occurrence."""
    lits = _merge(lits)
    atoms, _ = T.normalize_vars([a for _, a in lits])
    return [(sg, a) for (sg, _), a in zip(lits, atoms)]


# ------------------------------------------------------------- variants

def _shape(t):
    """``t`` with every variable replaced by the same placeholder."""
    tt = type(t)
    if tt is int:
        return None
    if tt is str:
        return t
    return (t[0], *[_shape(a) for a in t[1:]])


def _lit_shape(lit):
    sign, atom = lit
    if _is_eq(atom):
        a, b = _shape(atom[1]), _shape(atom[2])
        if repr(b) < repr(a):
            a, b = b, a
        return (sign, EQ, a, b)
    return (sign, _shape(atom))


def _match_term(s, t, fwd: dict, bwd: dict, trail: list) -> bool:
    """Extend the bijective variable map so that ``s`` renames to ``t``."""
    ts = type(s)
    if ts is int:
        if type(t) is not int:
            return False
        a = fwd.get(s)
        if a is None:
            if t in bwd:
                return False
            fwd[s] = t
            bwd[t] = s
            trail.append(s)
            return True
        return a == t
    if ts is str:
        return s == t
    if type(t) is not tuple or len(s) != len(t) or s[0] != t[0]:
        return False
    for x, y in zip(s[1:], t[1:]):
        if not _match_term(x, y, fwd, bwd, trail):
            return False
    return True


def _undo(trail: list, mark: int, fwd: dict, bwd: dict) -> None:
    while len(trail) > mark:
        v = trail.pop()
        del bwd[fwd.pop(v)]


def is_variant(c, d) -> bool:
    """Whether clauses ``c`` and ``d`` (sequences of literals) are the same
    set of literals up to a bijective renaming of variables, an equation
    being the same as its mirror.  Duplicates are merged first."""
    c, d = _merge(c), _merge(d)
    if len(c) != len(d):
        return False
    if c == d and not _lit_vars(c):
        return True
    shapes_c = [_lit_shape(l) for l in c]
    shapes_d = [_lit_shape(l) for l in d]
    if sorted(map(repr, shapes_c)) != sorted(map(repr, shapes_d)):
        return False
    # Candidates for each literal of c: the literals of d with its shape.
    cand = []
    for i, sc in enumerate(shapes_c):
        cand.append([j for j, sd in enumerate(shapes_d) if sd == sc])
    order = sorted(range(len(c)), key=lambda i: len(cand[i]))
    fwd: dict = {}
    bwd: dict = {}
    trail: list = []
    used = [False] * len(d)
    budget = [VARIANT_BUDGET]

    def search(k: int) -> bool:
        if k == len(order):
            return True
        budget[0] -= 1
        if budget[0] < 0:
            return False
        i = order[k]
        sign, atom = c[i]
        for j in cand[i]:
            if used[j]:
                continue
            other = d[j][1]
            tries = [other]
            if _is_eq(atom):
                tries.append((EQ, other[2], other[1]))
            for target in tries:
                mark = len(trail)
                if _match_term(atom, target, fwd, bwd, trail):
                    used[j] = True
                    if search(k + 1):
                        return True
                    used[j] = False
                _undo(trail, mark, fwd, bwd)
        return False

    return search(0)


def _subset_lits(sub, sup) -> bool:
    """Every literal of ``sub`` occurs in ``sup`` (identically, up to
    mirroring equations)."""
    keys = {_oriented(l) for l in sup}
    return all(_oriented(l) in keys for l in sub)


# ------------------------------------------------------------- symbols

def _term_syms(t, acc: set) -> set:
    """Add ``(name, arity)`` for every symbol in ``t``."""
    stack = [t]
    while stack:
        x = stack.pop()
        tx = type(x)
        if tx is str:
            acc.add((x, 0))
        elif tx is tuple:
            acc.add((x[0], len(x) - 1))
            stack.extend(x[1:])
    return acc


def formula_symbols(f) -> set:
    """``(name, arity)`` of every function and predicate symbol of a
    formula (the equality sign included, as ``("=", 2)``)."""
    acc: set = set()
    stack = [f]
    while stack:
        x = stack.pop()
        if isinstance(x, Atom):
            _term_syms(x.term, acc)
        elif isinstance(x, Not):
            stack.append(x.arg)
        elif isinstance(x, (And, Or)):
            stack.extend(x.args)
        elif isinstance(x, (Implies, Iff)):
            stack.append(x.left)
            stack.append(x.right)
        elif isinstance(x, Quant):
            stack.append(x.body)
        elif isinstance(x, Const):
            pass
        else:
            raise TypeError(f"not a formula: {x!r}")
    return acc


def _clause_syms(lits) -> set:
    acc: set = set()
    for _, atom in lits:
        _term_syms(atom, acc)
    return acc


# ------------------------------------------------------------- substitutions

def _parse_subst(j, sid) -> dict:
    """The recorded substitution as an idempotent dict (bindings chased
    through, as ``terms.apply`` would); a cyclic one is refused."""
    if j is None:
        return {}
    if type(j) is not dict:
        raise Refused("the substitution is not a JSON object", sid)
    raw = {}
    for k, v in j.items():
        try:
            var = int(k)
        except (TypeError, ValueError):
            raise Refused(f"the substitution binds {k!r}, which is not a variable", sid)
        if var < 0:
            raise Refused(f"the substitution binds {k!r}, which is not a variable", sid)
        try:
            t = T.from_json(v)
        except ValueError as e:
            raise Refused(f"the substitution's binding of {k} is not a term ({e})", sid)
        if t != var:              # x -> x binds nothing
            raw[var] = t
    done: dict = {}
    active: set = set()

    def walk(t):
        tt = type(t)
        if tt is int:
            return resolve(t) if t in raw else t
        if tt is str:
            return t
        return (t[0], *[walk(a) for a in t[1:]])

    def resolve(v):
        r = done.get(v)
        if r is not None:
            return r
        if v in active:
            raise Refused(f"the substitution is cyclic (variable {v} "
                          f"occurs in its own binding)", sid)
        active.add(v)
        r = done[v] = walk(raw[v])
        active.discard(v)
        return r

    for v in raw:
        resolve(v)
    return done


# ------------------------------------------------------------- the rules
#
# Each rule function takes the step (the JSON dict), the parents' clauses
# already renamed by their offsets, and the substitution; it returns the
# conclusion as a list of literals (substitution applied) or raises Refused.


def _lit_index(step, k: int, clause, which: str) -> int:
    lits = step.get("lits")
    if type(lits) is not list or len(lits) <= k or type(lits[k]) is not int:
        raise Refused(f"the step does not say which literal of the {which} "
                      f"parent it uses (field \"lits\")", step["id"])
    i = lits[k]
    if not 0 <= i < len(clause):
        raise Refused(f"literal {i} of the {which} parent does not exist "
                      f"(it has {len(clause)} literals)", step["id"])
    return i


def _side(step, value, what: str) -> int:
    if value not in (0, 1) or type(value) is not int:
        raise Refused(f"{what} must be 0 (left side) or 1 (right side), "
                      f"not {value!r}", step["id"])
    return value


def _eq_sides(step, lit, side: int, what: str):
    """``(l, r)`` of a positive equation, ``l`` the named side."""
    sign, atom = lit
    if not (sign and _is_eq(atom)):
        raise Refused(f"the {what} is not a positive equation", step["id"])
    return (atom[1], atom[2]) if side == 0 else (atom[2], atom[1])


def rule_resolution(step, parents, s):
    """Binary resolution: from ``a`` and ``b`` with σ(a_i), σ(b_j)
    complementary, conclude σ(a − a_i ∨ b − b_j)."""
    a, b = parents
    i = _lit_index(step, 0, a, "first")
    j = _lit_index(step, 1, b, "second")
    ai, bj = _apply_lit(a[i], s), _apply_lit(b[j], s)
    if not _complementary(ai, bj):
        raise Refused(f"the resolved literals are not complementary under the "
                      f"substitution: {_show([ai])} and {_show([bj])}", step["id"])
    return [_apply_lit(x, s) for k, x in enumerate(a) if k != i] + \
           [_apply_lit(x, s) for k, x in enumerate(b) if k != j]


def rule_factoring(step, parents, s):
    """Factoring: from ``a`` with σ(a_i) = σ(a_j), i ≠ j, conclude
    σ(a − a_j)."""
    (a,) = parents
    i = _lit_index(step, 0, a, "")
    j = _lit_index(step, 1, a, "")
    if i == j:
        raise Refused("factoring needs two different literals", step["id"])
    ai, aj = _apply_lit(a[i], s), _apply_lit(a[j], s)
    if not _same_lit(ai, aj):
        raise Refused(f"the factored literals are not identical under the "
                      f"substitution: {_show([ai])} and {_show([aj])}", step["id"])
    return [_apply_lit(x, s) for k, x in enumerate(a) if k != j]


def rule_equality_resolution(step, parents, s):
    """Equality resolution: from ``a`` whose literal a_i is s ≠ t with
    σ(s) = σ(t), conclude σ(a − a_i)."""
    (a,) = parents
    i = _lit_index(step, 0, a, "")
    sign, atom = a[i]
    if sign or not _is_eq(atom):
        raise Refused("the resolved literal is not a negative equation", step["id"])
    l, r = T.apply(atom[1], s), T.apply(atom[2], s)
    if l != r:
        raise Refused(f"the two sides of the negative equation differ under "
                      f"the substitution: {_show([(False, (EQ, l, r))])}", step["id"])
    return [_apply_lit(x, s) for k, x in enumerate(a) if k != i]


def rule_equality_factoring(step, parents, s):
    """Equality factoring: from ``a`` with a_i = (s = t), a_j = (s' = t'),
    σ(s) = σ(s'), conclude σ(a − a_i ∨ t ≠ t')."""
    (a,) = parents
    i = _lit_index(step, 0, a, "")
    j = _lit_index(step, 1, a, "")
    if i == j:
        raise Refused("equality factoring needs two different literals", step["id"])
    sides = step.get("sides")
    if type(sides) is not list or len(sides) != 2:
        raise Refused("the step does not name the two sides (field \"sides\")", step["id"])
    si = _side(step, sides[0], "the first side")
    sj = _side(step, sides[1], "the second side")
    l1, r1 = _eq_sides(step, a[i], si, "first literal")
    l2, r2 = _eq_sides(step, a[j], sj, "second literal")
    if T.apply(l1, s) != T.apply(l2, s):
        raise Refused(f"the named sides differ under the substitution: "
                      f"{_show([(True, (EQ, T.apply(l1, s), T.apply(l2, s)))])}",
                      step["id"])
    out = [_apply_lit(x, s) for k, x in enumerate(a) if k != i]
    out.append((False, (EQ, T.apply(r1, s), T.apply(r2, s))))
    return out


def _position(step, atom):
    pos = step.get("position")
    if type(pos) is not list or not pos:
        raise Refused("the step does not give a position inside the atom "
                      "(field \"position\")", step["id"])
    node = atom
    for k in pos:
        if type(node) is not tuple or type(k) is not int or not 1 <= k < len(node):
            raise Refused(f"position {pos} does not exist in the atom", step["id"])
        node = node[k]
    return tuple(pos)


def _rewrite(step, parents, s, rule: str):
    a, b = parents
    i = _lit_index(step, 0, a, "first")
    j = _lit_index(step, 1, b, "second")
    side = _side(step, step.get("side"), "\"side\"")
    l, r = _eq_sides(step, a[i], side, "literal of the first parent")
    sign, atom = b[j]
    pos = _position(step, atom)
    u = T.at(atom, pos)
    sl, su = T.apply(l, s), T.apply(u, s)
    if sl != su:
        raise Refused(f"{rule}: under the substitution the term at position "
                      f"{list(pos)} is {format_term(su)}, the rewritten side "
                      f"is {format_term(sl)}", step["id"])
    new = (sign, T.replace_at(atom, pos, r))
    return ([_apply_lit(x, s) for k, x in enumerate(a) if k != i] +
            [_apply_lit(new if k == j else x, s) for k, x in enumerate(b)])


def rule_superposition(step, parents, s):
    """Superposition: from ``a`` with a_i = (l = r) (l the side named by
    ``side``) and ``b`` whose literal b_j has u at ``position``, σ(u) = σ(l),
    conclude σ(a − a_i ∨ b with that u replaced by r)."""
    return _rewrite(step, parents, s, "superposition")


def rule_demodulation(step, parents, s):
    """Demodulation: superposition from a unit equation ``a`` whose
    substitution binds only a's variables."""
    a, b = parents
    if len(a) != 1:
        raise Refused("demodulation needs a unit equation as first parent", step["id"])
    own = _lit_vars(a)
    extra = sorted(v for v in s if v not in own)
    if extra:
        raise Refused(f"demodulation binds variables {extra} that are not the "
                      f"equation's", step["id"])
    return _rewrite(step, parents, s, "demodulation")


def rule_subsumption_resolution(step, parents, s):
    """Subsumption resolution: from ``a`` and ``b`` with σ(a_i) and b_j
    complementary and σ(a − a_i) ⊆ b − b_j, conclude b − b_j."""
    a, b = parents
    i = _lit_index(step, 0, a, "first")
    j = _lit_index(step, 1, b, "second")
    ai = _apply_lit(a[i], s)
    if not _complementary(ai, b[j]):
        raise Refused(f"the literals are not complementary: {_show([ai])} "
                      f"and {_show([b[j]])}", step["id"])
    rest_b = [x for k, x in enumerate(b) if k != j]
    rest_a = [_apply_lit(x, s) for k, x in enumerate(a) if k != i]
    if not _subset_lits(rest_a, rest_b):
        raise Refused(f"the rest of the first parent, {_show(rest_a)}, is not "
                      f"contained in the rest of the second, {_show(rest_b)}",
                      step["id"])
    return rest_b


def rule_duplicate_removal(step, parents, s):
    """Duplicate removal: ``a`` with repeated literals merged."""
    (a,) = parents
    return list(a)


RULES = {
    "resolution": (2, rule_resolution),
    "factoring": (1, rule_factoring),
    "equality_resolution": (1, rule_equality_resolution),
    "equality_factoring": (1, rule_equality_factoring),
    "superposition": (2, rule_superposition),
    "demodulation": (2, rule_demodulation),
    "subsumption_resolution": (2, rule_subsumption_resolution),
    "duplicate_removal": (1, rule_duplicate_removal),
}


# ------------------------------------------------------------- equality axioms

def _var_eq(lit):
    """``(sign, x, y)`` for an equation between two variables, else None."""
    sign, atom = lit
    if _is_eq(atom) and type(atom[1]) is int and type(atom[2]) is int:
        return sign, atom[1], atom[2]
    return None


def _congruence_pairs(xs, ys):
    """The unordered pairs of differing argument variables, or None when an
    argument is not a variable."""
    pairs = set()
    for x, y in zip(xs, ys):
        if type(x) is not int or type(y) is not int:
            return None
        if x != y:
            pairs.add(frozenset((x, y)))
    return pairs


def equality_axiom_kind(lits, arities: dict) -> str | None:
    """Which equality axiom the clause is (``"reflexivity"``, ...), or None.
    ``arities`` maps known symbols to ``(kind, arity)``; kind is
    ``"function"`` or ``"predicate"``."""
    lits = _merge(lits)
    ve = [_var_eq(l) for l in lits]
    # reflexivity: x = x
    if len(lits) == 1 and ve[0] and ve[0][0] and ve[0][1] == ve[0][2]:
        return "reflexivity"
    if all(ve):
        pos = [e for e in ve if e[0]]
        neg = [e for e in ve if not e[0]]
        # symmetry: x != y or y = x
        if len(lits) == 2 and len(pos) == 1 and len(neg) == 1:
            if {pos[0][1], pos[0][2]} == {neg[0][1], neg[0][2]} and pos[0][1] != pos[0][2]:
                return "symmetry"
        # transitivity: x != y or y != z or x = z
        if len(lits) == 3 and len(pos) == 1 and len(neg) == 2:
            p = {pos[0][1], pos[0][2]}
            n1, n2 = {neg[0][1], neg[0][2]}, {neg[1][1], neg[1][2]}
            shared = n1 & n2
            if (len(p) == 2 and len(n1) == 2 and len(n2) == 2 and len(shared) == 1
                    and p == (n1 | n2) - shared):
                return "transitivity"
    # congruence: f(xs) = f(ys) or p(ys) with not p(xs), plus x_k != y_k for
    # every argument where x_k and y_k differ.
    diffs = set()
    others = []
    for lit, e in zip(lits, ve):
        if e and not e[0] and e[1] != e[2]:
            diffs.add(frozenset((e[1], e[2])))
        else:
            others.append(lit)
    if len(others) == 1:
        sign, atom = others[0]
        if sign and _is_eq(atom):
            l, r = atom[1], atom[2]
            if (type(l) is tuple and type(r) is tuple and l[0] == r[0]
                    and len(l) == len(r)
                    and arities.get(l[0]) == ("function", len(l) - 1)):
                if _congruence_pairs(l[1:], r[1:]) == diffs and diffs:
                    return "function congruence"
    if len(others) == 2:
        (s1, a1), (s2, a2) = others
        if s1 != s2 and not _is_eq(a1) and not _is_eq(a2):
            if (type(a1) is tuple and type(a2) is tuple and a1[0] == a2[0]
                    and len(a1) == len(a2)
                    and arities.get(a1[0]) == ("predicate", len(a1) - 1)):
                if _congruence_pairs(a1[1:], a2[1:]) == diffs and diffs:
                    return "predicate congruence"
    return None


# ------------------------------------------------------------- the checker

def domain_closure_constants(lits):
    """The distinct constants of a domain-closure clause ``X = c_1 or ... or
    X = c_n`` (one variable X, either orientation), or None for any other
    clause."""
    var = None
    consts: set = set()
    if not lits:
        return None
    for sign, atom in lits:
        if not (sign and _is_eq(atom)):
            return None
        l, r = atom[1], atom[2]
        if type(l) is str and type(r) is int:
            l, r = r, l
        if type(l) is not int or type(r) is not str:
            return None
        if var is None:
            var = l
        elif l != var:
            return None
        consts.add(r)
    return consts


def _clause(step, sid):
    try:
        return T.clause_from_json(step.get("clause"))
    except (ValueError, TypeError) as e:
        raise Refused(f"the recorded clause is not a clause ({e})", sid)


class _Checker:
    def __init__(self, proof, problem, cp):
        self.proof = proof
        self.problem = problem
        self.cp = cp
        self.clauses: dict = {}           # step id -> clause (tuple of literals)
        self.rule_counts: dict = {}
        self.inputs_used: set = set()     # non-conjecture statements of input steps
        self._stmts = {st.name: st for st in problem.statements}
        self._stmt_syms: dict = {}
        self._cp_by_source: dict = {}
        self._spot = spotcheck.SpotChecker()
        self.spot_checked = 0             # input clauses evaluated in small models
        self._defs_checked: dict = {}     # statement -> "" (fine) or a countermodel
        self._input_steps: dict = {}      # step id -> the input step (dict)
        self.deadline = None              # time.monotonic() past which the replay stops
        self.finite_detail = ""
        self._objects = None              # the obligation's distinct objects, when needed
        for ic in cp.clauses:
            if ic.role != DISTINCT_ROLE:  # justified by the language, not a statement
                self._cp_by_source.setdefault(ic.source, []).append(ic)

    # -- the proof as a whole

    def run(self) -> CheckReport:
        proof = self.proof
        if type(proof) is not dict:
            raise Refused("the proof is not a JSON object")
        steps = proof.get("steps")
        if type(steps) is not list or not steps:
            raise Refused("the proof has no steps")
        if proof.get("conjecture") != self.cp.conjecture:
            raise Refused(f"the proof is for conjecture {proof.get('conjecture')!r}, "
                          f"the obligation is {self.cp.conjecture!r}")
        self._introduced()
        deadline = self.deadline
        for n, step in enumerate(steps):
            if deadline is not None and not (n & 63) and time.monotonic() > deadline:
                raise _OutOfTime()
            if type(step) is not dict:
                raise Refused(f"step number {n + 1} is not a JSON object")
            sid = step.get("id")
            if type(sid) is not int:
                raise Refused(f"step number {n + 1} has no integer id")
            if sid in self.clauses:
                raise Refused(f"step id {sid} is used twice", sid)
            try:
                self.clauses[sid] = self._step(step, sid)
            except Refused as r:
                if r.step is None:
                    r.step = sid
                raise
            except (ValueError, TypeError, IndexError, KeyError, AttributeError,
                    RecursionError) as e:
                raise Refused(f"the step is malformed ({type(e).__name__}: {e})", sid)
            self.rule_counts[step.get("rule")] = self.rule_counts.get(step.get("rule"), 0) + 1
        last = steps[-1]["id"]
        if self.clauses[last]:
            raise Refused(f"the last step does not derive the empty clause but "
                          f"{_show(self.clauses[last])}", last)
        used = proof.get("axioms_used")
        if type(used) is not list or set(used) != self.inputs_used or len(set(used)) != len(used):
            raise Refused(f"the proof lists axioms_used {used!r}, but its input "
                          f"steps use {sorted(self.inputs_used)!r}")
        rules = ", ".join(f"{k.replace('_', ' ')} {v}"
                          for k, v in sorted(self.rule_counts.items()))
        n = self.spot_checked
        spot = (f"; the clausification of {n} input clause{'s' if n != 1 else ''} "
                f"cross-checked by evaluation (each holds in the one-element "
                f"models of its statement, and in the two-element ones when it "
                f"has no Skolem symbol and they are few)" if n else "")
        return CheckReport(True, len(steps), f"{len(steps)} steps replayed ({rules}){spot}"
                                             f"{self.finite_detail}")

    def _introduced(self):
        """Read and check the declared Skolem and definition symbols."""
        user = {name for name in self.problem.signature}
        for st in self.problem.statements:
            user.update(n for n, _ in self._symbols_of(st))
        self.introduced: dict = {}        # name -> (kind, arity, statement)
        for field, kind in (("skolems", "function"), ("definitions", "predicate")):
            decl = self.proof.get(field) or {}
            if type(decl) is not dict:
                raise Refused(f"the proof's {field} is not a JSON object")
            for name, info in decl.items():
                what = "Skolem symbol" if kind == "function" else "definition symbol"
                if type(info) is not dict or type(info.get("arity")) is not int \
                        or info.get("statement") not in self._stmts:
                    raise Refused(f"the {what} {name} is declared without an "
                                  f"arity and a statement of the problem")
                if name in user or name == EQ:
                    raise Refused(f"the {what} {name} is not fresh: the problem "
                                  f"already uses that name")
                if name in self.introduced:
                    raise Refused(f"the name {name} is declared both as a Skolem "
                                  f"and as a definition symbol")
                self.introduced[name] = (kind, info["arity"], info["statement"])
        self.arities = {n: (s.kind, s.arity) for n, s in self.problem.signature.items()}
        for n, (kind, arity, _) in self.introduced.items():
            self.arities[n] = (kind, arity)

    def _symbols_of(self, st) -> set:
        syms = self._stmt_syms.get(st.name)
        if syms is None:
            syms = self._stmt_syms[st.name] = formula_symbols(st.formula)
        return syms

    # -- one step

    def _step(self, step, sid):
        rule = step.get("rule")
        clause = _clause(step, sid)
        parents = step.get("parents") or []
        if type(parents) is not list:
            raise Refused("the parents are not a list", sid)
        if rule == "input":
            if parents:
                raise Refused("an input step has no parents", sid)
            self._input(step, sid, clause)
            self._input_steps[sid] = step
            return clause
        if rule == "finite_domain":
            self._finite_domain(step, sid, clause, parents)
            return clause
        if rule == "equality_axiom":
            if parents:
                raise Refused("an equality axiom has no parents", sid)
            kind = equality_axiom_kind(clause, self.arities)
            if kind is None:
                raise Refused(f"{_show(clause)} is not an equality axiom "
                              f"(reflexivity, symmetry, transitivity or the "
                              f"congruence axiom of a symbol of the problem)", sid)
            return clause
        if rule not in RULES:
            raise Refused(f"unknown rule {rule!r}", sid)
        nparents, fn = RULES[rule]
        if len(parents) != nparents:
            raise Refused(f"{rule} takes {nparents} parent(s), the step names "
                          f"{len(parents)}", sid)
        for p in parents:
            if p not in self.clauses:
                raise Refused(f"parent {p!r} is not an earlier step of the proof", sid)
        offsets = step.get("offsets")
        if offsets is None and nparents == 1:
            offsets = [0]
        if (type(offsets) is not list or len(offsets) != nparents
                or any(type(o) is not int or o < 0 for o in offsets)):
            raise Refused(f"the offsets {offsets!r} are not one non-negative "
                          f"integer per parent", sid)
        renamed = [tuple(_rename_lit(l, o) for l in self.clauses[p])
                   for p, o in zip(parents, offsets)]
        s = _parse_subst(step.get("subst"), sid)
        concl = fn(step, renamed, s)
        if not is_variant(concl, clause):
            raise Refused(f"{rule} yields {_show(_normalized(concl))}, the step records "
                          f"{_show(clause)}", sid)
        return clause

    def _finite_domain(self, step, sid, clause, parents):
        """The empty clause from a bound on the size of every model.

        The step names input steps (``parents``), one of them the
        *domain-closure* clause ``closure``: all its literals are positive
        equations ``X = c_i`` between one variable X and constants c_i,
        ``bound`` distinct constants in all.  Checked: those shapes, and that
        an exhaustive evaluation finds no interpretation of the user's
        symbols (``problem.signature``) over a domain of size 1..bound in
        which every statement the parents come from holds, as written
        (``Statement.formula``, before clausification), a conjecture among
        them read negated.  The conjecture enters only when some parent is
        conjecture-derived, so a proof without such a parent shows the
        axioms themselves contradictory (the portfolio produces one when the
        axioms alone have no small model; the pipeline then reports
        ContradictoryAxioms, and this evaluation is what vouches for it).

        Why that is sound: let M be a model of those statements (the
        conjecture negated).  The Skolem and definition symbols of each
        statement are fresh and its own, so M extends to a model M' of all
        their input clauses (the input-step checks vouch that each parent is
        a clause of its statement's normal form, which is satisfiable over
        the same domain as the statement).  M' satisfies the closure clause,
        so every element of its domain, which is M's, equals one of the
        bound constants: M has at most ``bound`` elements.  Its reduct to
        the user's symbols is then one of the interpretations evaluated, and
        none of those satisfies the statements: no such M exists.  The
        statements (the conjecture negated) are unsatisfiable, i.e. the
        conjecture follows from the axioms used.

        Refused (never unsound, only unhelpful) when the count of
        interpretations exceeds ``FINITE_DOMAIN_CAP``."""
        if clause:
            raise Refused("a finite_domain step concludes the empty clause", sid)
        if not parents:
            raise Refused("a finite_domain step names its input steps as parents", sid)
        for p in parents:
            if p not in self._input_steps:
                raise Refused(f"parent {p!r} of a finite_domain step is not an earlier "
                              f"input step", sid)
        closure, bound = step.get("closure"), step.get("bound")
        if closure not in parents:
            raise Refused(f"the closure clause {closure!r} is not a parent of the step", sid)
        if type(bound) is not int or bound < 1:
            raise Refused(f"the bound {bound!r} is not a positive whole number", sid)
        consts = domain_closure_constants(self.clauses[closure])
        if consts is None:
            raise Refused(f"step {closure}, {_show(self.clauses[closure])}, is not a "
                          f"domain-closure clause (positive equations between one "
                          f"variable and constants)", sid)
        if len(consts) != bound:
            raise Refused(f"the closure clause of step {closure} names {len(consts)} "
                          f"constant(s), the step claims the bound {bound}", sid)
        symbols = {n: (s.kind, s.arity) for n, s in self.problem.signature.items()
                   if n != EQ}
        count = exhaust.count_up_to(symbols, bound)
        if count > FINITE_DOMAIN_CAP:
            raise Refused(f"evaluating every interpretation of size 1..{bound} would "
                          f"take {count:,} interpretations, over the cap of "
                          f"{FINITE_DOMAIN_CAP:,}", sid)
        if "interpretations" in step and step["interpretations"] != count:
            raise Refused(f"the step claims {step['interpretations']!r} interpretations, "
                          f"there are {count}", sid)
        names = []
        conj = False
        unequal = []                      # the distinct-object disequations among the parents
        for p in parents:
            ps = self._input_steps[p]
            conj = conj or bool(ps.get("conj"))
            if ps.get("role") == DISTINCT_ROLE:
                unequal.append(self.clauses[p][0][1])
            elif ps["formula"] not in names:
                names.append(ps["formula"])
        if "conj" in step and step["conj"] is not conj:
            raise Refused(f"the step says conj {step['conj']!r}, but "
                          f"{'some' if conj else 'none'} of its parents come from the "
                          f"conjecture", sid)
        formulas = []
        for name in names:
            st = self._stmts[name]
            if st.role == CONJECTURE:
                if conj:
                    formulas.append(Not(st.formula))
            else:
                formulas.append(st.formula)
        # A distinct-object parent holds in every model (the language says so),
        # so the interpretations evaluated must satisfy it too.
        formulas.extend(Not(Atom(atom)) for atom in unequal)
        try:
            size, evaluated = exhaust.find_model(formulas, symbols, bound)
        except exhaust.Unevaluable as e:
            raise Refused(f"the statements cannot be evaluated: {e}", sid)
        except RecursionError:
            raise Refused("the statements are nested too deeply to evaluate", sid)
        what = "the axioms and the negated conjecture" if conj else "the axioms"
        if size is not None:
            raise Refused(f"{what} have a model of size {size} (at most {bound} "
                          f"elements), so the bound proves nothing", sid)
        self.finite_detail = (f"; no interpretation of size 1..{bound} satisfies {what}: "
                              f"{evaluated} interpretations evaluated")

    def _distinct(self, step, sid, clause):
        """An input step the input language justifies: ``a != b`` for two
        different distinct objects ``a``, ``b`` of the obligation (written in
        double quotes in one of its TPTP statements).  The TPTP language
        interprets a distinct object as itself, so two different ones are
        unequal in every interpretation: the clause needs no statement.  The
        step is conjecture-derived exactly when one of the two objects occurs
        only in conjecture-derived statements (as clausification marks it),
        so that ContradictoryAxioms rests on the axioms' own objects."""
        if step.get("formula") != DISTINCT_SOURCE:
            raise Refused(f"a distinct-object step names {DISTINCT_SOURCE!r} as its "
                          f"formula, not {step.get('formula')!r}", sid)
        if len(clause) != 1 or clause[0][0] or not _is_eq(clause[0][1]):
            raise Refused(f"{_show(clause)} is not a disequation a != b, the only "
                          f"clause the distinct objects give", sid)
        a, b = clause[0][1][1], clause[0][1][2]
        for x in (a, b):
            if not is_distinct_object(x):
                raise Refused(f"{_show(clause)} does not follow from the input language: "
                              f"{format_term(x)} is not a distinct object (only a "
                              f"double-quoted TPTP name is)", sid)
        if a == b:
            raise Refused(f"{_show(clause)} is false: a distinct object equals itself", sid)
        if self._objects is None:
            self._objects = distinct_objects(self.problem, self.cp.conjecture)
        for x in (a, b):
            if x not in self._objects:
                raise Refused(f"{x} is not a distinct object of this obligation (none of "
                              f"its TPTP statements writes it)", sid)
        want_conj = not (self._objects[a] and self._objects[b])
        if step.get("conj") is not want_conj:
            raise Refused(f"the step marks {_show(clause)} as "
                          f"{'' if step.get('conj') else 'not '}conjecture-derived, but "
                          f"{'one of the objects occurs only in' if want_conj else 'both objects occur outside'} "
                          f"the conjecture", sid)
        if not want_conj:
            self.inputs_used.add(DISTINCT_SOURCE)

    def _input(self, step, sid, clause):
        if step.get("role") == DISTINCT_ROLE:
            self._distinct(step, sid, clause)
            return
        name = step.get("formula")
        st = self._stmts.get(name)
        if st is None:
            raise Refused(f"the input formula {name!r} is not a statement of the problem", sid)
        if st.role == CONJECTURE and name != self.cp.conjecture:
            raise Refused(f"{name} is a conjecture other than the one being proved", sid)
        want_conj = st.role in (CONJECTURE, NEGATED_CONJECTURE)
        if step.get("conj") is not want_conj:
            raise Refused(f"the step marks its clause as "
                          f"{'' if step.get('conj') else 'not '}conjecture-derived, "
                          f"but {name} has role {st.role}", sid)
        if "role" in step and step["role"] != st.role:
            raise Refused(f"the step gives role {step['role']!r}, {name} has role "
                          f"{st.role}", sid)
        # On our own account: the symbols are the statement's or fresh ones
        # declared for it.
        own = self._symbols_of(st)
        for sym, arity in sorted(_clause_syms(clause)):
            if (sym, arity) in own:
                continue
            intro = self.introduced.get(sym)
            if intro is None:
                raise Refused(f"the clause uses {sym}/{arity}, which is neither in "
                              f"{name} nor a declared Skolem or definition symbol", sid)
            kind, iar, owner = intro
            if owner != name:
                raise Refused(f"the clause uses {sym}, introduced for {owner}, "
                              f"in a clause of {name}", sid)
            if iar != arity:
                raise Refused(f"{sym} is declared with arity {iar} but used with "
                              f"{arity}", sid)
        # And it is one of the clauses clausification produced for it.
        for ic in self._cp_by_source.get(name, ()):
            if ic.conj == want_conj and is_variant(ic.lits, clause):
                break
        else:
            raise Refused(f"{_show(clause)} is not a clause of the normal form of "
                          f"{name}", sid)
        self._spot_check(st, clause, sid)
        if not want_conj:
            self.inputs_used.add(name)

    def _spot_check(self, st, clause, sid):
        """The clause holds in every small model of its statement (see
        :mod:`worker.certify.spotcheck`); clauses with definition symbols
        are not spot-checked."""
        if not SPOT_CHECK:
            return
        intro = [self.introduced[n] for n, _ in _clause_syms(clause) if n in self.introduced]
        formula = Not(st.formula) if st.role == CONJECTURE else st.formula
        sig = spotcheck.formula_signature(formula)
        for n, (kind, arity, owner) in self.introduced.items():
            if owner == st.name and kind == "function":
                sig[n] = (kind, arity)      # one table only on one element
        if any(kind == "predicate" for kind, _, _ in intro):
            self._spot_check_definitions(st, formula, sig, sid)
            return
        sizes = (1,) if intro else (1, 2)
        for size in sizes:
            sym = sig if size == 1 else {n: v for n, v in sig.items()
                                         if n not in self.introduced}
            bad = self._spot.counterexample(st.name, formula, sym, clause, size)
            if bad is not None:
                raise Refused(f"{_show(clause)} does not follow from {st.name}: "
                              f"it is false in a model of {st.name} ({bad})", sid)
        if self._spot.tried(st.name, 1):
            self.spot_checked += 1

    def _spot_check_definitions(self, st, formula, sig, sid):
        """A clause with definition symbols: the statement's whole normal
        form must be satisfiable in each one-element model of the statement,
        for some meaning of its definition predicates (checked once per
        statement)."""
        done = self._defs_checked.get(st.name)
        if done is None:
            defs = {n: ar for n, (kind, ar, owner) in self.introduced.items()
                    if owner == st.name and kind == "predicate"}
            clauses = [ic.lits for ic in self._cp_by_source.get(st.name, ())]
            bad = self._spot.definitions_fail(st.name, formula, sig, defs, clauses)
            done = self._defs_checked[st.name] = bad or ""
        if done:
            raise Refused(f"the normal form of {st.name} cannot hold in a model of "
                          f"{st.name} ({done}), whatever its definition symbols mean", sid)
        if self._spot.tried(st.name, 1):
            self.spot_checked += 1


def check_input_clauses(problem, cp) -> CheckReport:
    """Run the input-step checks on every clause of ``cp`` (as if each were
    used by a proof): for testing the clausification against the checker.
    ``failing_step`` is the index in ``cp.clauses``."""
    decl = {"steps": [], "conjecture": cp.conjecture, "axioms_used": [],
            "skolems": {n: {"arity": s.arity, "statement": s.statement}
                        for n, s in (cp.skolems or {}).items()},
            "definitions": {n: {"arity": d.arity, "statement": d.statement}
                            for n, d in (cp.definitions or {}).items()}}
    checker = _Checker(decl, problem, cp)
    try:
        checker._introduced()
    except Refused as r:
        return CheckReport(False, 0, r.detail, None)
    for k, ic in enumerate(cp.clauses):
        st = {"id": k, "rule": "input", "formula": ic.source, "role": ic.role,
              "conj": bool(ic.conj), "clause": T.clause_to_json(ic.lits), "parents": []}
        try:
            checker._input(st, k, ic.lits)
        except Refused as r:
            return CheckReport(False, k, r.detail, k)
    return CheckReport(True, len(cp.clauses), f"{len(cp.clauses)} input clauses checked")


def check_proof(proof: dict, problem, cp, deadline: float | None = None) -> CheckReport:
    """Replay ``proof`` against the obligation (``problem``, ``cp``).
    Never raises: a refusal names the step and says what is wrong.  With a
    ``deadline`` (``time.monotonic()`` seconds) a replay still running then
    stops with ``timed_out`` set: nothing was refused, nothing certified."""
    try:
        checker = _Checker(proof, problem, cp)
    except Exception as e:          # a refusal is always the safe answer
        return CheckReport(False, 0, f"the obligation could not be read ({e})", None)
    checker.deadline = deadline
    try:
        return checker.run()
    except _OutOfTime:
        n = len((proof or {}).get("steps") or [])
        return CheckReport(False, len(checker.clauses),
                           f"its check had replayed {len(checker.clauses)} of its {n} steps",
                           None, timed_out=True)
    except Refused as r:
        return CheckReport(False, len(checker.clauses), r.detail, r.step)
    except Exception as e:
        return CheckReport(False, len(checker.clauses),
                           f"the proof could not be read ({type(e).__name__}: {e})", None)
