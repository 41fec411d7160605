"""``nightjar check`` and ``nightjar clausify``: read problems and show what
was read.  Output formats are documented in DEVELOPERS.md, "Reading
problems".

Exit codes: 0 every file fine, 1 an input error in some file, 2 a usage
error (raised through ``service.cli``).
"""

from __future__ import annotations

import json
import os
import sys

from worker.syntax import disk_reader, load_problem, require_conjecture
from worker.syntax.errors import InputError
from worker.syntax.printer import format_clause
from worker.syntax.warn import find_warnings

JSON_VERSION = 1


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "check", help="read problem files and report statements, symbols, clauses",
        description="Read each FILE (native .nj or TPTP fof/cnf), follow its "
                    "includes, check its symbols and clausify each proof "
                    "obligation.  Exit 0 when every file is fine, 1 on an input "
                    "error.")
    p.add_argument("files", nargs="+", metavar="FILE")
    _common(p)
    p.add_argument("--require-conjecture", action="store_true",
                   help="treat a file without a conjecture as an error")
    p.add_argument("--json", action="store_true", help="machine-readable output")
    p.set_defaults(func=run_check)

    c = subparsers.add_parser(
        "clausify", help="print the clauses of a problem with their provenance",
        description="Read FILE and print the input clauses of each proof "
                    "obligation (or only of --conjecture NAME), each with the "
                    "statement it came from and the Skolem and definition "
                    "symbols it uses.")
    c.add_argument("file", metavar="FILE")
    _common(c)
    c.add_argument("--conjecture", metavar="NAME",
                   help="only the obligation of this conjecture")
    c.add_argument("--json", action="store_true", help="machine-readable output")
    c.set_defaults(func=run_clausify)


def _common(p) -> None:
    p.add_argument("--language", choices=("native", "tptp"),
                   help="read every file in this language (default: told apart "
                        "from the text)")
    p.add_argument("--include-root", metavar="DIR",
                   help="second place to look for included files, e.g. a TPTP "
                        "axiom library (default: $NIGHTJAR_TPTP_ROOT)")


class InternalError(Exception):
    """A bug (not the user's input): reported in one line, exit 1."""


def _clausify_safely(problem, conj):
    from worker.clausify import clausify
    try:
        return clausify(problem, conj)
    except InputError:
        raise
    except Exception as e:          # a bug in the clausifier: no traceback
        raise InternalError(f"internal error while clausifying "
                            f"{'conjecture ' + conj if conj else 'the problem'}: "
                            f"{type(e).__name__}: {e}") from e


def load_file(path: str, *, language: str | None = None,
              include_root: str | None = None):
    """Read a problem file from disk as ``check``, ``clausify`` and ``prove``
    do.  A folder is an InputError without a place (there is no line in it
    to point at), so that, like a missing file, it is printed as one
    ``nightjar: cannot read ...`` line (``service.cli.input_error_text``)."""
    if os.path.isdir(path):
        raise InputError(f"cannot read '{path}': it is a folder, not a file")
    return load_problem(path, disk_reader(), language=language,
                        include_root=include_root)


def _load(path, args):
    return load_file(path, language=args.language, include_root=args.include_root)


def disk_text(name: str) -> str:
    """A file's text, for the line a warning echoes (read again only for a
    statement that has a warning)."""
    return disk_reader()(name)


def warnings_json(problem) -> list:
    """The warnings of a problem read from disk, as JSON (each with its
    rendered ``text``); DEVELOPERS.md, "Warnings"."""
    return [w.to_json() for w in find_warnings(problem, disk_text)]


def submission_warnings(files: list, axioms: list | None = None, *,
                        language: str | None = None,
                        include_root: str | None = None) -> dict:
    """The warnings of what ``nightjar submit`` sends, read here from disk as
    ``check`` reads it: ``{file as given: [InputWarning]}`` for each FILE.
    With axiom files every FILE's list also holds the warnings about the
    axioms, and the whole submission counts as one problem (a constant two
    conjecture files share is not reported, though each job reads only one of
    them).  A file that cannot be read is left out: the submission itself
    reports it.  ``language`` and ``include_root`` as submit's options."""
    def read(path):
        try:
            return load_problem(path, disk_reader(), language=language,
                                include_root=include_root)
        except InputError:
            return None

    try:
        return _submission_warnings(files, axioms, read)
    except Exception as e:              # a bug here must not hide the batch
        print(f"nightjar: internal error while looking for warnings: "
              f"{type(e).__name__}: {e}", file=sys.stderr)
        return {path: [] for path in files}


def _submission_warnings(files, axioms, read) -> dict:
    from worker.syntax import Problem
    if not axioms:
        out = {}
        for path in files:
            problem = read(path)
            out[path] = [] if problem is None else find_warnings(problem, disk_text)
        return out
    statements, signature, seen, owner = [], {}, set(), {}
    for path in list(axioms) + list(files):
        problem = read(path)
        if problem is None:
            continue
        signature.update(problem.signature)
        for st in problem.statements:
            key = (st.span.file, st.span.line, st.span.col) if st.span else id(st)
            if key not in seen:
                seen.add(key)
                statements.append(st)
                owner[id(st)] = path
    if not statements:
        return {path: [] for path in files}
    warns = find_warnings(Problem(statements, signature, [], files[0]), disk_text)
    by_statement = {}
    for w, st in _with_statements(warns, statements):
        by_statement.setdefault(owner[id(st)], []).append(w)
    shared = [w for a in axioms for w in by_statement.get(a, [])]
    return {path: shared + by_statement.get(path, []) for path in files}


def submission_report(by_path: dict):
    """From :func:`submission_warnings`: every warning once (a list), and
    ``job_warnings(job) -> [JSON]``, the warnings of one job of the batch
    (its file as the service names it, its conjecture)."""
    import os

    from service.client import _name
    from worker.syntax.warn import for_obligation
    flat = list({id(w): w for ws in by_path.values() for w in ws}.values())
    cwd = os.getcwd()
    by_job_file = {_name(path, cwd): ws for path, ws in by_path.items()}

    def job_warnings(job: dict) -> list:
        ws = by_job_file.get(job.get("file"), [])
        return [w.to_json() for w in for_obligation(ws, job.get("conjecture"))]
    return flat, job_warnings


def _with_statements(warns, statements):
    """Pair each warning with the statement it is about (by file and name)."""
    index = {(st.span.file if st.span else None, st.name): st for st in statements}
    for w in warns:
        st = index.get((w.span.file, w.statement))
        if st is not None:
            yield w, st


def print_warnings(warnings: list, stream=None) -> None:
    """Rendered warnings (JSON form) on stderr."""
    stream = stream or sys.stderr
    for w in warnings:
        print(w["text"], file=stream)
    stream.flush()


# ------------------------------------------------------------------- check

def check_file(path: str, args) -> dict:
    """The JSON report of one file (raises InputError)."""
    problem = _load(path, args)
    if getattr(args, "require_conjecture", False):
        require_conjecture(problem)
    report = {
        "file": path,
        "ok": True,
        "language": problem.language,
        "files_read": list(problem.files),
        "statements": [
            {"name": s.name, "role": s.role, "language": s.language,
             "file": s.span.file if s.span else None,
             "line": s.span.line if s.span else None,
             "col": s.span.col if s.span else None}
            for s in problem.statements],
        "symbols": [
            {"name": sym.name, "kind": sym.kind, "arity": sym.arity}
            for sym in sorted(problem.signature.values(),
                              key=lambda s: (s.kind, s.name))],
        "obligations": None,
        "warnings": warnings_json(problem),
        "error": None,
    }
    obs = []
    for conj in problem.obligations():
        cp = _clausify_safely(problem, conj)
        obs.append({
            "conjecture": conj,
            "clauses": len(cp.clauses),
            "trivial": cp.trivial,
            "skolems": [{"name": k.name, "arity": k.arity,
                         "statement": k.statement, "variable": k.variable}
                        for k in cp.skolems.values()],
            "definitions": len(cp.definitions),
        })
    report["obligations"] = obs
    return report


def _table(rows, indent="    ") -> list:
    if not rows:
        return []
    widths = [max(len(str(r[i])) for r in rows) for i in range(len(rows[0]))]
    out = []
    for r in rows:
        cells = [str(c).ljust(w) for c, w in zip(r, widths)]
        out.append((indent + "  ".join(cells)).rstrip())
    return out


def render_check(rep: dict) -> str:
    n_files = len(rep["files_read"])
    n_st = len(rep["statements"])
    n_w = len(rep.get("warnings") or ())
    warned = f", {n_w} warning{'s' if n_w != 1 else ''}" if n_w else ""
    lines = [f"{rep['file']}: fine ({rep['language']}, {n_st} "
             f"statement{'s' if n_st != 1 else ''}, {n_files} file{'s' if n_files != 1 else ''} "
             f"read{warned})"]
    lines.append("  statements")
    lines += _table([(s["role"], s["name"], f"{s['file']}:{s['line']}")
                     for s in rep["statements"]])
    lines.append("  symbols")
    lines += _table([(s["name"], s["kind"], f"arity {s['arity']}")
                     for s in rep["symbols"]])
    obs = rep["obligations"]
    lines.append("  obligations")
    rows = []
    for o in obs:
        what = f"conjecture {o['conjecture']}" if o["conjecture"] else "satisfiability"
        sk = ", ".join(f"{k['name']}/{k['arity']}" for k in o["skolems"]) or "-"
        rows.append((what, f"{o['clauses']} clauses",
                     f"{o['definitions']} definitions", f"skolem: {sk}"))
    lines += _table(rows)
    for o in obs:
        if o["trivial"]:
            lines.append(f"    note: {o['trivial']}")
    return "\n".join(lines)


def run_check(args) -> int:
    from service.cli import input_error_text
    reports = []
    failed = False
    for path in args.files:
        try:
            rep = check_file(path, args)
        except InputError as e:
            failed = True
            text = input_error_text(e)   # one nightjar: line when it has no place
            rep = {"file": path, "ok": False, "error": {**e.to_json(), "text": text}}
            if not args.json:
                print(text, file=sys.stderr)
        except InternalError as e:
            failed = True
            rep = {"file": path, "ok": False, "error": {
                "message": str(e), "file": path, "line": None, "col": None,
                "text": f"{path}: {e}", "internal": True}}
            if not args.json:
                print(f"{path}: {e}", file=sys.stderr)
        else:
            if not args.json:
                sys.stdout.flush()
                print_warnings(rep["warnings"])
                print(render_check(rep))
        reports.append(rep)
    if args.json:
        json.dump({"version": JSON_VERSION, "ok": not failed, "files": reports},
                  sys.stdout, indent=2, ensure_ascii=False)
        sys.stdout.write("\n")
    return 1 if failed else 0


# ---------------------------------------------------------------- clausify

def clausify_report(path: str, args) -> dict:
    from service.cli import UsageError
    from worker.syntax.terms import clause_to_json
    problem = _load(path, args)
    if args.conjecture is not None:
        names = [s.name for s in problem.conjectures()]
        if args.conjecture not in names:
            raise UsageError(f"'{path}' has no conjecture named '{args.conjecture}'"
                             + (f"; its conjectures are: {', '.join(names)}" if names
                                else "; it has no conjecture"))
        wanted = [args.conjecture]
    else:
        wanted = problem.obligations()
    obs = []
    for conj in wanted:
        cp = _clausify_safely(problem, conj)
        obs.append({
            "conjecture": conj,
            "trivial": cp.trivial,
            "clauses": [{"id": i + 1, "clause": clause_to_json(c.lits),
                         "text": format_clause(c.lits), "source": c.source,
                         "role": c.role, "conj": c.conj,
                         "skolems": list(c.skolems), "definitions": list(c.definitions)}
                        for i, c in enumerate(cp.clauses)],
            "skolems": {k.name: {"arity": k.arity, "statement": k.statement,
                                 "variable": k.variable}
                        for k in cp.skolems.values()},
            "definitions": {d.name: {"arity": d.arity, "statement": d.statement,
                                     "formula": d.formula, "polarity": d.polarity}
                            for d in cp.definitions.values()},
            "figures": dict(cp.figures),
        })
    return {"version": JSON_VERSION, "file": path, "language": problem.language,
            "obligations": obs}


def render_clausify(rep: dict) -> str:
    lines = []
    for o in rep["obligations"]:
        what = (f"conjecture {o['conjecture']}" if o["conjecture"]
                else "no conjecture (satisfiability)")
        lines.append(f"{rep['file']}: {what}: {len(o['clauses'])} clauses")
        if o["trivial"]:
            lines.append(f"  note: {o['trivial']}")
        rows = []
        for c in o["clauses"]:
            prov = c["source"] + (" (negated conjecture)" if c["conj"] else "")
            extra = ", ".join(c["skolems"] + c["definitions"])
            rows.append((f"{c['id']}.", c["text"], f"from {prov}" + (f"; uses {extra}" if extra else "")))
        lines += _table(rows, "  ")
        if o["skolems"]:
            lines.append("  skolem symbols")
            lines += _table([(n, f"arity {k['arity']}", f"from {k['statement']}",
                              f"for {k['variable']}" if k["variable"] else "")
                             for n, k in o["skolems"].items()])
        if o["definitions"]:
            lines.append("  definitions")
            pol = {1: "implies", -1: "implied by", 0: "iff"}
            lines += _table([(n, f"arity {d['arity']}", f"from {d['statement']}",
                              f"{pol.get(d['polarity'], '?')} {d['formula']}")
                             for n, d in o["definitions"].items()])
    return "\n".join(lines)


def run_clausify(args) -> int:
    try:
        rep = clausify_report(args.file, args)
    except InternalError as e:
        print(f"{args.file}: {e}", file=sys.stderr)
        return 1
    if args.json:
        json.dump(rep, sys.stdout, indent=2, ensure_ascii=False)
        sys.stdout.write("\n")
    else:
        print(render_clausify(rep))
    return 0
