"""Conjecture files submitted with shared axioms (the API's ``axioms`` +
``conjectures`` form, the console's pasted or uploaded axioms, the command
line's ``submit --axioms``): the conjecture file is read as the user wrote it,
the axiom files as its context (``worker.syntax.load_bundle``), so an error in
it is at its own file:line:col, shows its own line, and names nothing the
service added.  Jobs run in-process with the real engine (fakeredis)."""

from __future__ import annotations

import html
import re

import fakeredis
import pytest
from rq import Queue

from service import api as A
from service.app import create_app
from service.config import QUEUE_BATCH, QUEUE_INTERACTIVE, Config
from service.store import Store
from service.web import views
from worker import jobs
from worker.syntax import bundle_reader, load_bundle, load_problem
from worker.syntax.errors import InputError

AX = "axiom a: forall x. p(x) implies q(x)\naxiom b: p(k)\n"
AX_TPTP = "fof(a, axiom, ![X]: (p(X) => q(X))).\nfof(b, axiom, p(k)).\n"
QA = "\n\nconjecture h: q(k) and\n"          # the QA finding: three lines, the last dangling


@pytest.fixture
def env():
    r = fakeredis.FakeRedis()
    app = create_app(Config(max_time_limit=60, default_time_limit=10), r)
    store = Store(r)

    class E:
        pass
    e = E()
    e.r, e.app, e.store, e.client = r, app, store, app.test_client()
    e.tok = store.add_token("alice")
    e.h = {"Authorization": f"Bearer {e.tok}"}
    e.post = lambda body: e.client.post("/api/submissions", json=body, headers=e.h)
    e.get = lambda path: e.client.get(path, headers=e.h).get_json()

    def run_all():
        for qn in (QUEUE_INTERACTIVE, QUEUE_BATCH):
            q = Queue(qn, connection=r)
            for rq_id in q.job_ids:
                jobs.attempt(rq_id.rsplit("-", 1)[0], connection=r)
                q.remove(rq_id)
    e.run_all = run_all
    return e


def alone(name: str, text: str, language=None) -> str | None:
    """The error of reading the conjecture file on its own (what ``nightjar
    check`` says of it), rendered; None when it reads."""
    try:
        load_problem(name, bundle_reader({name: text}), language=language)
    except InputError as e:
        return e.render()
    return None


def added(text: str, axname: str) -> bool:
    """Does a rendered message (``file:line:col: error: ...``, the line, a
    caret, a hint) show an include line, or name the axiom file, where the
    user's conjecture file has neither?"""
    lines = text.splitlines()
    shown = lines[1] if len(lines) > 1 else ""
    return bool(re.match(r"\s*include\s*[(\"]", shown)) or axname in lines[0]


# ============================================================ the API

def test_the_qa_case_is_at_the_users_line_and_shows_it(env):
    r = env.post({"axioms": {"main": "ax.nj", "files": {"ax.nj": AX}},
                  "conjectures": [{"name": "c2.nj", "text": QA}]})
    assert r.status_code == 400
    err = r.get_json()["error"]
    assert (err["code"], err["file"], err["line"], err["col"]) == ("input_error", "c2.nj", 3, 23)
    assert "found the end of the file" in err["message"]
    lines = err["text"].splitlines()
    assert lines[0].startswith("c2.nj:3:23: error: missing operand")
    assert lines[1].strip() == "conjecture h: q(k) and"        # the user's own line
    assert not added(err["text"], "ax.nj")
    assert err["text"] == alone("c2.nj", QA)                     # as the file read alone


@pytest.mark.parametrize("text, where", [
    ("\n\nfof(h, conjecture, q(k) &\n", (3, 26)),       # a dangling operator
    ("\n\nfof(h, conjecture, q(k))\n", (3, 25)),        # no '.' at the end
    ("fof(h, conjecture, q(k)).\nfof(g, conjecture,", (2, 19)),
])
def test_tptp_conjecture_files_with_tptp_axioms(env, text, where):
    for lang in (None, "tptp"):
        r = env.post({"axioms": {"main": "ax.p", "files": {"ax.p": AX_TPTP}, "language": lang},
                      "conjectures": [{"name": "c2.p", "text": text}]})
        assert r.status_code == 400, lang
        err = r.get_json()["error"]
        assert (err["file"], err["line"], err["col"]) == ("c2.p", *where), (lang, err)
        assert not added(err["text"], "ax.p")
        assert err["text"] == alone("c2.p", text, lang)
        assert err["text"].splitlines()[1].strip() == text.split("\n")[where[0] - 1].strip()


@pytest.mark.parametrize("name, text, axname, axtext", [
    ("c.nj", "# the cases\nconjecture h: q(k)\nconjecture g: forall x. q(x) implies p(x)\n",
     "ax.nj", AX),
    ("c.p", "% the cases\nfof(h, conjecture, q(k)).\nfof(g, conjecture, ![X]: (q(X) => p(X))).\n",
     "ax.p", AX_TPTP),
])
def test_every_cut_of_a_conjecture_file_is_answered_as_the_file_alone(env, name, text,
                                                                      axname, axtext):
    """Cut the text anywhere: where the cut file alone is an error, the
    submission's error is that one exactly (file, line, col, the line shown),
    never one about an include; where it reads, the submission is taken."""
    ax = {"main": axname, "files": {axname: axtext}}
    errors = 0
    for cut in range(len(text) + 1):
        part = text[:cut]
        want = alone(name, part)
        r = env.post({"axioms": ax, "conjectures": [{"name": name, "text": part}]})
        if want is None or "nothing to read" in want:
            # an empty or comment-only conjecture file asks about the axioms alone
            if r.status_code == 202:
                continue
            # or the cut text uses a name of the axioms otherwise ('q' for
            # 'q(k)'): at the axioms' use, naming the place in the cut file
            err = r.get_json()["error"]
            assert "a name cannot be used with two arities" in err["message"], (cut, err)
            assert err["file"] == axname and f"at {name}:" in err["message"], (cut, err)
            assert err["text"].splitlines()[1].strip() == \
                axtext.split("\n")[err["line"] - 1].strip()
            continue
        errors += 1
        err = r.get_json()["error"]
        assert r.status_code == 400 and err["text"] == want, (cut, part, err)
        assert not added(err["text"], axname), (cut, err)
    assert errors > len(text) // 2             # most cuts leave a statement open


def test_a_valid_submission_gives_the_same_jobs_names_and_verdicts(env):
    r = env.post({"axioms": {"main": "ax.nj", "files": {"ax.nj": AX}},
                  "conjectures": [{"name": "c1.nj", "text": "conjecture h: q(k)\n"},
                                  {"name": "sub/c2.nj",
                                   "text": "# no newline at the end\nconjecture g: q(m)"}]})
    assert r.status_code == 202, r.get_json()
    out = r.get_json()["jobs"]
    assert [(j["file"], j["conjecture"]) for j in out] == [("c1.nj", "h"), ("sub/c2.nj", "g")]
    env.run_all()
    recs = {j["conjecture"]: env.get(f"/api/jobs/{j['id']}") for j in out}
    # q(k) follows from the axioms only (p(k), p -> q); nothing makes q(m) true
    assert recs["h"]["verdict"] == "Theorem" and recs["g"]["verdict"] == "CounterSatisfiable"
    assert set(recs["h"]["axioms_used"]) == {"a", "b"}
    # the stored problem: the conjecture file as sent, the axioms beside it
    prob = env.get(f"/api/jobs/{out[1]['id']}/problem")
    assert prob["main"] == "sub/c2.nj" and prob["text"] == "# no newline at the end\nconjecture g: q(m)"
    assert prob["files"] == {"ax.nj": AX, "sub/c2.nj": prob["text"]}
    assert prob["context"] == ["ax.nj"]


def test_tptp_axioms_and_a_tptp_conjecture_file_are_proved(env):
    text = "% from the shared axioms\nfof(h, conjecture, q(k)).\n"
    r = env.post({"axioms": {"main": "lib/ax.p", "files": {"lib/ax.p": AX_TPTP}},
                  "conjectures": [{"name": "probs/c.p", "text": text}]})
    assert r.status_code == 202, r.get_json()
    env.run_all()
    jid = r.get_json()["jobs"][0]["id"]
    assert env.get(f"/api/jobs/{jid}")["verdict"] == "Theorem"
    assert env.get(f"/api/jobs/{jid}/problem")["text"] == text


def test_axiom_file_names_are_data_not_text(env):
    """A name the composition once wrote into an include line (a quote in
    it) is only a name now: the axioms are read and their conjectures found."""
    r = env.post({"axioms": {"main": 'my "ax".nj', "files": {'my "ax".nj': AX}},
                  "conjectures": [{"name": "c.nj", "text": "conjecture h: q(k)\n"}]})
    assert r.status_code == 202, r.get_json()
    r = env.post({"axioms": {"main": "it's.p", "files": {"it's.p": AX_TPTP}},
                  "conjectures": [{"name": "c.p", "text": "fof(h, conjecture, q(k)).\n"}]})
    assert r.status_code == 202, r.get_json()
    env.run_all()
    assert env.get(f"/api/jobs/{r.get_json()['jobs'][0]['id']}")["verdict"] == "Theorem"
    r = env.post({"axioms": {"main": 'my "ax".nj',
                             "files": {'my "ax".nj': AX + "conjecture stray: p(k)\n"}},
                  "conjectures": [{"name": "c.nj", "text": "conjecture h: q(k)\n"}]})
    err = r.get_json()["error"]
    assert r.status_code == 400 and (err["file"], err["line"]) == ('my "ax".nj', 3)
    assert "the axioms hold a conjecture ('stray')" in err["message"]


def test_errors_between_files_name_the_users_files(env):
    ax = {"main": "ax.nj", "files": {"ax.nj": AX}}
    r = env.post({"axioms": ax, "conjectures": [{"name": "c.nj",
                                                 "text": "\nconjecture h: p(k, k)\n"}]})
    err = r.get_json()["error"]
    assert r.status_code == 400 and err["file"] == "ax.nj" and "c.nj:2:15" in err["message"]
    assert not added(err["text"].split("\n", 1)[1], "c.nj")
    r = env.post({"axioms": ax, "conjectures": [{"name": "c.nj", "text": "conjecture b: q(k)\n"}]})
    err = r.get_json()["error"]
    assert r.status_code == 400 and "duplicate statement name 'b'" in err["message"]
    assert not added(err["text"].split("\n", 1)[1], "c.nj")


def test_reuse_and_storage_tell_the_context_apart(env):
    """Two bundles with the same files and main but different axiom mains are
    different problems: different stored ids and reuse keys."""
    files = {"a.nj": "axiom a: p(k)\n", "b.nj": "axiom b: forall x. p(x) implies q(x)\n"}
    one = A._with_axioms({"main": "a.nj", "files": files}, "c.nj", "conjecture h: q(k)\n")
    two = A._with_axioms({"main": ["a.nj", "b.nj"], "files": files}, "c.nj",
                         "conjecture h: q(k)\n")
    assert one["files"] == two["files"] and one["main"] == two["main"]
    assert Store.problem_id(one) != Store.problem_id(two)
    assert A._reuse_key(one, "h", 10.0, {}) != A._reuse_key(two, "h", 10.0, {})
    r1 = env.post({"axioms": {"main": "a.nj", "files": files}, "reuse": True,
                   "conjectures": [{"name": "c.nj", "text": "conjecture h: q(k)\n"}]})
    env.run_all()
    r2 = env.post({"axioms": {"main": ["a.nj", "b.nj"], "files": files}, "reuse": True,
                   "conjectures": [{"name": "c.nj", "text": "conjecture h: q(k)\n"}]})
    assert r2.get_json()["jobs"][0]["reused"] is False
    env.run_all()
    v1 = env.get(f"/api/jobs/{r1.get_json()['jobs'][0]['id']}")["verdict"]
    v2 = env.get(f"/api/jobs/{r2.get_json()['jobs'][0]['id']}")["verdict"]
    assert (v1, v2) == ("CounterSatisfiable", "Theorem")


def test_a_bundle_without_context_keeps_its_stored_id(env):
    """Problems stored before the context existed keep their content address."""
    import hashlib
    import json
    b = {"main": "m.nj", "files": {"m.nj": "conjecture g: p\n"}, "language": None}
    old = hashlib.sha256(json.dumps(b, sort_keys=True, separators=(",", ":"))
                         .encode()).hexdigest()[:32]
    assert Store.problem_id(b) == old


# ============================================================ the reader

def test_context_reads_as_includes_at_the_end_without_the_text():
    files = {"ax.nj": AX, "more.p": "fof(z, axiom, r(k)).\n",
             "sub/c.nj": "conjecture h: q(k) and r(k)\n"}
    with_inc = dict(files)
    with_inc["sub/c.nj"] += 'include "../ax.nj"\ninclude "../more.p"\n'
    old = load_problem("sub/c.nj", bundle_reader(with_inc))
    new = load_bundle({"main": "sub/c.nj", "files": files, "context": ["ax.nj", "more.p"]})
    assert [(s.name, s.role, s.formula, str(s.span)) for s in new.statements] == \
        [(s.name, s.role, s.formula, str(s.span)) for s in old.statements]
    assert list(new.signature) == list(old.signature) and new.files == old.files
    alone_ = load_bundle({"main": None, "files": files, "context": ["ax.nj", "more.p"]})
    assert [s.name for s in alone_.statements] == ["a", "b", "z"]
    with pytest.raises(InputError) as e:
        load_bundle({"main": "sub/c.nj", "files": files, "context": ["gone.nj"]})
    assert "cannot read 'gone.nj'" in e.value.message


# ============================================================ the console

def _console(env):
    from tests.test_web_pages import Console
    c = Console(env.app, env.r, env.store)
    c.sign_in(env.tok)
    return c


def test_console_form_shows_the_users_line(env, monkeypatch):
    monkeypatch.delenv("NIGHTJAR_SECRET_KEY", raising=False)
    c = _console(env)
    resp = c.submit(QA, axioms_text=AX)
    assert resp.status_code == 400
    page = resp.get_data(as_text=True)
    err = html.unescape(re.search(r'<pre class="input-error">(.*?)</pre>', page, re.S).group(1))
    assert err.startswith("pasted:3:23: error:") and not added(err, "axioms")
    assert err.splitlines()[1].strip() == "conjecture h: q(k) and"
    marked = re.search(r'<tr class="error-line" id="error-line"><td class="ln">(\d+)</td>'
                       r'<td><code>(.*?)</code>', page).groups()
    assert marked == ("3", "conjecture h: q(k) and")
    assert env.store.owner_batches("alice") == []


def test_console_job_page_shows_the_users_text_at_its_anchors(env, monkeypatch):
    monkeypatch.delenv("NIGHTJAR_SECRET_KEY", raising=False)
    c = _console(env)
    text = "# a comment first\n\nconjecture h: q(k)\n"
    resp = c.submit(text, name="mine.nj", axioms_text=AX, axioms_name="ax.nj")
    assert resp.status_code == 303, resp.get_data(as_text=True)
    jid = re.search(r"/jobs/(j[0-9a-f]+)$", resp.headers["Location"]).group(1)
    c.run_all()
    assert env.store.get_job(jid)["verdict"] == "Theorem"
    assert env.store.get_job(jid)["file"] == "mine.nj"
    page = c.get(f"/jobs/{jid}")
    rows = re.findall(r'<tr id="(L\d+)"[^>]*><td class="ln"><a href="#L\d+">\d+</a></td>'
                      r'<td><code>(.*?)</code>', page)
    assert [(a, html.unescape(t)) for a, t in rows] == [
        ("L1", "# a comment first"), ("L2", ""), ("L3", "conjecture h: q(k)")]
    assert re.search(r'<tr id="L3" class="this-conjecture"', page)
    assert re.search(r'<tr id="f1-L1"[^>]*>.*?axiom a: forall x', page)
    assert c.client.get(f"/jobs/{jid}/problem.txt").get_data(as_text=True) == text
    # the proof page links the axioms used to their lines in the axiom file
    proof = c.get(f"/jobs/{jid}/proof")
    assert f"/jobs/{jid}#f1-L1" in proof and f"/jobs/{jid}#f1-L2" in proof
    assert views.statement_places(env.store.load_problem_bundle(
        env.store.get_job_raw(jid)["problem"])) == {
        "h": ("mine.nj", 3), "a": ("ax.nj", 1), "b": ("ax.nj", 2)}
