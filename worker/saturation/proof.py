"""Proof extraction (to the step format of DEVELOPERS.md, "Proofs") and the
readable numbered form.

:func:`extract` keeps only the clauses the empty clause depends on, numbers
them 1..n in dependency order and writes each step's rule fields;
:func:`format_proof` prints a proof dict in the native notation.
"""

from __future__ import annotations

from worker.clauses import DISTINCT_ROLE
from worker.syntax.printer import format_clause, format_term
from worker.syntax.terms import clause_from_json, clause_to_json, from_json, to_json, variables

from .clause import renaming
from .unify import instantiate

_FIELDS = ("lits", "side", "sides", "position", "offsets")


def extract(empty, cp=None) -> dict:
    """The proof of ``empty`` (a Clause without literals) as data."""
    seen = {}
    stack = [empty]
    while stack:
        c = stack.pop()
        if c.id in seen:
            continue
        seen[c.id] = c
        stack.extend(c.parents)
    order = sorted(seen.values(), key=lambda c: c.id)
    # clauses in the middle of a rewrite chain were kept unnormalized:
    # rename their variables now, and the matcher of the step that uses them
    vmaps = {c.id: renaming(c.lits) for c in order if getattr(c, "raw", False)}
    num = {c.id: k + 1 for k, c in enumerate(order)}
    steps = []
    axioms = []
    for c in order:
        lits = c.lits
        if c.id in vmaps:
            vm = vmaps[c.id]
            lits = tuple((sg, instantiate(a, vm)) for sg, a in lits)
        st = {"id": num[c.id], "clause": clause_to_json(lits), "rule": c.rule,
              "parents": [num[p.id] for p in c.parents]}
        info = c.info or {}
        if c.rule == "demodulation" and len(c.parents) == 2 and c.parents[1].id in vmaps:
            vm = vmaps[c.parents[1].id]
            info = dict(info, sigma={v: instantiate(t, vm)
                                     for v, t in (info.get("sigma") or {}).items()})
        if c.rule == "input":
            st["formula"] = info.get("formula")
            st["role"] = info.get("role")
            st["conj"] = bool(info.get("conj"))
            if any(info.get("varnames") or ()):
                # the statement's own names for the clause's variables
                st["varnames"] = list(info["varnames"])
            if not st["conj"] and st["formula"] not in axioms:
                axioms.append(st["formula"])
        else:
            for k in _FIELDS:
                if k in info:
                    st[k] = list(info[k]) if isinstance(info[k], (list, tuple)) else info[k]
            if c.parents:
                st["subst"] = {str(v): to_json(t)
                               for v, t in sorted((info.get("sigma") or {}).items())}
        steps.append(st)
    proof = {"steps": steps, "conjecture": getattr(cp, "conjecture", None),
             "axioms_used": axioms, "skolems": {}, "definitions": {}}
    if cp is not None:
        for name, sk in (cp.skolems or {}).items():
            proof["skolems"][name] = {"arity": sk.arity, "statement": sk.statement}
        for name, d in (cp.definitions or {}).items():
            proof["definitions"][name] = {"arity": d.arity, "statement": d.statement,
                                          "formula": d.formula, "polarity": d.polarity}
    return proof


def _pos(p) -> str:
    return ".".join(str(i) for i in p) if p else "root"


def step_names(st: dict) -> dict | None:
    """Printed names of a step's variables: an input step keeps the names
    its statement gave them (``varnames``); None: X0, X1, ..."""
    vn = st.get("varnames")
    if not vn:
        return None
    names = {k: n for k, n in enumerate(vn) if type(n) is str and n}
    return names or None


def clause_text(st: dict) -> str:
    """A step's clause in the native notation, in the step's own names."""
    return format_clause(clause_from_json(st["clause"]), step_names(st))


def _subst_text(subst: dict, parents=(), offsets=None, names_of=None) -> str:
    """The substitution in the parents' own variable names: the parents'
    variables were renamed apart by adding ``offsets[k]``, so variable ``v``
    belongs to the parent with the largest offset not above it and is shown
    as ``X<v - offset>@<parent>`` (``X0@3``: variable X0 of step 3), or by
    the parent's own name for it (``x@3``) where ``names_of`` (step id ->
    :func:`step_names`) has one."""
    if not subst:
        return ""
    offs = list(offsets if offsets is not None else [0] * len(parents))
    owners = sorted(((o, p) for o, p in zip(offs, parents)), reverse=True)
    names_of = names_of or {}

    def name(v: int) -> str:
        for o, p in owners:
            if v >= o:
                own = (names_of.get(p) or {}).get(v - o)
                return f"{own}@{p}" if own else f"X{v - o}@{p}"
        return f"X{v}"

    names = {}
    parts = []
    for k, v in subst.items():
        t = from_json(v)
        for x in [int(k), *variables(t)]:
            names.setdefault(x, name(x))
        parts.append(f"{names[int(k)]} := {format_term(t, names)}")
    return "; " + ", ".join(parts)


def _distinct_text(st: dict) -> str:
    """An input step the input language justifies (two distinct objects)."""
    try:
        (_s, atom), = clause_from_json(st["clause"])
        pair = f"{atom[1]} and {atom[2]}"
    except (ValueError, TypeError, IndexError, KeyError):
        pair = "two objects"
    whose = "; one of them occurs only in the conjecture" if st.get("conj") else ""
    return (f"distinct objects {pair}: different distinct objects are unequal "
            f"(TPTP language){whose}")


def describe_step(st: dict, names_of: dict | None = None) -> str:
    """The justification column of one step."""
    rule = st["rule"]
    ps = st.get("parents") or []
    if rule == "input":
        if st.get("role") == DISTINCT_ROLE:
            return _distinct_text(st)
        who = "negated conjecture" if st.get("conj") else (st.get("role") or "axiom")
        return f"from {st.get('formula')} ({who})"
    if rule == "equality_axiom":
        return "equality axiom"
    if rule == "finite_domain":
        n = st.get("bound")
        count = st.get("interpretations")
        counted = f": {count} interpretations evaluated" if count is not None else ""
        return (f"every model has at most {n} element{'s' if n != 1 else ''} "
                f"(clause {st.get('closure')}); no interpretation of size 1..{n} "
                f"satisfies the axioms{' and the negated conjecture' if st.get('conj') else ''}"
                f"{counted}; "
                f"from {len(ps)} input clauses")
    sub = _subst_text(st.get("subst") or {}, ps, st.get("offsets"), names_of)
    lits = st.get("lits") or []
    if rule == "superposition" or rule == "demodulation":
        how = rule            # the rule's own name, as the console and the checker say it
        return (f"{how}: {ps[0]} into {ps[1]} at literal {lits[1] + 1}, "
                f"position {_pos(st.get('position'))}{sub}")
    if rule == "resolution":
        return f"resolution of {ps[0]} and {ps[1]} on literals {lits[0] + 1}, {lits[1] + 1}{sub}"
    if rule == "subsumption_resolution":
        return (f"subsumption resolution: literal {lits[1] + 1} of {ps[1]} cut "
                f"with {ps[0]}{sub}")
    if rule == "factoring":
        return f"factoring {ps[0]} on literals {lits[0] + 1}, {lits[1] + 1}{sub}"
    if rule == "equality_resolution":
        return f"equality resolution on {ps[0]}, literal {lits[0] + 1}{sub}"
    if rule == "equality_factoring":
        return f"equality factoring {ps[0]} on literals {lits[0] + 1}, {lits[1] + 1}{sub}"
    if rule == "duplicate_removal":
        return f"merge repeated literals of {ps[0]}"
    return f"{rule} {', '.join(map(str, ps))}{sub}"


def format_proof(proof: dict) -> str:
    """Numbered proof in the native notation, one step a line:
    ``number. clause    [justification]``."""
    lines = []
    sk = proof.get("skolems") or {}
    used = set()
    for st in proof.get("steps", []):
        for _s, a in clause_from_json(st["clause"]):
            stack = [a]
            while stack:
                x = stack.pop()
                if type(x) is str:
                    used.add(x)
                elif type(x) is tuple:
                    used.add(x[0])
                    stack.extend(x[1:])
    for name, info in sk.items():
        if name in used:
            lines.append(f"  new symbol {name}/{info['arity']}: witness introduced for {info['statement']}")
    for name, info in (proof.get("definitions") or {}).items():
        if name in used:
            lines.append(f"  new symbol {name}/{info['arity']}: names \"{info['formula']}\" "
                         f"in {info['statement']}")
    steps = proof.get("steps", [])
    width = len(str(len(steps) and steps[-1]["id"]))
    names_of = {st["id"]: step_names(st) for st in steps if st.get("varnames")}
    for st in steps:
        lines.append(f"  {st['id']:>{width}}. {clause_text(st)}    "
                     f"[{describe_step(st, names_of)}]")
    if proof.get("axioms_used"):
        lines.append("  axioms used: " + ", ".join(proof["axioms_used"]))
    notes = _notation(steps)
    for k, note in enumerate(notes):
        lines.append(("  notation: " if k == 0 else "            ") + note)
    return "\n".join(lines)


def variables_of_clause(clause_json) -> set:
    out: set = set()
    for _s, a in clause_from_json(clause_json):
        variables(a, out)
    return out


def _notation(steps) -> list:
    """One-line explanations of the notation the steps use, for a reader who
    meets it for the first time."""
    out = []

    def has_vars(st):
        return bool(variables_of_clause(st.get("clause") or []))
    named = any(st.get("varnames") for st in steps)
    if any(st["rule"] not in ("input", "finite_domain") and has_vars(st) for st in steps):
        out.append("X0, X1, ... stand for any terms (each clause says: for all X0, X1, ...)"
                   + ("; a clause taken from a statement keeps the statement's variable names"
                      if named else ""))
    elif named:
        out.append("a clause taken from a statement keeps the statement's variable names "
                   "(each clause says: for all of them)")
    if any(st.get("subst") for st in steps):
        out.append("X0@5 := t (or x@5 := t): variable X0 (or x) of step 5 is replaced by t")
    if any(st.get("position") for st in steps):
        out.append("a position lists argument numbers from the top of the literal, "
                   "counted from 1 (2.1: the first argument of its second side)")
    return out
