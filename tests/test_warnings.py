"""Warnings for likely slips (``worker/syntax/warn.py``): the rules, where
they point, that they stay quiet on the corpus, and how check, prove and
submit show them.  A warning never changes what was read, a verdict or an
exit code."""

import glob
import json
import string
from pathlib import Path

import pytest

from service.cli import main as cli_main
from worker.syntax import disk_reader, load_problem, parse_text
from worker.syntax.lexer import Source, tokenize_native
from worker.syntax.warn import FREE_NAME, MISSPELT, find_warnings, for_obligation

from tests.test_cli_client import service  # noqa: F401  (a fixture)

REPO = Path(__file__).resolve().parent.parent

# QA's finding: v typed for u.
STAFF = """# staff rules
axiom admin_bob: admin(bob)
axiom a1: forall u. admin(v) implies staff(u)
conjecture bob_staff: staff(bob)
"""


def warnings_of(text, name="t.nj"):
    return find_warnings(parse_text(text, name), lambda n: text if n == name else None)


def write(tmp_path, name, text):
    p = tmp_path / name
    p.parent.mkdir(parents=True, exist_ok=True)
    p.write_text(text)
    return str(p)


def run(argv, capsys):
    code = cli_main(argv)
    out, err = capsys.readouterr()
    assert "Traceback" not in out + err
    return code, out, err


# -- the free-name rule -------------------------------------------------------

def test_the_typo_is_reported_where_it_is_with_what_was_assumed():
    (w,) = warnings_of(STAFF, "staff.nj")
    assert (w.kind, w.name, w.statement, w.role) == (FREE_NAME, "v", "a1", "axiom")
    assert str(w.span) == "staff.nj:3:27"
    assert w.message == ("'v' is read as a constant; bind it with forall/exists if it "
                         "is meant as a variable")
    assert w.render().splitlines()[:3] == [
        "staff.nj:3:27: warning: " + w.message,
        "    axiom a1: forall u. admin(v) implies staff(u)",
        "                              ^"]
    assert "no other statement uses 'v'" in w.hint and "(u)" in w.hint
    assert "'v'" in w.hint                     # how to say a constant is meant


def test_a_variable_used_after_its_quantifier_closed_is_reported():
    (w,) = warnings_of("axiom a: forall y. (forall x. p(x)) implies q(x, y)\n"
                       "axiom b: q(c, c)\n")
    assert w.name == "x" and (w.span.line, w.span.col) == (1, 47)
    assert "binds 'x' at line 1, column 28" in w.hint


def test_a_name_one_edit_from_a_long_variable_is_reported():
    (w,) = warnings_of("axiom a: forall ferry. calls(fery, mill) implies lit(ferry)\n"
                       "axiom b: calls(kestrel, mill)\n")
    assert w.name == "fery" and "(ferry)" in w.hint


@pytest.mark.parametrize("text", [
    # a constant other statements use too
    "axiom a: forall u. admin(v) implies staff(u)\naxiom b: admin(v)\n",
    # quoted: always a symbol; the way to say so
    "axiom a: forall u. admin('v') implies staff(u)\n",
    # named unlike the variables: a constant by its name
    "axiom a: forall u. admin(bob) implies staff(u)\n",
    # capitalised variables, a lowercase constant (the Pelletier files)
    "conjecture g: forall X. p(X) implies q(a)\n",
    # also used outside every quantifier: meant as a constant
    "axiom a: p(v) and forall u. q(u, v)\n",
    # the guide's example: the outer x is a constant, used outside the scope
    "axiom a: (forall x. p(x, x)) implies p(x, x)\n",
    # a number is a constant
    "axiom a: forall x. x + 0 = x\n",
    # not under a quantifier at all
    "axiom a: p(v)\n",
    # a propositional atom is not a constant
    "axiom a: forall u. p(u) implies v\n",
])
def test_quiet_cases(text):
    assert warnings_of(text) == []


def test_reading_and_verdicts_are_unchanged(tmp_path, capsys):
    f = write(tmp_path, "staff.nj", STAFF)
    before = load_problem(f)
    find_warnings(before, lambda n: STAFF)
    after = load_problem(f)
    assert [s.same_as(t) for s, t in zip(before.statements, after.statements)] == [True] * 3
    assert before.signature == after.signature
    code, out, err = run(["prove", f, "--time-limit", "5", "--json"], capsys)
    (rec,) = [json.loads(l) for l in out.splitlines()]
    assert code == 0 and rec["status"] == "CounterSatisfiable"
    assert [w["name"] for w in rec["warnings"]] == ["v"]
    fixed = write(tmp_path, "fixed.nj", STAFF.replace("admin(v)", "admin(u)"))
    code, out, _ = run(["prove", fixed, "--time-limit", "5", "--json"], capsys)
    (rec,) = [json.loads(l) for l in out.splitlines()]
    assert code == 0 and rec["status"] == "Theorem" and rec["warnings"] == []


# -- where a warning points -------------------------------------------------

def test_a_use_on_a_later_line_of_the_statement_and_an_indented_keyword():
    text = "axiom ok: p(a)\n  axiom a1:  # the rule\n    forall u.\n      admin(v) implies staff(u)\n"
    for text_of in (lambda n: text, None):
        (w,) = find_warnings(parse_text(text, "t.nj"), text_of)
        assert str(w.span) == "t.nj:4:13"
        lines = w.render().splitlines()
        assert lines[1] == "          admin(v) implies staff(u)"
        assert lines[2].index("^") == 4 + 12
    # on the keyword's own line, without the file's text the line is rebuilt
    text = "  axiom a1: forall u. admin(v) implies staff(u)  # typo\n"
    (w,) = find_warnings(parse_text(text, "t.nj"))
    assert str(w.span) == "t.nj:1:29"
    assert w.render().splitlines()[1] == "      axiom a1: forall u. admin(v) implies staff(u)"
    (w,) = find_warnings(parse_text(text, "t.nj"), lambda n: text)
    assert w.render().splitlines()[1] == "      axiom a1: forall u. admin(v) implies staff(u)  # typo"


def test_a_warning_in_an_included_file_names_that_file(tmp_path):
    write(tmp_path, "rules/staff.nj", "axiom a1: forall u. admin(v) implies staff(u)\n")
    main = write(tmp_path, "main.nj", 'include "rules/staff.nj"\nconjecture c: staff(bob)\n')
    (w,) = find_warnings(load_problem(main), disk_reader())
    assert str(w.span) == f"{tmp_path}/rules/staff.nj:1:27"


def test_a_stale_file_text_is_not_echoed():
    (w,) = find_warnings(parse_text(STAFF, "t.nj"), lambda n: "something else\n" * 5)
    assert w.render().splitlines()[1] == "    axiom a1: forall u. admin(v) implies staff(u)"


def test_what_does_not_print_is_shown_visibly():
    text = "axiom a1: forall u. admin(v) implies staff(u) # \x1b[2J\n"
    (w,) = find_warnings(parse_text(text, "t.nj"), lambda n: text)
    assert "\x1b" not in w.render() and "\u241b" in w.render()
    assert "\x1b" not in json.dumps(w.to_json(), ensure_ascii=False)


# -- the misspelling rule ----------------------------------------------------

def test_a_name_used_once_next_to_a_frequent_one():
    text = ("axiom a: forall x y. route(x, y) implies reach(x, y)\n"
            "axiom b: forall x y z. reach(x, y) and route(y, z) implies reach(x, z)\n"
            "conjecture c: raech(mill, quay)\n")
    (w,) = warnings_of(text)
    assert (w.kind, w.name, str(w.span)) == (MISSPELT, "raech", "t.nj:3:15")
    assert "did you mean 'reach' (used 3 times)?" in w.message
    assert "a predicate of 2 arguments" in w.message


@pytest.mark.parametrize("text", [
    # used twice: a name of its own
    "axiom a: reach(m) and reach(n) and reach(o) and raech(m) and raech(n)\n",
    # numbered families are not misspellings
    "axiom a: cell1(m) and cell1(n) and cell1(o) and cell2(m)\n",
    # short names differ by one letter all the time
    "axiom a: add(m) and add(n) and add(o) and and_(m) and adx(m)\n",
    # a different arity is a different kind of symbol
    "axiom a: reach(m) and reach(n) and reach(o) and raech(m, n)\n",
    # the frequent name is used only twice
    "axiom a: reach(m) and reach(n) and raech(m)\n",
])
def test_misspelling_quiet_cases(text):
    assert warnings_of(text) == []


def test_misspelling_in_tptp_points_into_the_formula():
    text = ("fof(reach1, axiom, ![X, Y]: (route(X, Y) => reach(X, Y))).\n"
            "fof(reach2, axiom, ![X]: reach(X, X)).\n"
            "fof(reach3, axiom, ![X, Y]: (reach(X, Y) => reach(Y, X))).\n"
            "fof(goal, conjecture, reahc(mill, quay)).\n")
    (w,) = warnings_of(text, "t.p")
    assert (w.kind, w.name, str(w.span)) == (MISSPELT, "reahc", "t.p:4:23")
    assert "did you mean 'reach' (used 4 times)?" in w.message


def test_tptp_has_no_free_name_warnings():
    # a lowercase x is always a constant in TPTP, whatever the scope
    text = "fof(a1, axiom, ![U]: (admin(v) => staff(U))).\nfof(g, conjecture, staff(bob)).\n"
    assert warnings_of(text, "t.p") == []


# -- the corpus --------------------------------------------------------------

def _corpus_problems():
    for f in sorted(glob.glob(str(REPO / "corpus/**/*.nj"), recursive=True)
                    + glob.glob(str(REPO / "corpus/**/*.p"), recursive=True)):
        yield f, f, disk_reader()
    # the demo's conjecture files read with each version of its axioms
    base = disk_reader()
    for ax in ("axioms", "axioms-v2"):
        axf = sorted(glob.glob(str(REPO / "corpus/demo" / ax / "*.nj")))
        for c in sorted(glob.glob(str(REPO / "corpus/demo/conjectures/*.nj"))):
            probe = "".join(f'include "{a}"\n' for a in axf + [c])
            yield f"{c} with {ax}", "probe.nj", (
                lambda n, probe=probe: probe if n == "probe.nj" else base(n))


def test_the_corpus_gives_no_warnings():
    seen = {}
    for label, main, read in _corpus_problems():
        seen[label] = [w.render() for w in find_warnings(load_problem(main, read), read)]
    assert len(seen) == 172
    assert {k: v for k, v in seen.items() if v} == {}


def test_every_seeded_variable_typo_in_the_native_corpus_is_caught():
    """In every statement of a native corpus file that binds variables, the
    first use of a variable after its binder is retyped as a fresh name of
    one letter, of the variable's case: each must be reported."""
    tried, missed = 0, []
    for f in sorted(glob.glob(str(REPO / "corpus/**/*.nj"), recursive=True)):
        text = Path(f).read_text()
        src = Source(f, text)
        k, t, o = tokenize_native(src)
        for st in load_problem(f).statements:
            if st.span.file != f or not st.varnames:
                continue
            start = src.starts()[st.span.line - 1] + st.span.col - 1
            bound = set(st.varnames.values())
            dot, target = False, None
            for i in range(len(o)):
                if not start <= o[i] < start + len(st.text):
                    continue
                if k[i] == ".":
                    dot = True
                elif (dot and k[i] == "name" and t[i] in bound and k[i + 1] != "("
                      and k[i - 1] not in ("forall", "exists", "name")):
                    target = i
                    break
            if target is None:
                continue
            pool = string.ascii_uppercase if t[target][0].isupper() else string.ascii_lowercase
            fresh = next(c for c in reversed(pool) if c not in t and c not in bound)
            typo = text[:o[target]] + fresh + text[o[target] + len(t[target]):]
            read = (lambda n, f=f, typo=typo: typo if n == f else disk_reader()(n))
            tried += 1
            ws = find_warnings(load_problem(f, read), read)
            if not any(w.name == fresh and w.statement == st.name for w in ws):
                missed.append((f, st.name, t[target], fresh))
    assert tried > 200 and missed == []


# -- obligations ---------------------------------------------------------------

def test_each_obligation_gets_its_own_conjectures_warnings():
    text = STAFF + "conjecture c2: forall u. staff(u) implies admin(w)\n"
    ws = warnings_of(text)
    assert [w.name for w in ws] == ["v", "w"]
    assert [w.name for w in for_obligation(ws, "bob_staff")] == ["v"]
    assert [w.name for w in for_obligation(ws, "c2")] == ["v", "w"]
    assert [w.name for w in for_obligation(ws, None)] == ["v", "w"]


# -- check, prove, submit -----------------------------------------------------

def test_check_shows_warnings_on_stderr_and_keeps_exit_0(tmp_path, capsys):
    f = write(tmp_path, "staff.nj", STAFF)
    code, out, err = run(["check", f], capsys)
    assert code == 0
    assert out.splitlines()[0] == f"{f}: fine (native, 3 statements, 1 file read, 1 warning)"
    assert err.startswith(f"{f}:3:27: warning: 'v' is read as a constant")
    assert "\n    axiom a1: forall u. admin(v) implies staff(u)\n" in err
    code, out, err = run(["check", "--json", f], capsys)
    assert code == 0 and err == ""
    (w,) = json.loads(out)["files"][0]["warnings"]
    assert {k: w[k] for k in ("kind", "name", "statement", "file", "line", "col")} == {
        "kind": "free-name", "name": "v", "statement": "a1", "file": f, "line": 3, "col": 27}
    assert w["text"].startswith(f"{f}:3:27: warning: ") and w["hint"]


def test_check_of_a_clean_file_prints_no_warning(tmp_path, capsys):
    f = write(tmp_path, "fixed.nj", STAFF.replace("admin(v)", "admin(u)"))
    code, out, err = run(["check", f], capsys)
    assert code == 0 and err == "" and "warning" not in out


def test_prove_shows_warnings_once_per_file_on_stderr(tmp_path, capsys):
    f = write(tmp_path, "staff.nj", STAFF + "conjecture c2: staff(bob) or staff(bob)\n")
    code, out, err = run(["prove", f, "--time-limit", "5"], capsys)
    assert code == 0
    assert err.count("warning:") == 1 and f"{f}:3:27: warning:" in err
    assert "bob_staff: CounterSatisfiable" in out and "warning:" not in out


def test_prove_help_says_goal_first_is_incomplete(capsys):
    with pytest.raises(SystemExit):
        cli_main(["prove", "--help"])
    out = " ".join(capsys.readouterr().out.split())
    assert "goal-first (set of support) is incomplete: it may give up (GaveUp)" in out


def test_submit_passes_the_warnings_on(service, tmp_path, monkeypatch, capsys):  # noqa: F811
    monkeypatch.chdir(tmp_path)
    write(tmp_path, "staff.nj", STAFF)
    code, out, err = run(["submit", "staff.nj"], capsys)
    assert code == 0 and out.startswith("batch ")
    assert err.startswith("staff.nj:3:27: warning: 'v' is read as a constant")
    code, out, err = run(["submit", "--json", "staff.nj"], capsys)
    sub = json.loads(out)
    assert code == 0 and err == "" and [w["name"] for w in sub["warnings"]] == ["v"]


def test_submit_wait_json_lists_each_jobs_warnings(service, tmp_path, monkeypatch,  # noqa: F811
                                                   capsys):
    monkeypatch.chdir(tmp_path)
    write(tmp_path, "ax/rules.nj", "axiom a1: forall u. admin(v) implies staff(u)\n"
                                   "axiom a2: admin(bob)\n")
    write(tmp_path, "c/one.nj", "conjecture t1: staff(bob)\n")
    write(tmp_path, "c/two.nj", "conjecture t2: forall x. staff(x) implies admin(y)\n")

    def wait(bid, on_progress=None, **kw):
        service.run()
        return service.batch(bid)
    monkeypatch.setattr(service, "wait", wait)
    code, out, err = run(["submit", "--wait", "--json", "c/one.nj", "c/two.nj",
                          "--axioms", "ax/rules.nj"], capsys)
    assert code == 0
    lines = {j["conjecture"]: j for j in map(json.loads, out.splitlines())}
    assert [w["name"] for w in lines["t1"]["warnings"]] == ["v"]
    assert [w["name"] for w in lines["t2"]["warnings"]] == ["v", "y"]
    assert lines["t2"]["warnings"][1]["file"] == "c/two.nj"
    # human: every warning once, the axioms' one not repeated per file
    monkeypatch.setattr(service, "wait", wait)
    code, out, err = run(["submit", "c/one.nj", "c/two.nj", "--axioms", "ax/rules.nj"],
                         capsys)
    assert code == 0 and err.count("warning:") == 2


def test_the_documented_goal_first_example_holds(tmp_path, capsys):
    """README and DEVELOPERS.md: in a band, ((x * y) * x) * y = x * y needs an
    inference between two axioms; goal-first gives up, the default proves it."""
    f = write(tmp_path, "band.nj",
              "axiom assoc: forall x y z. (x * y) * z = x * (y * z)\n"
              "axiom idem: forall x. x * x = x\n"
              "conjecture c1: forall x y. ((x * y) * x) * y = x * y\n")
    code, out, _ = run(["prove", f, "--strategy", "goal-first", "--time-limit", "5",
                        "--no-models", "--json"], capsys)
    assert code == 3 and json.loads(out)["status"] == "GaveUp"
    code, out, _ = run(["prove", f, "--time-limit", "10", "--json"], capsys)
    assert code == 0 and json.loads(out)["status"] == "Theorem"


def test_warnings_never_fail_on_whatever_reads():
    """Texts cut from the corpus at random places: whatever reads gets its
    warnings without an exception, with and without the file's text."""
    import random
    rnd = random.Random(7)
    texts = [Path(f).read_text() for f in
             sorted(glob.glob(str(REPO / "corpus/**/*.nj"), recursive=True))
             + sorted(glob.glob(str(REPO / "corpus/**/*.p"), recursive=True))
             if "include" not in Path(f).read_text()]
    read = 0
    for _ in range(600):
        t = rnd.choice(texts)
        a = rnd.randrange(len(t))
        b = min(len(t), a + rnd.randrange(1, 12))
        cut = t[:a] + rnd.choice(["", "v", "(", ")", "'", " x", "forall z."]) + t[b:]
        name = "t.p" if "fof(" in t or "cnf(" in t else "t.nj"
        try:
            problem = parse_text(cut, name)
        except Exception as e:                  # noqa: BLE001
            assert type(e).__name__ in ("InputError", "LimitError"), e
            continue
        read += 1
        for text_of in (None, lambda n: cut, lambda n: cut[: len(cut) // 2]):
            for w in find_warnings(problem, text_of):
                assert w.render().startswith(f"{name}:{w.span.line}:{w.span.col}: warning: ")
    assert read > 100


def test_submit_reads_for_warnings_as_it_reads_to_send(service, tmp_path,  # noqa: F811
                                                       monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    write(tmp_path, "lib/rules.nj", "axiom a1: forall u. admin(v) implies staff(u)\n")
    write(tmp_path, "work/c.nj", 'include "rules.nj"\nconjecture g: staff(bob)\n')
    code, out, err = run(["submit", "--json", "work/c.nj", "--include-root", "lib"], capsys)
    assert code == 0
    (w,) = json.loads(out)["warnings"]
    assert (w["name"], w["file"], w["line"]) == ("v", "lib/rules.nj", 1)
