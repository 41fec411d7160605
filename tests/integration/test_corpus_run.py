"""Corpus runs end to end: the ``nightjar corpus`` command in a subprocess,
the API under waitress, a real Redis server and real worker processes
(fixtures in conftest.py), the real engine."""

from __future__ import annotations

import json
import os
import subprocess
import sys
import textwrap
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]
DEMO = REPO / "corpus" / "demo"


def nightjar(api, token, *argv, timeout=240):
    env = dict(os.environ, NIGHTJAR_TOKEN=token, NIGHTJAR_HOME="/nonexistent-nightjar-home")
    cmd = [sys.executable, "-m", "service.cli", *argv, "--server", api.url]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout, env=env,
                          cwd=str(REPO))


def last_json(out: str) -> dict:
    return json.loads(out.strip().splitlines()[-1])


def test_demo_run_rerun_with_second_axioms_and_diff(api, workers):
    workers.start(2)
    token = api.store.add_token("alice")

    r = nightjar(api, token, "corpus", "run", str(DEMO), "--wait", "--json")
    assert r.returncode == 0, r.stderr + r.stdout
    first = last_json(r.stdout)
    assert first["suite"] == "greywater" and first["total"] == 31
    assert first["settled"] == 31 and first["unexpected"] == 0
    assert first["reused"] == 0 and first["searched"] == 31
    assert first["axioms_consistent"] is True
    rows = [json.loads(x) for x in r.stdout.strip().splitlines()[:-1]]
    assert len(rows) == 31 and all(x["verdict"] == x["expected"] for x in rows)

    r = nightjar(api, token, "corpus", "run", str(DEMO / "suite-v2.toml"), "--wait", "--json")
    # two definite verdicts change, each to the one suite-v2.toml expects:
    # gained (fixed), so they pass the gate
    assert r.returncode == 0, r.stderr + r.stdout
    second = last_json(r.stdout)
    assert second["previous"] == first["run"]
    assert second["flipped"] == 0 and second["lost"] == 0 and second["unexpected"] == 0
    assert second["gained"] == 2
    assert all(x["fixed"] for x in second["changes"]["gained"])
    assert second["reused"] >= 10 and second["searched"] >= 2
    assert second["reused"] + second["searched"] == 31
    rows = {x["key"].split("#")[1]: x for x in map(json.loads, r.stdout.strip().splitlines()[:-1])}
    # maud_home was edited: the proof that used it is searched again, not reused
    assert not rows["maud_calls_dunmere"]["reused"]
    assert rows["maud_calls_dunmere"]["verdict"] == "CounterSatisfiable"
    # the new crossing breaks the old countermodel of reach_mill_fell
    assert not rows["reach_mill_fell"]["reused"] and rows["reach_mill_fell"]["verdict"] == "Theorem"
    # a proof over untouched axioms is replayed and kept
    assert rows["reach_mill_ashford"]["reused"]

    r = nightjar(api, token, "corpus", "diff", "--suite", "greywater", "--json")
    assert r.returncode == 0, r.stderr + r.stdout
    d = json.loads(r.stdout)
    assert (d["a"], d["b"]) == (first["run"], second["run"])
    assert d["flipped"] == [] and not d["regression"]
    assert sorted((x["key"], x["after"], x["fixed"]) for x in d["gained"]) == [
        ("conjectures/ferries.nj#maud_calls_dunmere", "CounterSatisfiable", True),
        ("conjectures/routes.nj#reach_mill_fell", "Theorem", True)]
    r = nightjar(api, token, "corpus", "diff", "--suite", "greywater")
    assert r.returncode == 0, r.stderr + r.stdout
    assert "DEFINITE VERDICTS CHANGED: 2 obligations" in r.stdout
    fixed = [ln for ln in r.stdout.splitlines() if ln.startswith("FIXED ")]
    assert len(fixed) == 2 and all("manifest expected" in ln for ln in fixed)
    r = nightjar(api, token, "corpus", "diff", first["run"], first["run"])
    assert r.returncode == 0 and "no changes" in r.stdout

    # the terminal report: the axioms line at the top, the loud flip lines
    r = nightjar(api, token, "corpus", "run", str(DEMO / "suite-v2.toml"), "--wait")
    assert r.returncode == 0, r.stderr + r.stdout          # nothing changed since the last run
    lines = r.stdout.splitlines()
    assert lines[1].startswith("axioms: consistent")
    assert "reused 31, searched 0" in r.stdout

    r = nightjar(api, token, "corpus", "runs", "--json")
    assert r.returncode == 0
    listed = json.loads(r.stdout)["runs"]
    assert [x["reused"] for x in listed] == [31, second["reused"], 0]   # newest first
    assert listed[2]["run"] == first["run"] and listed[1]["manifest"] == "suite-v2.toml"


def test_contradictory_axioms_trip_the_guard(api, workers, tmp_path):
    workers.start(1)
    token = api.store.add_token("bob")
    files = {
        "suite.toml": """\
            [suite]
            name = "broken-lamps"
            description = "axioms that contradict each other"
            source = "made up for a test"
            time_limit = 5
            axioms = ["axioms.nj"]
            problems = ["goals.nj"]
            """,
        "axioms.nj": "axiom lamp: lit(a)\naxiom dark: forall x. not lit(x)\n",
        "goals.nj": "conjecture anything: lit(b)\n",
    }
    for name, text in files.items():
        (tmp_path / name).write_text(textwrap.dedent(text))
    r = nightjar(api, token, "corpus", "run", str(tmp_path), "--wait")
    assert r.returncode == 5, r.stderr + r.stdout
    assert r.stdout.splitlines()[1].startswith("AXIOMS CONTRADICTORY")
    assert "VACUOUS" in r.stdout


def test_status_shows_the_contradiction_without_the_run_being_read(api, workers, tmp_path):
    """`corpus run` without --wait, the workers settle the batch, and
    `nightjar status JOB` shows the mark: written by the work horse that
    settled the consistency check, not by a read of the run."""
    import time
    workers.start(1)
    token = api.store.add_token("dora")
    (tmp_path / "suite.toml").write_text(textwrap.dedent("""\
        [suite]
        name = "lamps-later"
        description = "axioms that become contradictory"
        source = "made up for a test"
        time_limit = 5
        axioms = ["axioms.nj"]
        problems = ["goals.nj"]
        """))
    (tmp_path / "axioms.nj").write_text("axiom lamp: lit(a)\naxiom road: p(b)\n")
    (tmp_path / "goals.nj").write_text("conjecture on_road: p(b)\n")
    r = nightjar(api, token, "corpus", "run", str(tmp_path), "--wait")
    assert r.returncode == 0, r.stderr + r.stdout
    # "nothing is lit": contradictory; the Theorem of on_road is reused at once
    (tmp_path / "axioms.nj").write_text("axiom lamp: lit(a)\naxiom road: p(b)\n"
                                        "axiom dark: forall x. not lit(x)\n")
    r = nightjar(api, token, "corpus", "run", str(tmp_path), "--json")
    assert r.returncode == 0, r.stderr + r.stdout
    first = json.loads(r.stdout)
    assert first["reused"] == 1
    deadline = time.monotonic() + 120          # a bound on the wait, not a timing check
    while True:
        r = nightjar(api, token, "status", first["batch"], "--json")
        assert r.returncode in (0, 3), r.stderr + r.stdout
        batch = json.loads(r.stdout)
        if batch["finished"]:
            break
        assert time.monotonic() < deadline, batch
        time.sleep(0.3)
    (job,) = [j for j in batch["jobs"] if j["conjecture"] == "on_road"]
    assert job["verdict"] == "Theorem" and job["reused_from"]
    r = nightjar(api, token, "status", job["id"])
    assert r.returncode == 0, r.stderr + r.stdout
    assert f"AXIOMS CONTRADICTORY (corpus run {first['run']}: refuted on their own by the " \
           f"axiom check" in r.stdout
    assert "the entailment holds, but vacuously" in r.stdout


def test_a_broken_suite_is_refused_before_submission(api, workers, tmp_path):
    token = api.store.add_token("carol")
    (tmp_path / "suite.toml").write_text(textwrap.dedent("""\
        [suite]
        name = "x"
        description = "x"
        source = "x"
        time_limit = 5
        axioms = []
        problems = ["*.nj"]
        """))
    (tmp_path / "a.nj").write_text("conjecture g: p(a) and\n")
    (tmp_path / "b.nj").write_text('include "missing.nj"\nconjecture h: p(b)\n')
    r = nightjar(api, token, "corpus", "run", str(tmp_path), "--wait")
    assert r.returncode == 1
    assert f"{tmp_path}/a.nj:1:" in r.stderr and f"{tmp_path}/b.nj:1:9:" in r.stderr
    assert "Traceback" not in r.stderr
    assert api.redis.keys("nj:corpus:*") == []
