"""A corpus of bad inputs, each run through the real command line (``python -m symcluster``)
as a subprocess.

Every case must exit with code 2, print exactly one line on standard error starting
``symcluster: error: ``, print nothing on standard output, show no traceback, and leave
its working directory exactly as it was (no file appeared, changed, or lost its kind: a
FIFO stays a FIFO, a device a device, a link a link).

Each case runs in a fresh directory holding a copy of the two-site cluster file
``dimer.toml`` and whatever its ``setup`` makes.  ``{d}`` in an argument is that
directory, ``{bad}`` the folder tests/bad_inputs (small bad cluster files, copied into the
case's directory first so that they are checked for changes too).  The subprocesses run in
a few threads at once; each is limited to 4 GiB of address space (set before ``exec`` of
the interpreter, so a regression that reads /dev/zero without limit ends in an error, not
in a machine out of memory) and to 120 s.

Most cases are marked slow; the default suite runs every case marked ``FAST`` (at least
40 of them).  Source of the expectations: the rules of docs/cli.md, "Errors and exit codes".
"""

import concurrent.futures
import hashlib
import os
import shutil
import stat
import subprocess
import sys

import pytest

import symcluster

HERE = os.path.dirname(os.path.abspath(__file__))
BAD = os.path.join(HERE, "bad_inputs")
ROOT = os.path.dirname(os.path.dirname(os.path.abspath(symcluster.__file__)))
DIMER = 'format = "symcluster-cluster"\nname = "dimer"\nsites = 2\nbonds = [[0, 1]]\n'
LIMIT_BYTES = 4 << 30
TIMEOUT = 120
WORKERS = 4

# runs ``python -m symcluster ARGS`` after lowering its address-space limit
_LAUNCH = ("import os, resource, sys; "
           f"resource.setrlimit(resource.RLIMIT_AS, ({LIMIT_BYTES}, {LIMIT_BYTES})); "
           "os.execv(sys.executable, [sys.executable, '-m', 'symcluster'] + sys.argv[1:])")


# ---------------------------------------------------------------- set-ups

def _mknod(path, numbers):
    os.mknod(path, 0o666 | stat.S_IFCHR, os.makedev(*numbers))


SETUPS = {
    "fifo": lambda d: os.mkfifo(os.path.join(d, "out.fifo")),
    "null": lambda d: _mknod(os.path.join(d, "null"), (1, 3)),     # numbers of /dev/null
    "full": lambda d: _mknod(os.path.join(d, "full"), (1, 7)),     # numbers of /dev/full
    "dir": lambda d: os.mkdir(os.path.join(d, "outdir")),
    "link-input": lambda d: os.symlink("dimer.toml", os.path.join(d, "link.json")),
    "hard-input": lambda d: os.link(os.path.join(d, "dimer.toml"), os.path.join(d, "hard.json")),
    "link-loop": lambda d: (os.symlink("loop2", os.path.join(d, "loop1")),
                            os.symlink("loop1", os.path.join(d, "loop2"))),
    "link-dir": lambda d: (os.mkdir(os.path.join(d, "sub")),
                           os.symlink("sub", os.path.join(d, "tosub.json"))),
    "link-fifo": lambda d: (os.mkfifo(os.path.join(d, "out.fifo")),
                            os.symlink("out.fifo", os.path.join(d, "tofifo.json"))),
    "link-out": lambda d: os.symlink("a.json", os.path.join(d, "b.json")),
    "dangling-nodir": lambda d: os.symlink("nowhere/x.json", os.path.join(d, "dangling.json")),
    "existing-out": lambda d: _write(os.path.join(d, "old.json"), "keep me\n"),
    "big": lambda d: _write(os.path.join(d, "big.toml"), DIMER + "#" + "x" * 1_100_000 + "\n"),
    "plot-pdf-dir": lambda d: os.mkdir(os.path.join(d, "lv.pdf")),
    "plot-png-fifo": lambda d: os.mkfifo(os.path.join(d, "lv.png")),
}


def _write(path, text):
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(text)


# ---------------------------------------------------------------- the corpus

def _bad_files():
    return sorted(f for f in os.listdir(BAD) if f.endswith(".toml"))


FAST = "fast"
CASES = []          # (id, argv, setup or None, fast?)


def case(cid, argv, setup=None, fast=False):
    CASES.append((cid, list(argv), setup, fast))


# shapes and sizes
for cid, argv in [
    ("shape-word", ["ring", "x"]), ("ring-2", ["ring", "2"]), ("ring-0", ["ring", "0"]),
    ("ring-neg", ["ring", "-3"]), ("ring-extra", ["ring", "4", "5"]), ("grid-1", ["grid", "2"]),
    ("unknown-shape", ["hexagon", "6"]), ("levels-nothing", ["levels"]),
    ("size-exp", ["chain", "1e3"]), ("size-7-digits", ["chain", "9999999"]),
    ("size-hex", ["chain", "0x10"]), ("star-0", ["star", "0"]), ("complete-1", ["complete", "1"]),
    ("tetra-size", ["tetrahedron", "4"]), ("cube-size", ["cube", "2"]), ("pgrid-1", ["pgrid", "3"]),
    ("ladder-0", ["ladder", "0"]), ("size-unicode", ["chain", "٣"]),
    ("size-float", ["chain", "2.0"]), ("huge-chain", ["chain", "20000"]),
    ("complete-8-automorphisms", ["complete", "8", "--electrons", "1"]),
    ("unknown-command-option", ["shapes", "--frob"]),
]:
    case(cid, argv, fast=cid in ("shape-word", "ring-2", "unknown-shape", "size-7-digits",
                                 "complete-8-automorphisms"))

# electrons, --at, --digits and other options of levels
for cid, argv in [
    ("el-5", ["--electrons", "5"]), ("el-word", ["--electrons", "two"]),
    ("el-backwards", ["--electrons", "3-1"]), ("el-neg", ["--electrons=-1"]),
    ("el-empty", ["--electrons", ""]), ("el-double-comma", ["--electrons", "1,,2"]),
    ("el-huge", ["--electrons", "1-99999999999"]),
    ("at-missing-U", ["--at", "t=1"]), ("at-unknown", ["--at", "t=1,U=4,x=2"]),
    ("at-word", ["--at", "t=one,U=4"]), ("at-div0", ["--at", "t=1/0,U=4"]),
    ("at-nan", ["--at", "t=nan,U=4"]), ("at-inf", ["--at", "t=inf,U=4"]),
    ("at-exp-long", ["--at", "t=1e99999,U=4"]), ("at-code", ["--at", "t=__import__('os'),U=4"]),
    ("at-empty", ["--at", ""]), ("at-twice", ["--at", "t=1,t=2,U=4"]),
    ("at-semicolon", ["--at", "t=1;U=4"]), ("at-arabic-digit", ["--at", "t=١,U=4"]),
    ("at-frac-decimal", ["--at", "t=2.5/3,U=4"]), ("at-long", ["--at", "t=1,U=" + "1" * 1001]),
    ("at-keyword", ["--at", "None=1,t=1,U=4"]), ("at-no-value", ["--at"]),
    ("digits-0", ["--digits", "0"]), ("digits-1001", ["--digits", "1001"]),
    ("digits-word", ["--digits", "abc"]), ("digits-neg", ["--digits", "-5"]),
    ("no-verify", ["--no-verify"]), ("standalone-alone", ["--standalone"]),
    ("bogus-option", ["--bogus"]),
]:
    case(cid, ["levels", "chain", "2"] + argv,
         fast=cid in ("el-5", "el-backwards", "at-missing-U", "at-code", "at-nan", "digits-0",
                      "no-verify", "at-arabic-digit"))

# cluster files
case("cf-missing", ["levels", "--cluster-file", "{d}/missing.toml"], fast=True)
case("cf-and-shape", ["levels", "chain", "2", "--cluster-file", "{d}/dimer.toml"], fast=True)
case("cf-dev-zero", ["levels", "--cluster-file", "/dev/zero"], fast=True)
case("cf-directory", ["levels", "--cluster-file", "{d}"])
case("cf-big", ["levels", "--cluster-file", "{d}/big.toml"], "big", fast=True)
for name in _bad_files():
    case("toml-" + name[:-5], ["levels", "--cluster-file", "{bad}/" + name],
         fast=name in ("not-toml.toml", "bond-self.toml", "bond-label-class.toml",
                       "name-newline.toml", "not-utf8.toml", "bond-label-expr.toml",
                       "bond-nested.toml", "version-true.toml"))
for name in ("bond-label-None.toml", "sites-0.toml", "empty.toml"):
    case("gaps-toml-" + name[:-5], ["gaps", "--cluster-file", "{bad}/" + name, "--sector", "1"])

# output files
OUT = ["levels", "chain", "2", "--at", "t=1,U=4"]
case("out-no-dir", OUT + ["--json", "{d}/nodir/x.json"], fast=True)
case("out-proc", OUT + ["--json", "/proc/symcluster-test.json"])
case("out-directory", OUT + ["--json", "{d}/outdir"], "dir", fast=True)
case("out-fifo", OUT + ["--json", "{d}/out.fifo"], "fifo", fast=True)
case("out-fifo-latex", OUT + ["--latex", "{d}/out.fifo", "--json", "{d}/good.json"], "fifo")
case("out-null", OUT + ["--json", "{d}/null"], "null", fast=True)
case("out-full", OUT + ["--latex", "{d}/full"], "full")
case("out-null-second", OUT + ["--latex", "{d}/good.tex", "--json", "{d}/null"], "null")
case("out-is-input", ["levels", "--cluster-file", "{d}/dimer.toml", "--json", "{d}/dimer.toml"],
     fast=True)
case("out-latex-is-input", ["levels", "--cluster-file", "{d}/dimer.toml",
                            "--latex", "{d}/dimer.toml"])
case("out-link-to-input", ["levels", "--cluster-file", "{d}/dimer.toml",
                           "--json", "{d}/link.json"], "link-input", fast=True)
case("out-hard-link-input", ["levels", "--cluster-file", "{d}/dimer.toml",
                             "--json", "{d}/hard.json"], "hard-input")
case("out-same-twice", OUT + ["--json", "{d}/a.json", "--latex", "{d}/a.json"], fast=True)
case("out-same-dot", OUT + ["--json", "{d}/a.json", "--latex", "{d}/./a.json"])
case("out-same-via-link", OUT + ["--json", "{d}/a.json", "--latex", "{d}/b.json"], "link-out")
case("out-link-loop", OUT + ["--json", "{d}/loop1"], "link-loop")
case("out-link-to-dir", OUT + ["--json", "{d}/tosub.json"], "link-dir")
case("out-link-to-fifo", OUT + ["--json", "{d}/tofifo.json"], "link-fifo")
case("out-dangling-no-dir", OUT + ["--json", "{d}/dangling.json"], "dangling-nodir")
case("out-existing-kept", OUT + ["--json", "{d}/old.json", "--latex", "{d}/null"],
     ("existing-out", "null"))
case("out-gaps-latex-input", ["gaps", "--cluster-file", "{d}/dimer.toml", "--sector", "2",
                              "--latex", "{d}/dimer.toml"], fast=True)
case("out-gaps-latex-fifo", ["gaps", "chain", "2", "--sector", "2", "--latex", "{d}/out.fifo"],
     "fifo")
case("out-thermo-latex-null", ["thermo", "chain", "2", "--latex", "{d}/null"], "null")
case("out-plot-pdf-dir", ["plot", "chain", "2", "--output", "{d}/lv"], "plot-pdf-dir")
case("out-plot-png-fifo", ["plot", "chain", "2", "--output", "{d}/lv"], "plot-png-fifo",
     fast=True)
case("out-plot-no-dir", ["plot", "chain", "2", "--output", "{d}/nodir/lv"])

# analysis subcommands
C2 = ["chain", "2"]
for cid, argv, fast in [
    ("gaps-sector-9", ["gaps", "ring", "4", "--sector", "9"], True),
    ("gaps-sector-neg", ["gaps"] + C2 + ["--sector=-1"], False),
    ("gaps-no-sector", ["gaps"] + C2, True),
    ("gaps-sector-word", ["gaps"] + C2 + ["--sector", "two"], False),
    ("gaps-over-empty", ["gaps", "ring", "4", "--sector", "4", "--over", "U:5:1"], True),
    ("gaps-over-unknown", ["gaps", "ring", "4", "--sector", "4", "--over", "V:0:1"], True),
    ("gaps-over-no-range", ["gaps"] + C2 + ["--sector", "2", "--over", "U"], False),
    ("gaps-over-words", ["gaps"] + C2 + ["--sector", "2", "--over", "U:a:b"], False),
    ("gaps-over-equal", ["gaps"] + C2 + ["--sector", "2", "--over", "U:1:1"], False),
    ("gaps-missing-sectors", ["gaps", "ring", "4", "--sector", "4", "--electrons", "4"], True),
    ("gaps-at-missing", ["gaps"] + C2 + ["--sector", "2", "--at", "t=1"], False),
    ("gaps-at-unknown", ["gaps"] + C2 + ["--sector", "2", "--at", "x=1"], False),
    ("gaps-at-code", ["gaps"] + C2 + ["--sector", "2", "--at", "t=exec('1')", "U=4"], False),
    ("gaps-digits-0", ["gaps"] + C2 + ["--sector", "2", "--digits", "0"], False),
    ("gaps-no-cluster", ["gaps", "--sector", "2"], False),
    ("gaps-both-clusters", ["gaps"] + C2 + ["--cluster-file", "{d}/dimer.toml",
                                            "--sector", "2"], False),
    ("thermo-T0", ["thermo"] + C2 + ["--temperatures", "0"], True),
    ("thermo-T-neg", ["thermo"] + C2 + ["--temperatures", "1", "-1"], True),
    ("thermo-T-word", ["thermo"] + C2 + ["--temperatures", "hot"], False),
    ("thermo-T-nan", ["thermo"] + C2 + ["--temperatures", "nan"], False),
    ("thermo-T-div0", ["thermo"] + C2 + ["--temperatures", "1/0"], False),
    ("thermo-T-too-many", ["thermo"] + C2 + ["--temperatures"] + ["1"] * 1001, True),
    ("thermo-mu-too-many", ["thermo"] + C2 + ["--mu"] + ["0"] * 1001, False),
    ("thermo-rows", ["thermo"] + C2 + ["--temperatures"] + ["1"] * 200 + ["--mu"] + ["0"] * 60,
     False),
    ("thermo-mu-word", ["thermo"] + C2 + ["--mu", "x"], False),
    ("thermo-field-word", ["thermo"] + C2 + ["--field", "strong"], False),
    ("thermo-partial-grand", ["thermo", "ring", "4", "--electrons", "3,4", "--temperatures", "1",
                              "--mu", "2"], True),
    ("thermo-sector-9", ["thermo"] + C2 + ["--sector", "9"], False),
    ("thermo-sector-unsolved", ["thermo"] + C2 + ["--sector", "2", "--electrons", "3"], False),
    ("thermo-no-T", ["thermo"] + C2 + ["--temperatures"], False),
    ("series-order-huge", ["series"] + C2 + ["--sector", "2", "--order", "1000000"], True),
    ("series-order-neg", ["series"] + C2 + ["--sector", "2", "--order=-1"], False),
    ("series-order-51", ["series"] + C2 + ["--sector", "2", "--order", "51"], False),
    ("series-order-word", ["series"] + C2 + ["--sector", "2", "--order", "x"], False),
    ("series-level-neg", ["series"] + C2 + ["--sector", "2", "--level=-1"], False),
    ("series-level-99", ["series"] + C2 + ["--sector", "2", "--level", "99"], True),
    ("series-coupling", ["series"] + C2 + ["--sector", "2", "--coupling", "V"], False),
    ("series-about-word", ["series"] + C2 + ["--sector", "2", "--about", "far"], False),
    ("series-no-sector", ["series"] + C2 + ["--electrons", "1,2"], True),
    ("series-sector-5", ["series"] + C2 + ["--sector", "5"], False),
    ("deriv-coupling", ["derivative"] + C2 + ["--sector", "2", "--coupling", "V"], False),
    ("deriv-level-99", ["derivative"] + C2 + ["--sector", "2", "--level", "99"], False),
    ("deriv-no-sector", ["derivative"] + C2 + ["--electrons", "1,2"], False),
    ("deriv-sector-neg", ["derivative"] + C2 + ["--sector=-1"], False),
    ("map-range-backwards", ["ground-map"] + C2 + ["--range", "3:1"], True),
    ("map-range-word", ["ground-map"] + C2 + ["--range", "x"], False),
    ("map-range-equal", ["ground-map"] + C2 + ["--range", "1:1"], False),
    ("map-coupling", ["ground-map"] + C2 + ["--coupling", "V"], False),
    ("map-fixed-swept", ["ground-map"] + C2 + ["--fixed", "t=1", "U=2"], False),
    ("map-fixed-unknown", ["ground-map"] + C2 + ["--fixed", "V=1"], False),
    ("map-no-sector", ["ground-map"] + C2 + ["--electrons", "1,2"], False),
    ("map-sector-7", ["ground-map"] + C2 + ["--sector", "7"], False),
    ("plot-color-bogus", ["plot"] + C2 + ["--color-by", "bogus"], True),
    ("plot-latex", ["plot"] + C2 + ["--latex", "{d}/p.tex"], False),
    ("plot-range-backwards", ["plot"] + C2 + ["--range", "5:1"], False),
    ("plot-sector-9", ["plot"] + C2 + ["--sector", "9"], False),
    ("plot-no-sector", ["plot"] + C2 + ["--electrons", "1,2"], False),
    ("plot-color-absent", ["plot", "chain", "2", "--sector", "2", "--color-by", "Sz"], False),
]:
    case(cid, argv, fast=fast)


# ---------------------------------------------------------------- running them

def _expand(argv, d):
    return [a.replace("{d}", d).replace("{bad}", d) for a in argv]


def _snapshot(d):
    """{relative path: (kind, mode, content hash or link target)} of everything under d."""
    out = {}
    for top, dirs, files in os.walk(d):
        for name in dirs + files:
            p = os.path.join(top, name)
            st = os.lstat(p)
            if stat.S_ISLNK(st.st_mode):
                what = os.readlink(p)
            elif stat.S_ISREG(st.st_mode):
                with open(p, "rb") as fh:
                    what = hashlib.sha256(fh.read()).hexdigest()
            else:
                what = (st.st_rdev if stat.S_ISCHR(st.st_mode) else None)
            out[os.path.relpath(p, d)] = (stat.S_IFMT(st.st_mode), stat.S_IMODE(st.st_mode), what)
    return out


def _prepare(base, cid, argv, setup):
    d = os.path.join(base, cid)
    os.mkdir(d)
    _write(os.path.join(d, "dimer.toml"), DIMER)
    for a in argv:
        if a.startswith("{bad}/"):
            shutil.copyfile(os.path.join(BAD, a[len("{bad}/"):]), os.path.join(d, a[6:]))
    for name in ([setup] if isinstance(setup, str) else list(setup or ())):
        try:
            SETUPS[name](d)
        except PermissionError:
            return None                 # e.g. mknod without root: the case is skipped
    return d


def _run(d, argv):
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        [ROOT] + [p for p in os.environ.get("PYTHONPATH", "").split(os.pathsep) if p]))
    env.pop("PYTHONWARNINGS", None)
    before = _snapshot(d)
    try:
        run = subprocess.run([sys.executable, "-c", _LAUNCH] + _expand(argv, d), cwd=d, env=env,
                             capture_output=True, text=True, timeout=TIMEOUT,
                             stdin=subprocess.DEVNULL)
    except subprocess.TimeoutExpired:
        return {"timeout": True}
    return {"timeout": False, "rc": run.returncode, "out": run.stdout, "err": run.stderr,
            "before": before, "after": _snapshot(d)}


def _run_all(cases, base):
    jobs = {}
    with concurrent.futures.ThreadPoolExecutor(max_workers=WORKERS) as pool:
        for cid, argv, setup, _fast in cases:
            d = _prepare(base, cid, argv, setup)
            jobs[cid] = None if d is None else pool.submit(_run, d, argv)
        return {cid: (None if f is None else f.result()) for cid, f in jobs.items()}


@pytest.fixture(scope="module")
def fast_results(tmp_path_factory):
    return _run_all([c for c in CASES if c[3]], str(tmp_path_factory.mktemp("fast")))


@pytest.fixture(scope="module")
def slow_results(tmp_path_factory):
    return _run_all([c for c in CASES if not c[3]], str(tmp_path_factory.mktemp("slow")))


def _check(res):
    if res is None:
        pytest.skip("this case's set-up needs root (mknod)")
    assert not res["timeout"], f"no answer within {TIMEOUT} s"
    err = res["err"]
    assert res["rc"] == 2, (res["rc"], err[-2000:])
    assert "Traceback" not in err, err[-2000:]
    lines = err.splitlines()
    assert len(lines) == 1 and err.endswith("\n"), err[-2000:]
    assert lines[0].startswith("symcluster: error: ") and ";" in lines[0], lines[0]
    assert res["out"] == ""
    assert res["after"] == res["before"]


def test_the_corpus_is_large_enough():
    ids = [c[0] for c in CASES]
    assert len(ids) == len(set(ids))
    assert len(CASES) >= 150 and sum(c[3] for c in CASES) >= 40


@pytest.mark.parametrize("cid", [c[0] for c in CASES if c[3]])
def test_bad_input_fast(cid, fast_results):
    _check(fast_results[cid])


@pytest.mark.slow
@pytest.mark.parametrize("cid", [c[0] for c in CASES if not c[3]])
def test_bad_input(cid, slow_results):
    _check(slow_results[cid])
