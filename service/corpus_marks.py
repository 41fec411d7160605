"""The contradiction mark a corpus run writes on its job records.

When a run finds an axiom set contradictory (its consistency check refutes
it, or an obligation on it comes out ContradictoryAxioms), every finished
obligation on that set gets the mark: the field ``axioms_contradictory``
holds the words, and the same words follow the job's own ``reason``, which
is what ``nightjar status JOB``, the API's job record and the console's job
page show (DEVELOPERS.md, "Corpus runs").

The mark is written from two sides, so that it does not wait for anyone to
read the run:

* when a job of a run settles: ``Store`` calls :func:`job_settled` after the
  job's own transaction (only for a corpus run's batch, told by its label);
  it finds the job's place in the run in the run's job index
  (``nj:corpus:batch:<batch>``, written with the run record), notes a set
  found contradictory in ``nj:corpus:contradictory:<run>`` (first finder
  wins) and marks; an obligation settling on a set noted already is marked
  at once;
* when the run is read (``corpus.view_of``): what the view finds is noted
  and marked the same way, which also covers runs stored before the index,
  verdicts written at once by reuse, and anything a settle missed.

Whoever notes a set first marks every finished obligation on it, read
afresh after the note; an obligation that settles later reads the note after
its own settle.  So each one is marked by one side or the other.  Each mark
is WATCH-guarded: a record deleted meanwhile is never recreated, a record
marked already is left as it is.

``service.store`` imports this module (the hook is called from it), so
this module imports nothing of the service at load time: a worker has it
loaded before it forks its work horses, where the hook runs.
"""

from __future__ import annotations

import json

import redis

from worker import verdict as V

P = "nj:corpus:"
FINAL = frozenset({"done", "failed", "cancelled"})      # = store.FINAL_STATES
# the label corpus.create_run gives a run's batch; the store calls the
# settle hook only for jobs of batches labelled so
LABEL_PREFIX = "corpus "
MARK_FIELD = "axioms_contradictory"
MARK_SEP = "; and: "
# the verdicts by which a job shows its axiom set contradictory
GUARD_REFUTED = frozenset({V.UNSATISFIABLE, V.CONTRADICTORY_AXIOMS})


def k_run(rid: str) -> str:
    return f"{P}run:{rid}"


def k_batch(bid: str) -> str:
    """hash: job id -> JSON {"run", "set", "key"} (key null for a guard)."""
    return f"{P}batch:{bid}"


def k_contradictory(rid: str) -> str:
    """hash: axiom set id -> JSON of how the run found it contradictory."""
    return f"{P}contradictory:{rid}"


def _s(v):
    return v.decode() if isinstance(v, bytes) else v


def job_index(run: dict) -> dict:
    """The run's job index: every guard and obligation job -> its place."""
    out = {}
    for g in run.get("guards", []):
        if g.get("job"):
            out[g["job"]] = json.dumps({"run": run["id"], "set": g["set"], "key": None})
    for ob in run.get("obligations", []):
        out[ob["job"]] = json.dumps({"run": run["id"], "set": ob["axiom_set"],
                                     "key": ob["key"]})
    return out


def contradiction_text(c: dict | None) -> str:
    """How an axiom set was found contradictory, in words (one item of a
    view's ``contradictions``)."""
    if not c:
        return "found contradictory"
    if c.get("found_by") == "axiom check":
        return f"refuted on their own by the axiom check {c.get('job')}"
    return f"{c.get('key')} (job {c.get('job')}) came out ContradictoryAxioms"


def mark_text(run_id: str, verdict, c: dict | None) -> str:
    how = contradiction_text(c)
    if verdict in V.PROVED and verdict != V.CONTRADICTORY_AXIOMS:
        what = ("the entailment holds, but vacuously: every conjecture follows from "
                "these axioms")
    else:
        what = "every conjecture follows from them, this one too"
    return (f"AXIOMS CONTRADICTORY (corpus run {run_id}: {how}): {what}; fix the axioms "
            f"before trusting any verdict on them")


def unmarked_reason(rec: dict) -> str:
    """A job record's reason without the contradiction mark a corpus run
    added (what a reused copy of the verdict must carry: the new run's axioms
    are judged afresh)."""
    reason = rec.get("reason") or ""
    mark = rec.get(MARK_FIELD) or ""
    if not mark:
        return reason
    if reason == mark:
        return ""
    if reason.endswith(MARK_SEP + mark):
        return reason[:-len(MARK_SEP + mark)]
    return reason


def mark_job(store, jid: str, run_id: str, c: dict | None) -> bool:
    """Write the mark on one finished job record that lacks it, under WATCH
    (a deleted record stays deleted; a record marked meanwhile is left).
    Returns whether this call wrote it."""
    key = store.k_job(jid)
    with store.r.pipeline(transaction=True) as pipe:
        while True:
            try:
                pipe.watch(key)
                state, verdict, reason, mark = (_s(x) for x in pipe.hmget(
                    key, ["state", "verdict", "reason", MARK_FIELD]))
                if state not in FINAL or mark:
                    pipe.unwatch()
                    return False
                text = mark_text(run_id, verdict, c)
                fields = {MARK_FIELD: text}
                if verdict != V.CONTRADICTORY_AXIOMS:       # that one says it already
                    fields["reason"] = reason + MARK_SEP + text if reason else text
                pipe.multi()
                pipe.hset(key, mapping=fields)
                pipe.execute()
                return True
            except redis.WatchError:
                continue


def mark_set(store, run: dict, c: dict) -> list:
    """Mark every finished obligation of ``run`` on the set ``c["set"]``
    (states read now, in one pipelined pass; guards are never marked).
    Returns the ids marked."""
    ids = [ob["job"] for ob in run.get("obligations", []) if ob["axiom_set"] == c["set"]]
    if not ids:
        return []
    pipe = store.r.pipeline(transaction=False)
    for jid in ids:
        pipe.hmget(store.k_job(jid), ["state", MARK_FIELD])
    todo = [jid for jid, (st, mark) in zip(ids, pipe.execute()) if _s(st) in FINAL and not mark]
    return [jid for jid in todo if mark_job(store, jid, run["id"], c)]


def note_contradiction(store, run: dict, c: dict) -> list:
    """Note that ``run`` found the set ``c["set"]`` contradictory.  The first
    to note it marks the set's finished obligations (read after the note);
    returns the ids it marked ([] when the set was noted already)."""
    c = {k: c.get(k) for k in ("set", "job", "found_by", "key")}
    if not store.r.hsetnx(k_contradictory(run["id"]), c["set"], json.dumps(c)):
        return []
    return mark_set(store, run, c)


def note_found(store, run: dict) -> list:
    """Note every set ``run`` has found contradictory so far, from its jobs'
    verdicts now (guards first, then obligations in order, as
    ``corpus.run_view`` sees them), marking as :func:`note_contradiction`
    does: for what settled before the run's job index was written, and for
    verdicts written at once by reuse.  Returns the ids marked."""
    places = ([(g["job"], g["set"], None) for g in run.get("guards", []) if g.get("job")]
              + [(ob["job"], ob["axiom_set"], ob["key"]) for ob in run.get("obligations", [])])
    if not places:
        return []
    pipe = store.r.pipeline(transaction=False)
    for jid, _, _ in places:
        pipe.hget(store.k_job(jid), "verdict")
    marked, seen = [], set()
    for (jid, sid, key), verdict in zip(places, pipe.execute()):
        verdict = _s(verdict)
        if sid in seen or verdict not in (GUARD_REFUTED if key is None
                                          else (V.CONTRADICTORY_AXIOMS,)):
            continue
        seen.add(sid)
        marked += note_contradiction(store, run, {
            "set": sid, "job": jid, "key": key,
            "found_by": "axiom check" if key is None else "obligation"})
    return marked


def job_settled(store, rec: dict, verdict: str | None) -> list:
    """After a job of a corpus run's batch settled (``rec``: its record as
    it was before; ``verdict``: the one written, None for failed or
    cancelled): note its set when its verdict shows the axioms contradictory,
    and mark it when its set is noted.  Returns the ids marked.  Raises on a
    Redis error (the store's caller logs it; the job's own result is written
    already)."""
    if not str(rec.get("label") or "").startswith(LABEL_PREFIX) or not rec.get("batch"):
        return []
    raw = store.r.hget(k_batch(rec["batch"]), rec["id"])
    if raw is None:                  # not a run's job, or a run from before the index
        return []
    place = json.loads(raw)
    rid, sid, key = place["run"], place["set"], place["key"]
    guard = key is None
    marked = []
    if verdict in (GUARD_REFUTED if guard else (V.CONTRADICTORY_AXIOMS,)):
        from .store import unpack
        run = unpack(store.r.get(k_run(rid)))
        if run is None:
            return []
        marked += note_contradiction(store, run, {
            "set": sid, "job": rec["id"], "key": key,
            "found_by": "axiom check" if guard else "obligation"})
    if guard or rec["id"] in marked:
        return marked
    noted = store.r.hget(k_contradictory(rid), sid)
    if noted is not None and mark_job(store, rec["id"], rid, json.loads(noted)):
        marked.append(rec["id"])
    return marked


__all__ = ["MARK_FIELD", "MARK_SEP", "LABEL_PREFIX", "job_index", "contradiction_text",
           "mark_text", "unmarked_reason", "mark_job", "mark_set", "note_contradiction",
           "note_found", "job_settled", "k_batch", "k_contradictory", "k_run"]
