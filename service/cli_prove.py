"""``nightjar prove``: decide every proof obligation of the given files in
this process and print the verdicts.

Exit codes: 0 every obligation got a definite verdict, 1 an input error, 2 a
usage error (an unknown strategy, a time limit under MIN_TIME_LIMIT), 3 some
obligation ended without a definite verdict.
"""

from __future__ import annotations

import json
import sys

from worker import verdict as V
from worker.syntax.errors import InputError

from service.config import MIN_TIME_LIMIT

EXIT_OK, EXIT_INPUT, EXIT_USAGE, EXIT_UNDECIDED = 0, 1, 2, 3


def time_limit_error(seconds: float | None) -> str | None:
    """Why ``--time-limit`` is refused (prove and submit alike), or None."""
    if seconds is not None and not seconds >= MIN_TIME_LIMIT:    # NaN too
        return f"--time-limit must be at least {MIN_TIME_LIMIT:g} seconds, not {seconds:g}"
    return None


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "prove", help="prove the conjectures of problem files here and now",
        description="Read each FILE (native .nj or TPTP), and for each of its "
                    "conjectures (or, without one, the satisfiability of the "
                    "file) search for a proof and for a finite countermodel "
                    "(a finite model, for the satisfiability of a file) "
                    "under one time limit.  Exit 0 when every obligation got a "
                    "definite verdict, 1 on an input error, 2 on a usage error, "
                    "3 otherwise.")
    p.add_argument("files", nargs="+", metavar="FILE")
    p.add_argument("--time-limit", type=float, default=10.0, metavar="S",
                   help="wall-clock seconds per obligation (default 10, at least "
                        f"{MIN_TIME_LIMIT:g})")
    p.add_argument("--json", action="store_true",
                   help="one JSON object per obligation per line")
    p.add_argument("--strategy", metavar="NAME",
                   help="run only this strategy instead of the default schedule; "
                        "goal-first (set of support) is incomplete: it may give up "
                        "(GaveUp) on a theorem that the other strategies prove")
    p.add_argument("--equality", choices=("builtin", "axioms"), default="builtin",
                   help="built-in equality (default) or equality as axioms")
    p.add_argument("--no-models", action="store_true",
                   help="do not search for finite models (or countermodels)")
    p.add_argument("--language", choices=("native", "tptp"),
                   help="read every file in this language (default: told apart from the text)")
    p.add_argument("--include-root", metavar="DIR",
                   help="second place to look for included files")
    p.set_defaults(func=run_prove)


def input_error_record(file: str | None, text: str) -> dict:
    """The JSON object of a file that could not be read (``text``: the
    rendered error), in the shape of a verdict line; ``prove --json`` and
    ``submit --json`` print it."""
    return {"file": file, "conjecture": None, "status": V.INPUT_ERROR, "seconds": 0.0,
            "strategy": None, "axioms_used": [], "proof": None, "model": None,
            "certificate": V.certificate("none"), "reason": text}


def _format_model(model) -> str:
    from worker.models.display import format_model
    return format_model(model)


def _human(path: str, res: dict) -> str:
    from worker.saturation.proof import format_proof
    what = obligation_text(res.get("conjecture"))
    figs = res.get("figures") or {}
    lines = [f"{path}: {what}: {res['status']}  ({res['seconds']:.2f} s)"]
    if res["status"] == V.CONTRADICTORY_AXIOMS:
        lines.append("  WARNING: THE AXIOMS CONTRADICT EACH OTHER. The proof below never "
                     "uses the conjecture: every statement whatsoever follows from "
                     "these axioms. Fix the axioms before trusting any verdict on them.")
    if figs.get("given", 0) or figs.get("generated", 0):
        lines.append(f"  strategy {res.get('strategy') or '-'}; given {figs.get('given', 0)}, "
                     f"generated {figs.get('generated', 0)}, kept {figs.get('kept', 0)}")
    else:
        lines.append(f"  strategy {res.get('strategy') or '-'} (settled before any "
                     f"saturation step)")
    if res.get("proof"):
        lines.append("  proof:")
        lines.append(format_proof(res["proof"]))
    elif res.get("model"):
        lines.append(f"  {model_word(res['status'])}:")
        lines.append("    " + _format_model(res["model"]).replace("\n", "\n    "))
    if res.get("reason") and res["status"] not in (V.THEOREM, V.UNSATISFIABLE):
        lines.append(f"  why: {res['reason']}")
    lines.append(f"  certificate: {certificate_text(res.get('certificate'))}")
    return "\n".join(lines)


def obligation_text(conjecture: str | None) -> str:
    """What an obligation is, in words: its conjecture, or for a file
    without one the file's satisfiability.  prove's verdict lines and
    proof's headings say it alike."""
    return f"conjecture {conjecture}" if conjecture else "satisfiability of the file"


def model_word(verdict: str | None) -> str:
    """What a job's finite model is called: a CounterSatisfiable verdict's is
    a countermodel (the axioms hold in it, the conjecture fails); a
    Satisfiable one's (a file without conjecture) is a model.  prove, proof
    and the console say it alike."""
    return "countermodel" if verdict == V.COUNTER_SATISFIABLE else "model"


def certificate_text(cert: dict | None) -> str:
    """What was checked, in words (prove, status and proof say it alike)."""
    cert = cert or {}
    kind = cert.get("kind", "none")
    n = cert.get("checked", 0)
    text = {"proof-replayed": f"proof replayed, {n} step{'s' if n != 1 else ''} checked",
            "model-evaluated": f"model evaluated, {n} formula{'s' if n != 1 else ''} checked"
                               + (f": {cert['detail']}" if cert.get("detail") else ""),
            "failed": f"CHECK FAILED: {cert.get('detail', '')}",
            "none": "nothing checked" + (f" ({cert['detail']})" if cert.get("detail") else "")}
    return text.get(kind, kind)


def _warnings(problem, as_json: bool) -> list:
    """The problem's warnings (DEVELOPERS.md, "Warnings"), shown on stderr
    unless the output is JSON (there each record lists its own)."""
    from service.cli_check import disk_text
    from worker.syntax.warn import find_warnings
    warns = find_warnings(problem, disk_text)
    if not as_json:
        sys.stdout.flush()
        for w in warns:
            print(w.render(), file=sys.stderr, flush=True)
    return warns


def run_prove(args) -> int:
    from worker.pipeline import decide
    from worker.saturation import strategy as S
    from worker.syntax.warn import for_obligation

    if args.strategy and args.strategy not in S.STRATEGIES:
        print(f"nightjar: --strategy: unknown strategy {args.strategy!r}; known: "
              + ", ".join(sorted(S.STRATEGIES)), file=sys.stderr)
        return EXIT_USAGE
    why = time_limit_error(args.time_limit)
    if why:
        print(f"nightjar: {why}", file=sys.stderr)
        return EXIT_USAGE
    settings = V.Settings(limits=V.Limits(time=args.time_limit),
                          strategy=args.strategy, equality=args.equality,
                          model_search=not args.no_models)
    code = EXIT_OK
    from service.cli import input_error_text
    from service.cli_check import load_file
    for path in args.files:
        try:
            problem = load_file(path, language=args.language,
                                include_root=args.include_root)
        except InputError as e:
            text = input_error_text(e)
            print(text, file=sys.stderr)
            if args.json:
                print(json.dumps(input_error_record(path, text)))
            code = EXIT_INPUT
            continue
        warns = _warnings(problem, args.json)
        for conj in problem.obligations():
            res = decide(problem, conj, settings)
            if res["status"] == V.INPUT_ERROR:
                code = EXIT_INPUT
            elif res["status"] not in V.DEFINITE and code == EXIT_OK:
                code = EXIT_UNDECIDED
            if res["status"] == V.CONTRADICTORY_AXIOMS:
                print(f"nightjar: WARNING: {path}: the axioms contradict each other "
                      f"(every conjecture follows from them)", file=sys.stderr)
            if args.json:
                print(json.dumps(dict(file=path, **res, warnings=[
                    w.to_json() for w in for_obligation(warns, conj)])), flush=True)
            else:
                print(_human(path, res), flush=True)
    return code
