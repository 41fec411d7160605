"""``nightjar corpus run`` and ``nightjar corpus diff``.

    nightjar corpus run DIR|MANIFEST [--wait] [--full] [--json] [--allow-removed]
    nightjar corpus diff [RUN_A RUN_B] [--suite NAME] [--json] [--threshold SECONDS]
                         [--across-suites] [--allow-removed]
    nightjar corpus runs [--suite NAME] [--json]

``run`` loads the suite on this side (every problem in it reported at once,
with its file:line:col, before anything is sent), submits it as one run,
and with ``--wait`` follows it with a progress bar and prints the report.
``diff`` compares two runs (default: the suite's last two; runs of two
different suites only with ``--across-suites``).  Exit codes (DEVELOPERS.md):
0 fine (``diff`` of a suite with one run: nothing to compare yet); 1 input
error; 2 usage (also: runs of two suites without ``--across-suites``, a
suite with no run); 3 some obligation without a definite verdict; 4 no
service; 5 something lost, flipped, unexpected, or on contradictory axioms;
6 none of that, but obligations settled in the base run were removed from the
suite (``--allow-removed`` accepts that).
"""

from __future__ import annotations

import json
import sys
import time

EXIT_OK, EXIT_INPUT, EXIT_USAGE, EXIT_UNDECIDED, EXIT_NO_SERVICE, EXIT_REGRESSION = 0, 1, 2, 3, 4, 5
EXIT_REMOVED = 6


def _client(args):
    from .client import Client
    return Client.find(server=getattr(args, "server", None))


def _guarded(fn):
    def run(args):
        from .client import ApiError, ServiceUnavailable
        try:
            return fn(args)
        except ServiceUnavailable as e:
            print(f"nightjar: {e}", file=sys.stderr)
            return EXIT_NO_SERVICE
        except ApiError as e:
            err = e.error
            if err.get("code") == "input_error":
                print(err.get("text") or err.get("message"), file=sys.stderr)
                return EXIT_INPUT
            print(f"nightjar: {e}", file=sys.stderr)
            return EXIT_INPUT if e.status == 400 else EXIT_USAGE
    return run


# -- printing ----------------------------------------------------------------

def _secs(x) -> str:
    return "-" if x is None else f"{x:.2f}"


def _plural(n: int, word: str, many: str | None = None) -> str:
    return f"{n} {word if n == 1 else (many or word + 's')}"


def axioms_line(summary: dict, guards: list, contradictions: list | None = None) -> str:
    c = summary.get("axioms_consistent")
    if c is False:
        if contradictions is None:       # a view from before the field: the guards only
            contradictions = [{"found_by": "axiom check"} for g in guards
                              if g.get("consistent") is False]
        by_check = sum(1 for x in contradictions if x.get("found_by") == "axiom check")
        by_verdict = len(contradictions) - by_check
        how = []
        if by_check:
            how.append(f"{by_check} refuted on {'its' if by_check == 1 else 'their'} own by "
                       f"the axiom check")
        if by_verdict:
            how.append(f"{by_verdict} shown contradictory by a ContradictoryAxioms verdict")
        n = len(contradictions)
        on = summary.get("on_contradictory_axioms")
        them = "it" if n == 1 else "them"
        marked = (f"the {_plural(on, 'obligation')} on {them} "
                  f"{'says' if on == 1 else 'say'} nothing about "
                  f"{'its conjecture' if on == 1 else 'their conjectures'} (a Theorem there "
                  f"holds only vacuously)"
                  if on is not None else f"every Theorem resting on {them} is vacuous")
        return (f"AXIOMS CONTRADICTORY: {_plural(n, 'axiom set')}"
                + (f" ({'; '.join(how)})" if how else "") + f"; {marked}")
    if c is True:
        if not guards:
            return "axioms: none to check"
        sizes = sorted({g["model_size"] for g in guards if g.get("model_size")})
        how = (f"a model of size {sizes[0]}" if len(sizes) == 1 and len(guards) == 1 else
               f"models of size {', '.join(map(str, sizes))}" if sizes else "saturated")
        n = len(guards)
        again = sum(1 for g in guards if g.get("reused"))
        note = (f"; {'its' if n == 1 else str(again)} model{'s' if again != 1 else ''} "
                f"from the last run re-evaluated") if again else ""
        return (f"axioms: consistent ({n} axiom set{'s' if n != 1 else ''} checked; "
                f"{how}{note})")
    pending = [g for g in guards if g.get("state") not in ("done", "failed", "cancelled")
               and not g.get("reason")]
    if pending:
        return "axioms: being checked"
    return "axioms: consistency unknown (the check found neither a refutation nor a model in its budget)"


def checks_note(summary: dict) -> str:
    """Why a run's batch has more jobs than the run has obligations: each
    distinct axiom set's consistency check is a job of it too."""
    n = summary.get("axiom_checks") or 0
    if not n:
        return ""
    return f"plus {n} axiom consistency check{'s' if n != 1 else ''}"


def _batch_part(summary: dict) -> str:
    """``batch b...`` with its job count when the axiom checks add jobs."""
    note = checks_note(summary)
    if not note:
        return f"batch {summary['batch']}"
    jobs = summary["total"] + summary["axiom_checks"]
    return f"batch {summary['batch']}: {jobs} jobs, the {summary['total']} obligations {note}"


def report_text(view: dict) -> str:
    s, rows = view["summary"], view["rows"]
    out = [f"run {s['run']} of suite {s['suite']}: {s['total']} obligations "
           f"({_batch_part(s)}{', full rerun' if s.get('full') else ''})",
           axioms_line(s, view["guards"], view.get("contradictions"))]
    w = max([len(r["key"]) for r in rows] + [10])
    out.append("")
    out.append(f"  {'obligation':<{w}}  {'verdict':<19} {'seconds':>8}  how")
    for r in rows:
        verdict = r["verdict"] or r["state"] or "?"
        how = ("reused (" + ("proof replayed" if r["reuse"]["kind"] == "proof-replayed"
                             else "model re-evaluated") + ")") if r["reused"] else "searched"
        flags = []
        if r["vacuous"]:
            flags.append("VACUOUS: the axioms are contradictory, every conjecture follows")
        elif r.get("axioms_contradictory"):
            flags.append("AXIOMS CONTRADICTORY: every conjecture follows, this one too")
        if r["unexpected"]:
            flags.append(f"UNEXPECTED: the manifest expects {r['expected']}")
        out.append(f"  {r['key']:<{w}}  {verdict:<19} {_secs(r['seconds']):>8}  {how}"
                   + ("  " + "; ".join(flags) if flags else ""))
    out.append("")
    out.append(f"settled {s['settled']} of {s['total']}: {s['theorems']} proved, "
               f"{s['counter_satisfiable']} refuted, {s['undecided']} without a verdict; "
               f"{s['unexpected']} unexpected")
    out.append(f"reused {s['reused']}, searched {s['searched']}; time saved by reuse "
               f"{s['time_saved_seconds']:.2f} s (replay and re-evaluation took "
               f"{s['reuse_check_seconds']:.2f} s)")
    return "\n".join(out)


def axiom_changes_lines(ch: dict | None) -> list:
    """The axioms added, removed and edited between two runs, by name and file."""
    if ch is None:
        return []
    items = ([("edited", x) for x in ch.get("edited", [])]
             + [("added", x) for x in ch.get("added", [])]
             + [("removed", x) for x in ch.get("removed", [])])
    if not items:
        return ["axioms changed: none"]
    n = {k: len(ch.get(k, [])) for k in ("edited", "added", "removed")}
    out = [f"axioms changed: {n['edited']} edited, {n['added']} added, {n['removed']} removed"]
    w = max(len(x["name"]) for _, x in items)
    for what, x in items:
        where = x.get("file")
        if what == "edited" and x.get("file_before") and x.get("file_before") != where:
            where = f"{x['file_before']} -> {where}"
        elif what == "removed" and where:
            where = f"was in {where}"
        out.append(f"  {what:<9} {x['name']:<{w}}" + (f"  ({where})" if where else ""))
    return out


def diff_text(d: dict) -> str:
    """The comparison in words: every obligation on one line (an unexpected
    one on its transition's line, tagged), the loud kinds first."""
    suites = d.get("suites") or {"a": d.get("suite"), "b": d.get("suite")}
    out = []
    if d.get("across_suites"):
        out.append(f"SUITES DIFFER: run {d['a']} is of suite {suites['a']}, run {d['b']} of "
                   f"suite {suites['b']}; compared because --across-suites asked for it: "
                   f"obligations are matched by file#conjecture name only, so what is gained, "
                   f"lost, added or removed mostly says that the files differ")
        out.append(f"suites {suites['a']} -> {suites['b']}: run {d['a']} -> run {d['b']}")
    else:
        out.append(f"suite {d['suite']}: run {d['a']} -> run {d['b']}")
    contradictory = d.get("contradictory", [])
    if d["axioms_consistent"]["b"] is False or contradictory:
        out.append(f"AXIOMS CONTRADICTORY in run {d['b']}: the verdicts of its "
                   f"{_plural(len(contradictory), 'obligation')} on those axioms say nothing "
                   f"about the conjectures (a Theorem there holds only vacuously); fix the axioms")
    out.extend(axiom_changes_lines(d.get("axiom_changes")))
    fixed = [x for x in d["gained"] if x.get("fixed")]
    if fixed:
        out.append(f"DEFINITE VERDICTS CHANGED: {_plural(len(fixed), 'obligation')} went from "
                   f"one definite verdict to the opposite one, the one the manifest expects "
                   f"(the FIXED lines: gained, so they do not fail the gate; review them)")
    expected = {x["key"]: x["expected"] for x in d["unexpected"]}
    shown = set()
    kinds = ("contradictory", "flipped", "lost", "gained", "answered", "unexpected", "slower",
             "faster", "axioms_changed", "added", "removed")
    w = max([len(x["key"]) for k in kinds for x in d.get(k, [])] + [10])
    lw = 13 if contradictory else 11          # the label column
    lines = []

    def tag(key):
        return (f"  UNEXPECTED: the manifest expects {expected[key]}" if key in expected else "")

    def was(x):
        if x.get("before") is None:
            return "(new)"
        return x["before"] + (" (on contradictory axioms)" if x.get("before_contradictory")
                              else "")

    def say(label, x, text):
        shown.add(x["key"])
        lines.append(f"{label:<{lw}} {x['key']:<{w}}  {text}{tag(x['key'])}")

    for x in contradictory:
        say("CONTRADICTORY", x, f"{was(x)} -> {x['after']} (the axioms are contradictory)")
    for x in d["flipped"]:
        say("FLIPPED", x, f"{was(x)} -> {x['after']}")
    for x in d["lost"]:
        say("lost", x, f"{was(x)} -> {x['after']}")
    for x in d["unexpected"]:
        if x["key"] in shown or any(x["key"] == y["key"] for y in d["added"]):
            continue
        shown.add(x["key"])
        lines.append(f"{'unexpected':<{lw}} {x['key']:<{w}}  {x['verdict']} (the manifest expects "
                     f"{x['expected']})")
    for x in d["removed"]:
        if x.get("settled"):
            say("REMOVED", x, f"(was {x['before']}: settled, and no longer in the suite)")
    for x in fixed:
        why = ("a definite verdict changed, to the one the manifest now expects; run "
               f"{d['a']}'s manifest expected {x['expected_before']}"
               if x.get("expected_before") == x.get("before") else
               "a definite verdict changed, to the one the manifest expects")
        say("FIXED", x, f"{was(x)} -> {x['after']} ({why})")
    for x in d["gained"]:
        if not x.get("fixed"):
            say("gained", x, f"{was(x)} -> {x['after']} (as expected)")
    for x in d.get("answered", []):
        say("answered", x, f"{was(x)} -> {x['after']} (no expectation in the manifest)")
    for x in d["axioms_changed"]:
        ch = " ".join(["+" + a for a in x["added"]] + ["-" + a for a in x["removed"]])
        lines.append(f"{'axioms used':<{lw}} {x['key']:<{w}}  {ch}")
    for k in ("slower", "faster"):
        for x in d[k]:
            lines.append(f"{k:<{lw}} {x['key']:<{w}}  {x['before']:.2f} s -> {x['after']:.2f} s")
    for x in d["added"]:
        say("added", x, f"{x['after']}")
    for x in d["removed"]:
        if not x.get("settled"):
            say("removed", x, f"(was {x['before']})")
    out.extend(lines or ["no changes"])
    n = {k: len(d.get(k, [])) for k in kinds}
    rs = d.get("removed_settled", 0)
    out.append(f"{n['contradictory']} on contradictory axioms, {n['flipped']} flipped, "
               f"{n['lost']} lost, {n['unexpected']} unexpected, {n['gained']} gained"
               + (f" ({len(fixed)} of them fixed: a definite verdict changed)" if fixed else "")
               + ", "
               f"{n['answered']} answered without an expectation, {n['added']} added, "
               f"{n['removed']} removed ({rs} of them settled), {n['axioms_changed']} "
               f"proof{'s' if n['axioms_changed'] != 1 else ''} using other axioms; "
               f"run {d['b']}: {d['reused']} reused, {d['searched']} searched"
               + ("" if d.get("finished", True) else " (a run is still going)"))
    return "\n".join(out)


class Bar:
    """A one-line progress bar on stderr (only on a terminal)."""

    def __init__(self, stream=None):
        self.stream = stream or sys.stderr
        self.on = hasattr(self.stream, "isatty") and self.stream.isatty()
        self.drawn = False

    def __call__(self, s: dict) -> None:
        if not self.on:
            return
        done, total = s["done"], max(s["total"], 1)
        width = 30
        fill = int(width * done / total)
        self.stream.write(f"\r[{'#' * fill}{'.' * (width - fill)}] {done}/{s['total']} "
                          f"settled, {s['reused']} reused ")
        self.stream.flush()
        self.drawn = True

    def close(self):
        if self.drawn:
            self.stream.write("\n")
            self.stream.flush()


def exit_code(summary: dict, allow_removed: bool = False) -> int:
    """``corpus run --wait``: 5 regression, 6 settled obligations of the
    previous run removed (unless allowed), 3 undecided, else 0."""
    if (summary.get("lost") or summary.get("flipped") or summary.get("unexpected")
            or summary.get("contradictory") or summary.get("axioms_consistent") is False):
        return EXIT_REGRESSION
    if summary.get("removed_settled") and not allow_removed:
        return EXIT_REMOVED
    if summary.get("undecided"):
        return EXIT_UNDECIDED
    return EXIT_OK


def diff_exit_code(d: dict, allow_removed: bool = False) -> int:
    """``corpus diff``: 5 on a regression, 6 when the only trouble is that
    obligations settled in the base run were removed (unless allowed), else 0."""
    if d["regression"]:
        return EXIT_REGRESSION
    if d.get("removed_settled") and not allow_removed:
        return EXIT_REMOVED
    return EXIT_OK


def removed_note(d: dict) -> str:
    keys = [x["key"] for x in d.get("removed", []) if x.get("settled")]
    return (f"nightjar: {_plural(len(keys), 'obligation')} settled in run {d['a']} "
            f"{'is' if len(keys) == 1 else 'are'} no longer in the suite ({', '.join(keys)}); "
            f"that fails the gate (exit {EXIT_REMOVED}) unless --allow-removed says the removal "
            f"is meant")


def json_summary(view: dict) -> dict:
    s = view["summary"]
    keys = ("run", "suite", "batch", "previous", "total", "settled", "reused", "searched",
            "contradictory", "gained", "answered", "lost", "flipped", "unexpected", "added",
            "removed", "removed_settled", "axioms_consistent", "contradictory_sets",
            "on_contradictory_axioms", "vacuous", "theorems", "counter_satisfiable",
            "undecided", "time_saved_seconds", "reuse_check_seconds", "search_seconds",
            "finished", "full")
    out = {k: s.get(k) for k in keys}
    out["guards"] = view["guards"]
    if view.get("diff"):
        d = view["diff"]
        out["changes"] = {k: d[k] for k in ("contradictory", "gained", "answered", "lost",
                                            "flipped", "unexpected", "added", "removed",
                                            "axioms_changed", "slower", "faster") if k in d}
        if "axiom_changes" in d:
            out["changes"]["axiom_changes"] = d["axiom_changes"]
    return out


# -- commands ----------------------------------------------------------------

@_guarded
def cmd_run(args) -> int:
    from .corpus import SuiteError, load_suite, submission
    try:
        suite = load_suite(args.path)
    except SuiteError as e:
        print(e.render(), file=sys.stderr)
        return EXIT_INPUT
    body = submission(suite, full=args.full)
    if args.time_limit:
        body["time_limit"] = args.time_limit
    client = _client(args)
    first = client.post("/api/corpus/runs", body)
    rid = first["run"]
    if not args.wait:
        if args.json:
            print(json.dumps(first))
        else:
            print(f"run {rid} of suite {suite.name}: {first['total']} obligations submitted "
                  f"({_batch_part(first)}); {first['reused']} reused, "
                  f"{first['searched']} to search")
            print(f"follow it with: nightjar status {first['batch']}")
        return EXIT_OK
    if not args.json:
        note = checks_note(first)
        print(f"run {rid} of suite {suite.name}: {first['total']} obligations"
              f"{' ' + note if note else ''}, "
              f"{first['reused']} reused, {first['searched']} to search", file=sys.stderr)
    bar = Bar() if not args.json else Bar(stream=open("/dev/null", "w"))
    delay = 0.05
    try:
        while True:
            view = client.get(f"/api/corpus/runs/{rid}")
            bar(view["summary"])
            if view["summary"]["finished"]:
                break
            time.sleep(delay)
            delay = min(delay * 1.5, 0.5)
    finally:
        bar.close()
    if args.json:
        for r in view["rows"]:
            print(json.dumps({k: r[k] for k in ("key", "file", "conjecture", "job", "verdict",
                                                "seconds", "axioms_used", "reused",
                                                "expected", "unexpected", "vacuous",
                                                "axioms_contradictory")}))
        print(json.dumps(json_summary(view)))
    else:
        print(report_text(view))
        if view.get("diff"):
            print("")
            print(diff_text(view["diff"]))
        elif view["summary"].get("previous") is None:
            print("(the first run of this suite: nothing to compare with)")
    code = exit_code(view["summary"], args.allow_removed)
    if code == EXIT_REMOVED and view.get("diff"):
        print(removed_note(view["diff"]), file=sys.stderr)
    return code


@_guarded
def cmd_diff(args) -> int:
    from .client import ApiError
    client = _client(args)
    if args.runs and len(args.runs) != 2:
        print("nightjar: corpus diff takes two runs (RUN_A RUN_B) or none", file=sys.stderr)
        return EXIT_USAGE
    query = {"threshold": args.threshold}
    if args.runs:
        query.update(a=args.runs[0], b=args.runs[1])
        if args.across_suites:
            query["across_suites"] = 1
    else:
        suite = args.suite
        if not suite:
            names = [x["suite"] for x in client.get("/api/corpus/suites")["suites"]]
            if len(names) != 1:
                print("nightjar: name the suite with --suite NAME"
                      + (f" (yours: {', '.join(names)})" if names else
                         " (no suite has been run yet)"), file=sys.stderr)
                return EXIT_USAGE
            suite = names[0]
        query["suite"] = suite
    try:
        d = client.get("/api/corpus/diff", **query)
    except ApiError as e:
        if e.code == "different_suites":
            print(f"nightjar: {suites_refusal_text(e.error, args.runs)}", file=sys.stderr)
            print("nightjar: to compare them anyway: nightjar corpus diff "
                  f"{args.runs[0]} {args.runs[1]} --across-suites", file=sys.stderr)
            return EXIT_USAGE
        if e.status == 404:
            if not args.runs:
                only = _only_run(client, query["suite"])
                if only is not None:     # a first run: nothing to compare, not a failure
                    return _nothing_to_compare(query["suite"], only, args.json)
            print(f"nightjar: {e}", file=sys.stderr)
            return EXIT_USAGE
        raise
    if args.json:
        print(json.dumps({k: v for k, v in d.items() if k not in ("summary_a", "summary_b")}))
    else:
        print(diff_text(d))
    code = diff_exit_code(d, args.allow_removed)
    if code == EXIT_REMOVED:
        print(removed_note(d), file=sys.stderr)
    return code


def suites_refusal_text(error: dict, runs) -> str:
    """The API's refusal of runs of two suites, without its hint for API
    callers (``across_suites=1``): the CLI gives its own (--across-suites)."""
    suites = error.get("suites") or {}
    if runs and suites.get("a") is not None and suites.get("b") is not None:
        from .corpus import suites_refusal
        return suites_refusal({"id": runs[0], "suite": suites["a"]},
                              {"id": runs[1], "suite": suites["b"]})
    # an answer without the suites (an older service): its message, cut before the hint
    return (error.get("message") or "runs of different suites are not compared").split(
        "; to compare them anyway")[0]


def _only_run(client, suite: str):
    """The one run of ``suite`` when it has exactly one, else None."""
    from urllib.parse import quote
    from .client import ApiError
    try:
        runs = client.get(f"/api/corpus/suites/{quote(suite, safe='')}/runs")["runs"]
    except ApiError:
        return None
    return runs[0]["run"] if len(runs) == 1 else None


def _nothing_to_compare(suite: str, run: str, as_json: bool) -> int:
    note = (f"suite {suite} has one run ({run}): nothing to compare yet; the next run of "
            f"the suite will be compared with it")
    if as_json:
        print(json.dumps({"suite": suite, "runs": 1, "b": run, "a": None, "compared": False,
                          "regression": False, "note": note}))
    else:
        print(note)
    return EXIT_OK


@_guarded
def cmd_runs(args) -> int:
    client = _client(args)
    suites = [x["suite"] for x in client.get("/api/corpus/suites")["suites"]]
    if args.suite:
        suites = [args.suite]
    out = []
    for name in suites:
        out.extend(dict(r, suite=name) for r in client.get(f"/api/corpus/suites/{name}/runs")["runs"])
    # newest first across every suite (ties: the run id, for a stable order)
    out.sort(key=lambda r: (r["created"], r["run"]), reverse=True)
    if args.json:
        print(json.dumps({"runs": out}))
        return EXIT_OK
    if not out:
        print("no runs yet" + (f" of suite {args.suite}" if args.suite else ""))
        return EXIT_OK
    for r in out:
        when = time.strftime("%Y-%m-%d %H:%M:%S", time.localtime(r["created"]))
        # the manifest as named where the run was started (runs before that
        # was stored: its file name only)
        where = r.get("manifest_path") or r.get("manifest") or ""
        print(f"{r['run']}  {when}  {r['suite']:<20} {r['obligations']:>5} obligations, "
              f"{r['reused']:>5} reused  {'(full) ' if r['full'] else ''}{where}")
    return EXIT_OK


def register(sub) -> None:
    p = sub.add_parser("corpus", help="run a suite of problems and compare its runs",
                       description="Suites of problems with a manifest (suite.toml): run "
                       "them through the service, reuse what an axiom change left "
                       "standing, and compare runs.")
    csub = p.add_subparsers(dest="corpus_cmd", metavar="ACTION", required=True)

    r = csub.add_parser("run", help="submit a suite as one run",
                        description="Load the suite (a folder with suite.toml, or a manifest "
                        "file), report every problem in it at once, submit it as one run. "
                        "Verdicts of the last run that still stand are reused: a proof "
                        "whose axioms are unchanged and which the proof checker accepts "
                        "again, a countermodel that still satisfies every axiom.")
    r.add_argument("path", metavar="DIR", help="suite folder or manifest file")
    r.add_argument("--wait", action="store_true",
                   help="follow the run to its end and print the report")
    r.add_argument("--full", action="store_true", help="search everything again (no reuse)")
    r.add_argument("--json", action="store_true",
                   help="JSON: with --wait, one line per obligation, then a summary line")
    r.add_argument("--allow-removed", action="store_true",
                   help="with --wait: obligations settled in the last run but gone from the "
                   "suite do not fail the run (default: exit 6)")
    r.add_argument("--time-limit", type=float, metavar="SECONDS",
                   help="seconds per obligation (default: the manifest's time_limit)")
    r.add_argument("--server", metavar="URL", help="service address (default: NIGHTJAR_SERVER, "
                   "else the home's embedded service)")
    r.set_defaults(func=cmd_run)

    d = csub.add_parser("diff", help="compare two runs of a suite",
                        description="Each obligation once: on contradictory axioms, flipped "
                        "(Theorem <-> CounterSatisfiable, the new verdict not the one the "
                        "manifest expects), lost (definite -> none), gained (none, or the "
                        "opposite definite verdict, -> the verdict the manifest expects; a "
                        "definite verdict that changed is listed as FIXED), answered (none "
                        "-> definite, no expectation), added, removed; also unexpected "
                        "(against the manifest), time changes and changes in the axioms "
                        "used. Default: the last two runs of the suite. Exit 5 when "
                        "anything is on contradictory axioms, lost, flipped or unexpected; "
                        "else 6 when an obligation settled in the first run was removed; "
                        "else 0 (also when the suite has only one run: nothing to compare "
                        "yet).")
    d.add_argument("runs", nargs="*", metavar="RUN", help="RUN_A RUN_B (both, or neither)")
    d.add_argument("--suite", metavar="NAME", help="compare this suite's last two runs")
    d.add_argument("--json", action="store_true", help="one JSON object")
    d.add_argument("--threshold", type=float, default=1.0, metavar="SECONDS",
                   help="report time changes of at least this many seconds (default 1)")
    d.add_argument("--across-suites", action="store_true",
                   help="compare RUN_A and RUN_B even when they are runs of different suites "
                   "(refused otherwise, exit 2)")
    d.add_argument("--allow-removed", action="store_true",
                   help="obligations settled in RUN_A but removed from the suite do not fail "
                   "the gate (default: exit 6)")
    d.add_argument("--server", metavar="URL", help="service address")
    d.set_defaults(func=cmd_diff)

    s = csub.add_parser("runs", help="list the runs of your suites, newest first",
                        description="Every run of your suites in one list, newest first "
                        "(suites mixed; the suite is a column). --suite: one suite's runs.")
    s.add_argument("--suite", metavar="NAME", help="only this suite")
    s.add_argument("--json", action="store_true", help="one JSON object")
    s.add_argument("--server", metavar="URL", help="service address")
    s.set_defaults(func=cmd_runs)
