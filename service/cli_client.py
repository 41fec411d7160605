"""Service commands of ``nightjar``: serve, worker, token, submit, status,
proof, cancel, demo.

The client commands find the service by themselves: ``--server URL`` (or
``NIGHTJAR_SERVER``) and ``NIGHTJAR_TOKEN`` when given, else the address and
token the embedded service wrote into the home folder (``NIGHTJAR_HOME``,
default ``~/.nightjar``).  When nothing answers they say so in one line with
the command that starts a service, and exit 4; the service's rate limit is
waited out by the client (``client.Client.request``), and a refusal that
outlasts its patience is also one line and exit 4, never a usage error.
"""

from __future__ import annotations

import json
import os
import sys
import time
from pathlib import Path

from .config import Config, home_dir

# service.store's STATES, spelt out so the command line starts without redis
JOB_STATES = ("queued", "running", "done", "failed", "cancelled")

EXIT_OK, EXIT_INPUT, EXIT_USAGE, EXIT_UNDECIDED, EXIT_NO_SERVICE = 0, 1, 2, 3, 4

DEFINITE = {"Theorem", "ContradictoryAxioms", "CounterSatisfiable", "Unsatisfiable",
            "Satisfiable"}
MODEL_VERDICTS = {"CounterSatisfiable", "Satisfiable"}     # worker.verdict.REFUTED
REPO = Path(__file__).resolve().parent.parent
DEMO_SUITE = REPO / "corpus" / "demo" / "suite.toml"


def _client(args):
    from .client import Client
    return Client.find(server=getattr(args, "server", None))


def _no_service(e) -> int:
    print(f"nightjar: {e}", file=sys.stderr)
    return EXIT_NO_SERVICE


# the submission fields the command line sets from an option
OPTION_OF_FIELD = {"time_limit": "--time-limit", "strategy": "--strategy",
                   "label": "--label", "queue": "--queue"}


def option_refused(e) -> str | None:
    """The message of the API's refusal of an option's value (its error
    names the submission ``field``): a usage error, exit 2, naming the
    option.  None for any other refusal."""
    field = e.error.get("field")
    if e.status != 400 or not field:
        return None
    return f"nightjar: {OPTION_OF_FIELD.get(field, field)}: {e}"


def _api_error(e) -> int:
    err = e.error
    if err.get("code") == "input_error":
        print(err.get("text") or err.get("message"), file=sys.stderr)
        return EXIT_INPUT
    refused = option_refused(e)
    if refused:
        print(refused, file=sys.stderr)
        return EXIT_USAGE
    print(f"nightjar: {e}", file=sys.stderr)
    if e.status in (429, 503):          # the service refuses for now: not the user's fault
        return EXIT_NO_SERVICE
    return EXIT_INPUT if e.status in (400, 413) else (EXIT_USAGE if e.status != 404 else 1)


def _guarded(fn):
    """Map ServiceUnavailable / ApiError to their one-line messages."""
    def run(args):
        from .client import ApiError, ServiceUnavailable
        try:
            return fn(args)
        except ServiceUnavailable as e:
            return _no_service(e)
        except ApiError as e:
            return _api_error(e)
    return run


# -- serve / worker / token ------------------------------------------------

def cmd_serve(args) -> int:
    from .embedded import serve
    cfg = Config.from_env()
    return serve(config=cfg, redis_url=args.redis or os.environ.get("NIGHTJAR_REDIS_URL"),
                 host=args.host, port=args.port, workers=args.workers, quiet=args.quiet)


def cmd_worker(args) -> int:
    from .queue import run_worker
    url = args.redis or os.environ.get("NIGHTJAR_REDIS_URL")
    if not url:
        from .embedded import read_server
        info = read_server(home_dir())
        url = info and info.get("redis_url")
    if not url:
        print("nightjar: no Redis to work for: give --redis URL or set NIGHTJAR_REDIS_URL "
              "(or start the embedded service with: nightjar serve)", file=sys.stderr)
        return EXIT_NO_SERVICE
    import faulthandler
    import logging
    import signal
    faulthandler.register(signal.SIGUSR1)     # kill -USR1 <pid>: print every stack
    logging.basicConfig(level=logging.WARNING, format="%(asctime)s %(name)s: %(message)s")
    return run_worker(url, Config.from_env(), burst=args.burst)


class _TokenStore:
    """A Store for the token commands: the given Redis, the running embedded
    one, or the home's Redis data started for the moment."""

    def __init__(self, url):
        self.url, self.rp = url, None

    def __enter__(self):
        import redis

        from .embedded import RedisProcess, running_service
        from .queue import connect
        from .store import Store
        url = self.url or os.environ.get("NIGHTJAR_REDIS_URL")
        if not url:
            info = running_service(home_dir())
            url = info and info.get("redis_url")
        if not url:
            home = home_dir()
            (home / "logs").mkdir(parents=True, exist_ok=True)
            self.rp = RedisProcess(home / "redis", log=home / "logs" / "redis-token.log").start()
            url = self.rp.url
        r = connect(url)
        try:
            r.ping()
        except redis.RedisError as e:
            from .client import ServiceUnavailable
            raise ServiceUnavailable(url, str(e))
        return Store(r)

    def __exit__(self, *exc):
        if self.rp:
            self.rp.stop()


@_guarded
def cmd_token(args) -> int:
    with _TokenStore(args.redis) as store:
        if args.token_cmd == "add":
            tok = store.add_token(args.name, owner=args.owner)
            if args.json:
                print(json.dumps({"name": args.name, "owner": args.owner or args.name,
                                  "token": tok}))
            else:
                print(tok)
                print(f"nightjar: token for {args.name!r} (shown once; send it as "
                      f"NIGHTJAR_TOKEN or 'Authorization: Bearer ...')", file=sys.stderr)
        elif args.token_cmd == "list":
            rows = store.list_tokens()
            if args.json:
                print(json.dumps(rows))
            else:
                for t in rows:
                    when = time.strftime("%Y-%m-%d %H:%M", time.localtime(t["created"]))
                    print(f"{t['name']:<20} owner {t['owner']:<20} created {when}")
        elif args.token_cmd == "revoke":
            if not store.revoke_token(args.name):
                print(f"nightjar: no token named {args.name!r}", file=sys.stderr)
                return 1
            print(f"revoked {args.name}")
    return EXIT_OK


# -- showing jobs ------------------------------------------------------------

def job_line(j: dict) -> dict:
    """The JSON-lines form of a job (``--wait --json``).  ``seconds`` is the
    record's: the search that gave the verdict, for a reused job (``reused_from``
    set) the original job's."""
    return {"id": j["id"], "batch": j.get("batch"), "file": j["file"],
            "conjecture": j["conjecture"],
            "status": j.get("verdict") or j["state"], "state": j["state"],
            "seconds": j.get("seconds"), "strategy": j.get("strategy"),
            "attempts": j.get("attempts"), "reason": j.get("reason") or None,
            "reused_from": j.get("reused_from")}


def own_seconds(j: dict) -> str:
    """A job's seconds as the tables show them: its own search; a reused job
    searched nothing ("reused"; its record's seconds are the original's)."""
    if j.get("reused_from"):
        return "reused"
    return "" if j.get("seconds") is None else f"{j['seconds']:.2f}"


def verdicts_text(b: dict) -> str:
    """A batch's verdict counts in words; with none, why."""
    vd = ", ".join(f"{k} {v}" for k, v in sorted(b["verdicts"].items()))
    if vd:
        return vd
    if not b["finished"]:
        return "none yet"
    cancelled = b["states"].get("cancelled", 0)
    if cancelled == b["total"]:
        return "none: the batch was cancelled"
    return "none" + (f" ({cancelled} cancelled)" if cancelled else "")


def verdict_table(jobs: list[dict], expected: dict | None = None) -> str:
    """Aligned columns: file, conjecture, verdict, seconds (+ expected)."""
    head = ["file", "conjecture", "verdict", "seconds", "job"]
    if expected is not None:
        head.insert(3, "expected")
    rows = []
    for j in jobs:
        v = j.get("verdict") or j["state"]
        row = [j["file"], j["conjecture"] or "-", v, own_seconds(j), j["id"]]
        if expected is not None:
            want = expected.get((j["file"], j["conjecture"]))
            row.insert(3, "" if want is None else ("as expected" if want == v
                                                    else f"expected {want}"))
        rows.append(row)
    width = [max(len(str(x)) for x in col) for col in zip(head, *rows)]
    right = {head.index("seconds")}
    out = []
    for r in [head] + rows:
        cells = [str(c).rjust(w) if i in right else str(c).ljust(w)
                 for i, (c, w) in enumerate(zip(r, width))]
        out.append("  ".join(cells).rstrip())
    out.insert(1, "  ".join("-" * w for w in width))
    return "\n".join(out)


class Progress:
    """A live bar on a terminal; plain lines (when something changed, at most
    every two seconds) otherwise."""

    def __init__(self, stream=None):
        self.stream = stream or sys.stderr
        self.tty = self.stream.isatty()
        self.last = None
        self.last_t = 0.0
        self.t0 = time.monotonic()

    def __call__(self, b: dict) -> None:
        st = b["states"]
        total, done = b["total"], b["settled"]
        verdicts = "  ".join(f"{k} {v}" for k, v in sorted(b["verdicts"].items()))
        el = time.monotonic() - self.t0
        if self.tty:
            w = 30
            fill = int(w * done / total) if total else w
            bar = "#" * fill + "." * (w - fill)
            line = (f"\r[{bar}] {done}/{total} settled, {st['running']} running, "
                    f"{el:5.1f}s  {verdicts}")
            self.stream.write(line[:200] + "\x1b[K")
            if b["finished"]:
                self.stream.write("\n")
            self.stream.flush()
            return
        key = (done, st["running"])
        now = time.monotonic()
        if key != self.last and (now - self.last_t >= 2.0 or b["finished"]):
            self.stream.write(f"progress: {done}/{total} settled, {st['running']} "
                              f"running, {el:.1f}s\n")
            self.stream.flush()
            self.last, self.last_t = key, now


def _settle_exit(jobs) -> int:
    return EXIT_OK if all(j.get("verdict") in DEFINITE for j in jobs) else EXIT_UNDECIDED


def _show_settled(client, bid, as_json, expected=None, warnings=None) -> int:
    jobs = list(client.jobs(bid))
    if as_json:
        for j in jobs:
            line = job_line(j) if warnings is None else dict(job_line(j), warnings=warnings(j))
            print(json.dumps(line))
    else:
        print(verdict_table(jobs, expected))
        b = client.batch(bid)
        summary = (", ".join(f"{v} {k}" for k, v in sorted(b["verdicts"].items()))
                   or verdicts_text(b))
        print(f"\n{len(jobs)} job{'s' if len(jobs) != 1 else ''} in batch {bid}: {summary}")
        if expected is not None:
            hits = sum(1 for j in jobs
                       if expected.get((j["file"], j["conjecture"])) == j.get("verdict"))
            print(f"{hits} of {len(jobs)} as expected")
    return _settle_exit(jobs)


def _submit_refused(args, file, text) -> int:
    """Bad input to submit: the message on stderr, and with --json the
    object ``prove --json`` prints for a file it cannot read."""
    from .cli_prove import input_error_record
    print(text, file=sys.stderr)
    if args.json:
        if file is None and len(args.files) == 1 and not args.axioms:
            file = args.files[0]
        print(json.dumps(input_error_record(file, text)))
    return EXIT_INPUT


@_guarded
def cmd_submit(args) -> int:
    import math

    from worker.syntax.errors import InputError

    from .cli import input_error_text
    from .cli_prove import time_limit_error
    from .client import ApiError
    why = time_limit_error(args.time_limit)       # the bound prove and the API use
    if why is None and args.time_limit is not None and not math.isfinite(args.time_limit):
        why = f"--time-limit must be a finite number of seconds, not {args.time_limit:g}"
    if why:
        print(f"nightjar: {why}", file=sys.stderr)
        return EXIT_USAGE
    client = _client(args)
    try:
        sub = client.submit_files(args.files, axioms=args.axioms,
                                  time_limit=args.time_limit, label=args.label,
                                  strategy=args.strategy, reuse=args.reuse,
                                  language=args.language, include_root=args.include_root)
    except InputError as e:                              # found on this side
        return _submit_refused(args, e.span.file if e.span else None, input_error_text(e))
    except ApiError as e:                                # found by the service
        refused = option_refused(e)
        if refused:                                      # an option's value: usage
            print(refused, file=sys.stderr)
            return EXIT_USAGE
        if e.code != "input_error" and e.status not in (400, 413):
            raise
        text = (e.error.get("text") or e.error.get("message") if e.code == "input_error"
                else f"nightjar: {e}")
        return _submit_refused(args, e.error.get("file"), text)
    from .cli_check import submission_report, submission_warnings
    warned, job_warnings = submission_report(submission_warnings(
        args.files, args.axioms, language=args.language, include_root=args.include_root))
    if not args.json:                   # warnings of the files as read here
        for w in warned:
            print(w.render(), file=sys.stderr)
    bid = sub["batch"]
    if not args.wait:
        if args.json:
            print(json.dumps(dict(sub, warnings=[w.to_json() for w in warned])))
        else:
            print(f"batch {bid}: {len(sub['jobs'])} job{'s' if len(sub['jobs']) != 1 else ''}")
            for j in sub["jobs"]:
                print(f"  {j['id']}  {j['file']}  {j['conjecture'] or '-'}  {j['state']}")
        return EXIT_OK
    client.wait(bid, None if args.json else Progress())
    return _show_settled(client, bid, args.json, warnings=job_warnings)


def _is_batch(ident: str) -> bool:
    return ident.startswith("b")


STATUS_ROWS = 50      # rows of a batch's job table without --all


def _status_jobs(client, b, args) -> tuple[list, int]:
    """The jobs ``status BATCH`` lists (all of them once the batch has
    finished or with --all, else the first STATUS_ROWS; only --state's),
    and how many jobs match."""
    bid, state = b["id"], getattr(args, "state", None)
    if b["finished"] or getattr(args, "all", False):
        jobs = list(client.jobs(bid, state=state))
        return jobs, len(jobs)
    page = client.batch_jobs(bid, state=state, limit=STATUS_ROWS)
    return page["jobs"], page["total"]


def _status_table(client, b, args) -> None:
    """The batch's jobs (see _status_jobs) with a line on how to see the rest."""
    bid, state = b["id"], getattr(args, "state", None)
    jobs, total = _status_jobs(client, b, args)
    print()
    if not jobs:
        print(f"no {state} jobs" if state else "no jobs")
        return
    print(verdict_table(jobs))
    if total > len(jobs):
        more = total - len(jobs)
        hint = "" if state or not b["states"].get("running") else \
            f", or only the running ones: nightjar status {bid} --state running"
        print(f"... {more} more job{'s' if more != 1 else ''}; all of them: "
              f"nightjar status {bid} --all{hint}")


@_guarded
def cmd_status(args) -> int:
    client = _client(args)
    if _is_batch(args.id):
        b = client.batch(args.id)
        if args.json:
            jobs, total = _status_jobs(client, b, args)
            print(json.dumps(dict(b, jobs=jobs, jobs_matching=total)))
            return EXIT_OK
        st = ", ".join(f"{k} {v}" for k, v in b["states"].items() if v)
        vd = verdicts_text(b)
        label = f" ({b['label']})" if b.get("label") else ""
        print(f"batch {b['id']}{label}: {b['settled']}/{b['total']} settled "
              f"({b['progress'] * 100:.0f}%)")
        print(f"  states:   {st}")
        print(f"  verdicts: {vd}")
        _status_table(client, b, args)
        return EXIT_OK
    j = client.job(args.id)
    if args.json:
        print(json.dumps(j))
        return EXIT_OK
    secs = "-" if j.get("seconds") is None else f"{j['seconds']:.3f}"
    rows = [("job", j["id"]), ("batch", j["batch"]), ("file", j["file"]),
            ("conjecture", j["conjecture"] or "-"), ("state", j["state"]),
            ("verdict", j.get("verdict") or "-")]
    if j.get("reused_from"):
        # its record's seconds are the original search's: say so, apart
        rows += [("reused from", f"{j['reused_from']} (its search took {secs} s)"),
                 ("seconds", "- (no search in this job)")]
    else:
        rows.append(("seconds", secs))
    rows += [("strategy", j.get("strategy") or "-"), ("attempts", j.get("attempts")),
             ("worker", j.get("worker") or "-"), ("time limit", f"{j['time_limit']:g}s")]
    if j.get("certificate"):
        from .cli_prove import certificate_text
        rows.append(("certificate", certificate_text(j["certificate"])))
    if j.get("reason"):
        rows.append(("reason", j["reason"]))
    for k in ("submitted", "started", "finished"):
        if j.get(k):
            rows.append((k, time.strftime("%Y-%m-%d %H:%M:%S", time.localtime(j[k]))))
    w = max(len(k) for k, _ in rows)
    for k, v in rows:
        print(f"{k:<{w}}  {v}")
    return EXIT_OK


def _proof_or_model(client, jid, verdict=None):
    """What the API holds for one job: ("proof", proof answer), ("model",
    model answer), or ("none", proof answer with a "reason" when the API
    said why there is no model).  With the job's ``verdict`` known, the
    answer it has is asked for first (a model for CounterSatisfiable and
    Satisfiable), so that a job costs one request, not two."""
    from .client import ApiError
    if verdict in MODEL_VERDICTS:
        try:
            m = client.model(jid)
        except ApiError as e:
            if e.code != "no_model":
                raise
            # settled without a model (saturation): nothing to show, say why
            return "none", dict(client.proof(jid), reason=str(e))
        if m.get("model"):
            return "model", m
    p = client.proof(jid)
    if p.get("proof") or verdict in MODEL_VERDICTS:
        return ("proof" if p.get("proof") else "none"), p
    try:
        m = client.model(jid)
    except ApiError as e:
        if e.code != "no_model":
            raise
        return "none", dict(p, reason=str(e))
    if m.get("model"):
        return "model", m
    return "none", p


def _print_proof(kind, answer, cert=None):
    if kind == "proof":
        print(answer["text"] or json.dumps(answer["proof"], indent=1))
    else:
        from .cli_prove import model_word
        print(f"# no proof: the verdict is {answer['verdict']}; a "
              f"{model_word(answer['verdict'])}:")
        print(answer["text"] or json.dumps(answer["model"], indent=1))
    if cert:
        from .cli_prove import certificate_text
        print(f"  certificate: {certificate_text(cert)}")


def _batch_proofs(client, bid, as_json) -> int:
    """Every job's proof or model, in submission order, the jobs paged
    through the API."""
    from .cli_prove import obligation_text
    code, first = EXIT_OK, True
    for j in client.jobs(bid):
        kind, answer = _proof_or_model(client, j["id"], j.get("verdict"))
        if kind == "none":
            code = EXIT_UNDECIDED
        if as_json:
            print(json.dumps(dict(answer, file=j["file"], conjecture=j["conjecture"])),
                  flush=True)
            continue
        what = answer.get("verdict") or answer.get("state") or j["state"]
        if not first:
            print()
        first = False
        print(f"=== {j['file']}  {obligation_text(j['conjecture'])}  {what}  "
              f"(job {j['id']})")
        if kind == "none":
            print(f"no proof or model ({what})")
        else:
            _print_proof(kind, answer, j.get("certificate"))
    return code


@_guarded
def cmd_proof(args) -> int:
    client = _client(args)
    if _is_batch(args.id):
        return _batch_proofs(client, args.id, args.json)
    kind, answer = _proof_or_model(client, args.id)
    if kind != "none":
        j = client.job(args.id)
        if args.json:
            print(json.dumps(dict(answer, certificate=j.get("certificate"))))
        else:
            from .cli_prove import obligation_text
            print(f"# {j['file']}: {obligation_text(j['conjecture'])}: "
                  f"{j.get('verdict') or j['state']} (job {j['id']})")
            _print_proof(kind, answer, j.get("certificate"))
        return EXIT_OK
    if args.json:
        print(json.dumps(answer))
    elif answer.get("reason"):
        print(f"nightjar: {answer['reason']}", file=sys.stderr)
    else:
        what = answer["verdict"] or answer["state"]
        print(f"nightjar: job {args.id} has no proof or model ({what})", file=sys.stderr)
    return EXIT_UNDECIDED


@_guarded
def cmd_cancel(args) -> int:
    client = _client(args)
    if _is_batch(args.id):
        r = client.cancel_batch(args.id)
        if args.json:
            print(json.dumps(r))
        else:
            print(f"batch {args.id}: {r['cancelled']} cancelled, "
                  f"{r['already_settled']} already settled")
        return EXIT_OK
    r = client.cancel_job(args.id)
    if args.json:
        print(json.dumps(r))
    elif r["cancelled"]:
        print(f"job {args.id}: cancelled (it was {r['was']})")
    else:
        print(f"job {args.id}: already {r['state']}, nothing to cancel")
    return EXIT_OK


# -- demo ----------------------------------------------------------------------

def demo_submission(suite: Path = DEMO_SUITE):
    """(submission body, time limit, expectations {(file, conjecture): status})
    for the demo suite's manifest (format: DEVELOPERS.md, "Suites")."""
    import tomllib

    from .client import submission_body
    man = tomllib.loads(suite.read_text())
    root = suite.parent

    def expand(globs):
        seen = []
        for g in globs:
            for p in sorted(root.glob(g)):
                if p.is_file() and p not in seen:
                    seen.append(p)
        return seen

    axioms = expand(man["suite"].get("axioms", []))
    problems = [p for p in expand(man["suite"]["problems"]) if p not in axioms]
    body = submission_body([str(p) for p in problems],
                           axioms=[str(a) for a in axioms] or None, root=str(root))
    exp = {}
    for key, status in (man.get("expectations") or {}).items():
        f, _, c = key.partition("#")
        exp[(f, c or None)] = status
    return body, float(man["suite"].get("time_limit", 10)), exp


def cmd_demo(args) -> int:
    from .client import ApiError, Client, ServiceUnavailable
    from .embedded import read_token, running_service, start_in_background, stop_background

    home = home_dir()
    if not DEMO_SUITE.exists():
        print(f"nightjar: the demo problems are missing ({DEMO_SUITE})", file=sys.stderr)
        return EXIT_USAGE
    started = None
    client = None
    info = running_service(home)
    if info:
        try:
            client = Client(info["url"], read_token(home))
            client.health()
            print(f"nightjar: using the service running at {info['url']}", file=sys.stderr)
        except ServiceUnavailable:
            client = None
    try:
        if client is None:
            print(f"nightjar: starting the embedded service (home {home}) ...",
                  file=sys.stderr, flush=True)
            started = start_in_background(home)
            info = running_service(home)
            client = Client(info["url"], read_token(home))
            print(f"nightjar: service at {info['url']}", file=sys.stderr)
        body, limit, expected = demo_submission()
        body.update(time_limit=args.time_limit or limit, label="demo")
        sub = client.submit(body)
        n = len(sub["jobs"])
        print(f"nightjar: {n} conjectures of the Greywater demo submitted "
              f"(batch {sub['batch']})", file=sys.stderr)
        client.wait(sub["batch"], None if args.json else Progress())
        code = _show_settled(client, sub["batch"], args.json, expected)
        if not args.json:
            env = "" if "NIGHTJAR_HOME" not in os.environ else f"NIGHTJAR_HOME={home} "
            if started is not None and not args.keep:
                print("\nthe demo stops the service it started; to read the jobs "
                      "afterwards, run it with --keep\n(python3 bootstrap.py demo --keep), then:  "
                      f"{env}.venv/bin/nightjar status <job>   and   "
                      f"{env}.venv/bin/nightjar proof <job>")
            else:
                print(f"\nsee one job:  {env}nightjar status <job>   "
                      f"its proof:  {env}nightjar proof <job>")
        return code
    except ServiceUnavailable as e:
        return _no_service(e)
    except ApiError as e:
        return _api_error(e)
    except RuntimeError as e:
        print(f"nightjar: {e}", file=sys.stderr)
        return EXIT_NO_SERVICE
    finally:
        if started is not None:
            if args.keep:
                print(f"nightjar: the service keeps running (pid {started.pid}); "
                      f"stop it with: kill {started.pid}", file=sys.stderr)
            else:
                print("nightjar: stopping the service it started", file=sys.stderr)
                stop_background(started)


# -- wiring ------------------------------------------------------------------

def _client_opts(p):
    p.add_argument("--server", metavar="URL",
                   help="service address (default: NIGHTJAR_SERVER, else the home's "
                        "embedded service); the token comes from NIGHTJAR_TOKEN or the home")
    p.add_argument("--json", action="store_true", help="print JSON")


def register(sub) -> None:
    p = sub.add_parser("serve", help="run the service (bundled Redis, API, workers)",
                       description="Run the batch service. Without --redis (or "
                       "NIGHTJAR_REDIS_URL) it starts the Redis server bundled with "
                       "Nightjar, keeping its data in NIGHTJAR_HOME (default ~/.nightjar).")
    p.add_argument("--redis", metavar="URL", help="use this Redis instead of the bundled one")
    p.add_argument("--host", default="127.0.0.1", help="address to listen on (127.0.0.1)")
    p.add_argument("--port", type=int, default=0, help="port (default: any free one)")
    p.add_argument("--workers", type=int, default=None, help="worker processes (default: cores)")
    p.add_argument("--quiet", action="store_true", help=argparse_suppress())
    p.set_defaults(func=cmd_serve)

    p = sub.add_parser("worker", help="run one worker against a Redis",
                       description="Work off the job queues of the Redis at --redis "
                       "(or NIGHTJAR_REDIS_URL): interactive jobs before batch jobs.")
    p.add_argument("--redis", metavar="URL")
    p.add_argument("--burst", action="store_true", help="stop when the queues are empty")
    p.set_defaults(func=cmd_worker)

    p = sub.add_parser("token", help="add, list or revoke access tokens")
    tsub = p.add_subparsers(dest="token_cmd", metavar="ACTION", required=True)
    for name, helptext in (("add", "make a token (printed once)"), ("list", "list tokens"),
                           ("revoke", "revoke a token")):
        tp = tsub.add_parser(name, help=helptext)
        if name != "list":
            tp.add_argument("name", metavar="NAME")
        if name == "add":
            tp.add_argument("--owner", help="owner of its jobs (default: NAME)")
        tp.add_argument("--redis", metavar="URL")
        tp.add_argument("--json", action="store_true")
        tp.set_defaults(func=cmd_token, owner=None)

    p = sub.add_parser("submit", help="submit problem files to the service")
    p.add_argument("files", nargs="+", metavar="FILE")
    p.add_argument("--axioms", action="append", metavar="FILE",
                   help="axiom file every FILE is read with (may be repeated)")
    p.add_argument("--time-limit", type=float, metavar="S",
                   help="seconds per obligation (at least 0.01, at most the service's limit)")
    p.add_argument("--label", metavar="L")
    p.add_argument("--strategy", metavar="NAME")
    p.add_argument("--reuse", action="store_true",
                   help="answer from a stored verdict of the same problem and settings")
    p.add_argument("--language", choices=("native", "tptp"),
                   help="read every file in this language (default: told apart from the text)")
    p.add_argument("--include-root", metavar="DIR",
                   help="second place to look for included files (what is found there "
                        "is sent along)")
    p.add_argument("--wait", action="store_true", help="wait, show progress, print verdicts")
    _client_opts(p)
    p.set_defaults(func=cmd_submit)

    for name, fn, helptext in (("status", cmd_status, "show a job or a batch"),
                               ("proof", cmd_proof, "show the proof (or the model or "
                                         "countermodel) of a job, or of every job of a batch"),
                               ("cancel", cmd_cancel, "cancel a job or a whole batch")):
        p = sub.add_parser(name, help=helptext)
        p.add_argument("id", metavar="ID", help="a job id (j...) or a batch id (b...)")
        if name == "status":
            p.add_argument("--all", action="store_true",
                           help=f"a batch: every job, not only the first {STATUS_ROWS} "
                                f"while it runs")
            p.add_argument("--state", choices=JOB_STATES,
                           help="a batch: only the jobs in this state")
        _client_opts(p)
        p.set_defaults(func=fn)

    p = sub.add_parser("demo", help="run the demo batch on the embedded service",
                       description="Start the embedded service if none runs for this home, "
                       "submit the demo problems (corpus/demo), show progress and the "
                       "verdicts, then stop the service it started (unless --keep).")
    p.add_argument("--keep", action="store_true", help="leave the service running")
    p.add_argument("--time-limit", type=float, metavar="S")
    p.add_argument("--json", action="store_true")
    p.set_defaults(func=cmd_demo)


def argparse_suppress():
    import argparse
    return argparse.SUPPRESS
