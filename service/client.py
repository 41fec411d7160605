"""An HTTP client of the JSON API (standard library only).

    c = Client.find()                      # the home's service and token
    c = Client("http://host:port", token)  # or an explicit one
    sub = c.submit_files(["a.nj"], time_limit=5)
    batch = c.wait(sub["batch"])
    for job in c.jobs(sub["batch"]): ...

Includes are resolved here, on the user's side: each file is sent with every
file it includes (``worker.syntax.collect_bundle``).  Every failure to reach
the service raises :class:`ServiceUnavailable`; an error answer raises
:class:`ApiError` with the server's JSON error.

A 429 (the service's rate limit per token) is waited out and the request
sent again, after as long as its ``Retry-After`` asks (the error's finer
``retry_after`` when it has one), at least ``RATE_WAIT_FLOOR``.  A wait
asked of more than ``RATE_WAIT_CAP`` seconds, or one that would take a
request's waiting past ``RATE_WAIT_TOTAL`` seconds, is not waited: the
request raises :class:`RateLimited` (a :class:`ServiceUnavailable`: the
service is there but will not answer for now).  Waiting is told on stderr
once, when this client's waits come to ``RATE_WAIT_NOTICE`` seconds.
"""

from __future__ import annotations

import json
import math
import os
import posixpath
import sys
import time
import urllib.error
import urllib.parse
import urllib.request
from pathlib import Path

from .config import home_dir

START_HINT = "start one with: nightjar serve"

RATE_WAIT_FLOOR = 0.05     # s: the shortest wait before sending a refused request again
RATE_WAIT_CAP = 30.0       # s: a longer wait asked for is not waited (RateLimited)
RATE_WAIT_TOTAL = 120.0    # s: the most one request waits in all before giving up
RATE_WAIT_NOTICE = 5.0     # s: a client that has waited this long in all says so (once)


class ServiceUnavailable(Exception):
    """Nothing answers at the service's address."""

    def __init__(self, url: str | None, why: str = ""):
        self.url = url
        where = f" at {url}" if url else ""
        super().__init__(f"no Nightjar service answers{where}"
                         + (f" ({why})" if why else "") + f"; {START_HINT}")


class ApiError(Exception):
    def __init__(self, status: int, error: dict, retry_after: float | None = None):
        self.status = status
        self.error = error or {}
        self.retry_after = retry_after      # seconds, from a 429's Retry-After
        super().__init__(self.error.get("text") or self.error.get("message")
                         or f"HTTP {status}")

    @property
    def code(self) -> str:
        return self.error.get("code", "")


class RateLimited(ServiceUnavailable):
    """The service's rate limit still refused a request after the client had
    waited as long as it will (``RATE_WAIT_TOTAL``): a temporary failure,
    not a fault of the request.  ``status`` (429) and ``error`` as ApiError's."""

    def __init__(self, url: str | None, error: dict, waited: float):
        self.url, self.status, self.error, self.waited = url, 429, error or {}, waited
        message = self.error.get("message") or "too many requests for this token"
        waits = (f"after waiting {waited:.1f} s for it" if waited > 0
                 else "a longer wait than the client makes")
        Exception.__init__(self, f"{message} (the service's rate limit, {waits}; "
                                 f"giving up)")

    @property
    def code(self) -> str:
        return self.error.get("code", "rate_limited")


def retry_after_seconds(header: str | None, error: dict | None = None) -> float | None:
    """How long a 429 asks to wait: the error's ``retry_after`` (seconds,
    finer than the header) when it is a number, else the ``Retry-After``
    header (seconds, or an HTTP date); None when neither says."""
    v = (error or {}).get("retry_after")
    if isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v):
        return max(0.0, float(v))
    if not header:
        return None
    header = header.strip()
    try:
        return max(0.0, float(header))
    except ValueError:
        pass
    from email.utils import parsedate_to_datetime
    try:
        when = parsedate_to_datetime(header)
    except (TypeError, ValueError, IndexError):
        return None
    if when is None:
        return None
    return max(0.0, when.timestamp() - time.time())


def _tell_stderr(text: str) -> None:
    print(text, file=sys.stderr, flush=True)


class Client:
    def __init__(self, url: str, token: str | None = None, timeout: float = 60.0, *,
                 rate_wait_total: float = RATE_WAIT_TOTAL, notice=_tell_stderr):
        self.url = url.rstrip("/")
        self.token = token
        self.timeout = timeout
        self.rate_wait_total = rate_wait_total   # see RATE_WAIT_TOTAL
        self.notice = notice                     # told once, when waiting gets long
        self.rate_waited = 0.0                   # seconds this client slept on 429s
        self.rate_refusals = 0                   # 429s it waited out
        self._noticed = False

    # -- finding the service ---------------------------------------------
    @classmethod
    def find(cls, server: str | None = None, token: str | None = None,
             home: Path | None = None) -> "Client":
        """``server`` / ``token`` if given, else ``NIGHTJAR_SERVER`` /
        ``NIGHTJAR_TOKEN``, else the home's server.json and token file."""
        from .embedded import read_server, read_token
        home = Path(home) if home else home_dir()
        url = server or os.environ.get("NIGHTJAR_SERVER")
        if not url:
            info = read_server(home)
            if not info:
                raise ServiceUnavailable(None, f"no service recorded in {home}")
            url = info["url"]
        tok = token or os.environ.get("NIGHTJAR_TOKEN") or read_token(home)
        return cls(url, tok)

    # -- plumbing ----------------------------------------------------------
    def request(self, method: str, path: str, body=None, query: dict | None = None):
        """One API call; a 429 is waited out and sent again (module
        docstring).  Every request the API refuses with 429 was refused
        before anything was done, so sending it again is safe."""
        waited = 0.0
        while True:
            try:
                return self.exchange(method, path, body, query)
            except ApiError as e:
                if e.status != 429:
                    raise
                wait = max(e.retry_after if e.retry_after is not None else 1.0,
                           RATE_WAIT_FLOOR)
                if wait > RATE_WAIT_CAP or waited + wait > self.rate_wait_total:
                    raise RateLimited(self.url, e.error, waited) from None
                self._rate_wait(wait, e)
                waited += wait

    def _rate_wait(self, seconds: float, e: ApiError) -> None:
        self.rate_refusals += 1
        if not self._noticed and self.notice and (
                self.rate_waited + seconds >= RATE_WAIT_NOTICE):
            self._noticed = True
            self.notice(f"nightjar: the service limits this token's requests "
                        f"({e.error.get('message') or 'HTTP 429'}); waiting as it "
                        f"asks ({self.rate_waited + seconds:.1f} s so far)")
        time.sleep(seconds)
        self.rate_waited += seconds

    def exchange(self, method: str, path: str, body=None, query: dict | None = None):
        """One HTTP request and its answer, without waiting out a 429."""
        url = self.url + path
        if query:
            q = {k: v for k, v in query.items() if v is not None}
            if q:
                url += "?" + urllib.parse.urlencode(q)
        data = None
        headers = {"Accept": "application/json"}
        if body is not None:
            data = json.dumps(body).encode()
            headers["Content-Type"] = "application/json"
        if self.token:
            headers["Authorization"] = f"Bearer {self.token}"
        req = urllib.request.Request(url, data=data, headers=headers, method=method)
        try:
            with urllib.request.urlopen(req, timeout=self.timeout) as resp:
                return json.loads(resp.read() or b"null")
        except urllib.error.HTTPError as e:
            raw = e.read()
            try:
                err = json.loads(raw).get("error") or {}
            except (ValueError, AttributeError):
                err = {"message": raw.decode(errors="replace")[:300] or e.reason}
            if e.code == 503 and err.get("code") == "storage_unavailable":
                raise ServiceUnavailable(self.url, err.get("message", "")) from None
            wait = (retry_after_seconds(e.headers.get("Retry-After"), err)
                    if e.code == 429 else None)
            raise ApiError(e.code, err, wait) from None
        except (urllib.error.URLError, ConnectionError, TimeoutError, OSError) as e:
            why = getattr(e, "reason", None) or e
            raise ServiceUnavailable(self.url, str(why)) from None

    def get(self, path, **query):
        return self.request("GET", path, query=query)

    def post(self, path, body=None):
        return self.request("POST", path, body if body is not None else {})

    # -- the API -----------------------------------------------------------
    def health(self) -> dict:
        return self.get("/api/health")

    def submit(self, body: dict) -> dict:
        return self.post("/api/submissions", body)

    def job(self, jid):
        return self.get(f"/api/jobs/{jid}")

    def proof(self, jid):
        return self.get(f"/api/jobs/{jid}/proof")

    def model(self, jid):
        return self.get(f"/api/jobs/{jid}/model")

    def figures(self, jid):
        return self.get(f"/api/jobs/{jid}/figures")

    def problem(self, jid):
        return self.get(f"/api/jobs/{jid}/problem")

    def cancel_job(self, jid):
        return self.post(f"/api/jobs/{jid}/cancel")

    def batch(self, bid):
        return self.get(f"/api/batches/{bid}")

    def batches(self, offset=0, limit=50):
        return self.get("/api/batches", offset=offset, limit=limit)["batches"]

    def batch_jobs(self, bid, state=None, verdict=None, offset=0, limit=500):
        return self.get(f"/api/batches/{bid}/jobs", state=state, verdict=verdict,
                        offset=offset, limit=limit)

    def jobs(self, bid, state=None, verdict=None, page=500):
        """Every job of a batch (all pages), in submission order."""
        offset = 0
        while True:
            r = self.batch_jobs(bid, state, verdict, offset, page)
            yield from r["jobs"]
            offset += len(r["jobs"])
            if not r["jobs"] or offset >= r["total"]:
                return

    def cancel_batch(self, bid):
        return self.post(f"/api/batches/{bid}/cancel")

    def delete_batch(self, bid):
        return self.request("DELETE", f"/api/batches/{bid}")

    def wait(self, bid: str, on_progress=None, interval: float = 0.3,
             timeout: float | None = None) -> dict:
        """Poll a batch until every job has settled; ``on_progress(batch)``
        is called on every poll."""
        start = time.monotonic()
        delay = min(0.05, interval)
        while True:
            b = self.batch(bid)
            if on_progress:
                on_progress(b)
            if b["finished"]:
                return b
            if timeout is not None and time.monotonic() - start > timeout:
                raise TimeoutError(f"batch {bid} not settled after {timeout:.0f}s")
            time.sleep(delay)
            delay = min(delay * 1.5, interval)

    # -- submitting files --------------------------------------------------
    def submit_files(self, paths: list, *, axioms: list | None = None,
                     time_limit: float | None = None, label: str | None = None,
                     strategy: str | None = None, reuse: bool = False,
                     queue: str | None = None, root: str | None = None,
                     language: str | None = None, include_root: str | None = None) -> dict:
        """One problem file, several, or conjecture files against axiom
        files.  Raises InputError (from reading on this side), ApiError,
        ServiceUnavailable; an input error names the file as given in
        ``paths`` / ``axioms``, whichever side found it.  ``language`` and
        ``include_root`` mean what they mean for ``prove``: every file is
        read in that language; includes not found beside the including
        file are looked for there (and sent along)."""
        names: dict = {}
        body = submission_body(paths, axioms=axioms, root=root, names=names,
                               language=language, include_root=include_root)
        for k, v in (("time_limit", time_limit), ("label", label),
                     ("strategy", strategy), ("queue", queue)):
            if v is not None:
                body[k] = v
        if reuse:
            body["reuse"] = True
        try:
            return self.submit(body)
        except ApiError as e:
            if e.code != "input_error":
                raise
            raise ApiError(e.status, as_given(e.error, names)) from None


def _name(path: str, root: str) -> str:
    """A bundle name for a file: its path relative to ``root`` when inside
    it, else its base name; posix style."""
    ap = os.path.abspath(path)
    rel = os.path.relpath(ap, root)
    if rel.startswith(os.pardir + os.sep) or rel == os.pardir or os.path.isabs(rel):
        rel = os.path.basename(ap)
    return rel.replace(os.sep, "/")


def _as_given(path: str, name: str) -> str:
    """The file ``name`` (relative to ``path``'s folder, as the bundle
    reader names it) the way the user would write it: ``path`` itself for
    the main file, else a path from the current folder (as ``check`` says)."""
    if name == os.path.basename(path):
        return path
    folder = os.path.dirname(path)
    if not folder or os.path.isabs(name):
        return name
    return os.path.normpath(os.path.join(folder, name))


def bundle_of(path: str, root: str | None = None, names: dict | None = None, *,
              language: str | None = None, include_root: str | None = None) -> dict:
    """``{"main", "files"}`` (and ``"language"`` when given) for a file and
    everything it includes (looked for beside the including file, then in
    ``include_root``), names relative to ``root`` (default: the current
    folder).  An input error names the file as the user gave it; ``names``,
    when given, gets each bundle name -> that name.  A file that cannot be
    opened at all is an error without a place."""
    from worker.syntax import collect_bundle
    from worker.syntax.errors import InputError, Span
    if os.path.isdir(path):
        raise InputError(f"cannot read '{path}': it is a folder, not a file")
    root = os.path.abspath(root or os.getcwd())
    main = _name(path, root)
    prefix = posixpath.dirname(main)
    try:
        files = collect_bundle(path, include_root=include_root, language=language)
    except InputError as e:
        base = os.path.basename(path)
        if base != path and (e.span is None or e.span.file == base):
            e.message = e.message.replace(f"'{base}'", f"'{path}'", 1)  # cannot read ...
        if e.span is not None:
            e.span = Span(_as_given(path, e.span.file), e.span.line, e.span.col)
        raise
    out = {}
    for name, text in files.items():
        full = posixpath.normpath(posixpath.join(prefix, name)) if prefix else name
        out[full] = text
        if names is not None:
            names.setdefault(full, _as_given(path, name))
    return {"main": main, "files": out, **({"language": language} if language else {})}


def as_given(err: dict, names: dict) -> dict:
    """An API input error (its JSON) with the file named as the user gave
    it (``names`` from :func:`submission_body`), in ``file`` and in the
    rendered ``text``."""
    file = err.get("file")
    given = names.get(file) if file else None
    if given is None or given == file:
        return err
    out = dict(err, file=given)
    text = err.get("text") or ""
    if text.startswith(f"{file}:"):
        out["text"] = given + text[len(file):]
    return out


def submission_body(paths: list, *, axioms: list | None = None,
                    root: str | None = None, names: dict | None = None,
                    language: str | None = None, include_root: str | None = None) -> dict:
    """The JSON body of a submission of these files (``names``, when given,
    gets each bundle name -> the file as the user gave it; ``language``,
    ``include_root``: as for :func:`bundle_of`, and with axioms the
    language goes in the axioms' bundle, which the API applies to every file)."""
    paths = [str(p) for p in paths]
    opts = {"language": language, "include_root": include_root}
    if axioms:
        files: dict = {}
        mains = []
        for a in axioms:
            b = bundle_of(str(a), root, names, **opts)
            files.update(b["files"])
            mains.append(b["main"])
        conj = []
        for p in paths:
            b = bundle_of(p, root, names, **opts)
            extra = {k: v for k, v in b["files"].items() if k != b["main"]}
            files.update(extra)        # a conjecture file's own includes go along
            conj.append({"name": b["main"], "text": b["files"][b["main"]]})
        _refuse_one_name(paths, [c["name"] for c in conj])
        ax = {"main": mains if len(mains) > 1 else mains[0], "files": files}
        if language:
            ax["language"] = language
        return {"axioms": ax, "conjectures": conj}
    if len(paths) == 1:
        return {"problem": bundle_of(paths[0], root, names, **opts)}
    return {"problems": [bundle_of(p, root, names, **opts) for p in paths]}


def _refuse_one_name(paths: list, mains: list) -> None:
    """An InputError when two conjecture files would be sent under one name
    (the same file given twice, or two files of one base name outside the
    current folder): the service refuses that, in bundle names; this says it
    with the files as given."""
    from worker.syntax.errors import InputError
    first: dict = {}
    for p, m in zip(paths, mains):
        if m in first:
            q = first[m]
            if os.path.abspath(q) == os.path.abspath(p):
                raise InputError(f"cannot submit '{p}' twice in one submission")
            raise InputError(f"cannot submit '{q}' and '{p}' together: both would be "
                             f"sent as '{m}' (submit them from a folder that holds both)")
        first[m] = p
