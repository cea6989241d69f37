#!/usr/bin/python3
"""Side-by-side benchmark: rankplan against the same work done in Python (bench/reference.py,
pandas + scipy + statsmodels) on the same invented data files.

    /usr/bin/python3 bench/side-by-side.py                      # every workload and size, 5 repetitions
    /usr/bin/python3 bench/side-by-side.py --smoke              # 10^4 rows, 1 repetition (CI)
    /usr/bin/python3 bench/side-by-side.py --sizes 1e4,1e6 -r 3 --markdown bench/RESULTS.md

Run it from anywhere with Debian's /usr/bin/python3 (python3-pandas, python3-scipy,
python3-statsmodels) and Go on the PATH. It builds rankplan and bench/cmd/benchdata, writes
the data files (kept under --work between runs), and for every case runs both sides R times
in alternation (rankplan first on even repetitions, the script first on odd ones), each as
one whole process, measuring its wall time (time.perf_counter around the child) and its peak
resident memory (ru_maxrss from os.wait4). It prints the medians and the ratios
rankplan/script as a table, writes them with the machine, versions and every single
measurement to a JSON file, and checks after the first repetition that both sides computed
the same thing: H, its asymptotic p (rankplan gives only its log10 below the smallest
normal double, where scipy's p is 0), the log10 of that p and, for the pairwise workloads,
every pair's Dunn z, p, Holm-adjusted p, Cliff's delta and Hodges-Lehmann shift agree
within 1e-9 * max(1, |a|, |b|) (absolute below 1, relative above). Bootstrap intervals come from
different random streams and are reported, not compared; the two Monte Carlo p-values must
lie within five standard errors of their difference (plus 2/B). The Monte Carlo plan also
runs with --workers 1, 2 and 8, whose results.json must be the same bytes. Any failed
check or command makes the exit status 1.

Cases (the data are invented, see bench/cmd/benchdata):
  kw    bench/plans/kw.yaml: Kruskal-Wallis, asymptotic p, no interval of the effect
  dunn  bench/plans/dunn.yaml: kw + Dunn for all pairs + Holm + pairwise effect sizes
  full  bench/plans/full.yaml: dunn + percentile bootstrap interval, 2000 resamples
        at each size of --sizes (10 groups, shift 0.01 on the log scale, seed 1), and
        at 30 rows in 3 groups (shift 0.3, seed 3): the small-run case;
  mc    bench/plans/mc.yaml: Monte Carlo p from 10^4 resamples, 1000 rows in 4 groups
        (shift 0.05, seed 4).

A side whose first repetition takes longer than --max-seconds (default 300) is not
repeated: its row shows the repetitions it got. Timings on a shared machine are noisy: the
load average before and after is recorded beside the figures.
"""

import argparse
import datetime
import hashlib
import json
import os
import platform
import shlex
import shutil
import statistics
import subprocess
import sys
import tempfile
import time

BENCH = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(BENCH)
PYTHON = "/usr/bin/python3"

WORKLOADS = ("kw", "dunn", "full")
SMALL = {"rows": 30, "groups": 3, "shift": 0.3, "seed": 3}
MC = {"rows": 1000, "groups": 4, "shift": 0.05, "seed": 4}
LARGE = {"groups": 10, "shift": 0.01, "seed": 1}
PLAN_SEED = 15  # the seed: key of bench/plans/*.yaml, passed to the script too
TOL = 1e-9

# The markers of the section that --markdown rewrites.
MARKER_BEGIN = "<!-- side-by-side:begin (written by bench/side-by-side.py --markdown) -->"
MARKER_END = "<!-- side-by-side:end -->"


def parse_sizes(text):
    sizes = []
    for part in text.split(","):
        part = part.strip()
        if not part:
            continue
        n = int(float(part))
        if n < 100 or n > 100_000_000 or float(part) != n:
            raise argparse.ArgumentTypeError(f"size {part!r}: want a whole number of rows from 100 to 10^8")
        sizes.append(n)
    if not sizes:
        raise argparse.ArgumentTypeError("no sizes given")
    return sizes


def run(cmd, stdout_path, cwd=None):
    """Runs cmd as one child process; returns (wall seconds, peak RSS in KiB, exit status)."""
    with open(stdout_path, "wb") as out, open(stdout_path + ".stderr", "wb") as err:
        start = time.perf_counter()
        proc = subprocess.Popen(cmd, stdout=out, stderr=err, cwd=cwd)
        _, status, usage = os.wait4(proc.pid, 0)
        wall = time.perf_counter() - start
        proc.returncode = os.waitstatus_to_exitcode(status)
    return wall, usage.ru_maxrss, proc.returncode


def sha256(path):
    h = hashlib.sha256()
    with open(path, "rb") as f:
        for block in iter(lambda: f.read(1 << 20), b""):
            h.update(block)
    return h.hexdigest()


def output(cmd, **kw):
    return subprocess.run(cmd, check=True, capture_output=True, text=True, **kw).stdout.strip()


def environment(exe):
    """The machine and the versions of both sides."""
    model = ""
    with open("/proc/cpuinfo") as f:
        for line in f:
            if line.startswith("model name"):
                model = line.split(":", 1)[1].strip()
                break
    mem_kib = 0
    with open("/proc/meminfo") as f:
        for line in f:
            if line.startswith("MemTotal:"):
                mem_kib = int(line.split()[1])
    py = output([PYTHON, "-c", "import sys, numpy, pandas, scipy, statsmodels; print(sys.version.split()[0], "
                 "numpy.__version__, pandas.__version__, scipy.__version__, statsmodels.__version__)"]).split()
    try:
        revision = output(["git", "rev-parse", "--short=12", "HEAD"], cwd=ROOT)
        if output(["git", "status", "--porcelain", "--untracked-files=no"], cwd=ROOT):
            revision += " (with uncommitted changes)"
    except (OSError, subprocess.CalledProcessError):
        revision = "unknown"
    return {
        "cpu": model, "nproc": os.cpu_count(), "memory_gib": round(mem_kib / 2**20, 1),
        "kernel": platform.release(), "go": output(["go", "version"]),
        "rankplan": output([exe, "version"]).splitlines()[0].removeprefix("rankplan ").strip(),
        "revision": revision,
        "python": py[0], "numpy": py[1], "pandas": py[2], "scipy": py[3], "statsmodels": py[4],
    }


def build(work):
    bindir = os.path.join(work, "bin")
    os.makedirs(bindir, exist_ok=True)
    exe = os.path.join(bindir, "rankplan")
    gen = os.path.join(bindir, "benchdata")
    subprocess.run(["go", "build", "-o", exe, "./cmd/rankplan"], cwd=ROOT, check=True)
    subprocess.run(["go", "build", "-o", gen, "./bench/cmd/benchdata"], cwd=ROOT, check=True)
    return exe, gen


def dataset(work, gen, rows, groups, shift, seed):
    """The folder holding data.csv for these settings (written once) and copies of the plans."""
    d = os.path.join(work, "data", f"rows{rows}-k{groups}-shift{shift}-seed{seed}")
    csv = os.path.join(d, "data.csv")
    if not os.path.exists(csv):
        os.makedirs(d, exist_ok=True)
        tmp = csv + ".tmp"
        if os.path.exists(tmp):
            os.remove(tmp)
        subprocess.run([gen, "-rows", str(rows), "-groups", str(groups), "-shift", repr(shift),
                        "-seed", str(seed), "-out", tmp], check=True)
        os.rename(tmp, csv)
    for name in ("kw", "dunn", "full", "mc"):
        shutil.copyfile(os.path.join(BENCH, "plans", name + ".yaml"), os.path.join(d, name + ".yaml"))
    return d


def close(a, b):
    return a is not None and b is not None and abs(a - b) <= TOL * max(1.0, abs(a), abs(b))


def compare(workload, results_path, script_path):
    """The differences found between rankplan's results.json and the script's output."""
    with open(results_path) as f:
        a = json.load(f)["analyses"][0]
    with open(script_path) as f:
        s = json.load(f)
    bad = []
    kw = a.get("kruskal_wallis") or {}
    if not close(kw.get("h"), s["h"]):
        bad.append(f"H: rankplan {kw.get('h')!r}, script {s['h']!r}")
    asym = a.get("asymptotic_p_value") or {}
    if asym.get("value") is None:
        # rankplan gives only log10 p below the smallest normal double.
        if not s["p"] < 2.2250738585072014e-308:
            bad.append(f"asymptotic p: rankplan below 2.2e-308, script {s['p']!r}")
    elif not close(asym.get("value"), s["p"]):
        bad.append(f"asymptotic p: rankplan {asym.get('value')!r}, script {s['p']!r}")
    if not close(asym.get("log10"), s["log10_p"]):
        bad.append(f"log10 of the asymptotic p: rankplan {asym.get('log10')!r}, script {s['log10_p']!r}")
    summary = {"h": [kw.get("h"), s["h"]], "p": [asym.get("value"), s["p"]],
               "log10_p": [asym.get("log10"), s["log10_p"]]}
    if workload in ("dunn", "full"):
        pairs = (a.get("posthoc") or {}).get("pairs") or []
        if len(pairs) != len(s["pairs"]):
            bad.append(f"pairs: rankplan {len(pairs)}, script {len(s['pairs'])}")
        fields = (("statistic", "z"), ("p", "p"), ("p_adjusted", "p_holm"),
                  ("cliffs_delta", "cliffs_delta"))
        worst = 0.0
        for r, q in zip(pairs, s["pairs"]):
            if r["groups"] != q["groups"]:
                bad.append(f"pair order: rankplan {r['groups']}, script {q['groups']}")
                break
            got = [(qk, r.get(rk), q[qk]) for rk, qk in fields]
            got.append(("hodges_lehmann", (r.get("hodges_lehmann") or {}).get("shift"), q["hodges_lehmann"]))
            for name, x, y in got:
                if not close(x, y):
                    bad.append(f"{'-'.join(r['groups'])} {name}: rankplan {x!r}, script {y!r}")
                else:
                    worst = max(worst, abs(x - y) / max(1.0, abs(x), abs(y)))
        summary["pairs"] = len(pairs)
        summary["pairs_largest_difference"] = worst
    if workload == "full":
        iv = ((a.get("effect_sizes") or {}).get("interval") or {}).get("epsilon_squared") or {}
        summary["bootstrap_epsilon_squared"] = {
            "rankplan": [iv.get("low"), iv.get("high")],
            "script": [s["bootstrap"]["epsilon_squared_low"], s["bootstrap"]["epsilon_squared_high"]]}
    if workload == "mc":
        mc = a.get("p_value") or {}
        p1, p2, b = mc.get("value"), s["monte_carlo"]["p"], s["monte_carlo"]["resamples"]
        pm = (p1 + p2) / 2 if p1 is not None else p2
        allowed = 5 * (2 * pm * (1 - pm) / b) ** 0.5 + 2 / b
        if p1 is None or abs(p1 - p2) > allowed:
            bad.append(f"Monte Carlo p: rankplan {p1!r}, script {p2!r} (allowed difference {allowed:.3g})")
        summary["monte_carlo_p"] = [p1, p2]
    return bad, summary


def median(xs):
    return statistics.median(xs) if xs else None


def measure(case, exe, reps, max_seconds, scratch, log):
    """Runs both sides of one case reps times in alternation; returns its record."""
    d, workload = case["dir"], case["workload"]
    plan = os.path.join(d, workload + ".yaml")
    csv = os.path.join(d, "data.csv")
    sides = {
        "rankplan": {"wall": [], "rss_kib": [], "stop": False},
        "script": {"wall": [], "rss_kib": [], "stop": False},
    }
    failures = []
    check = None
    for rep in range(reps):
        order = ("rankplan", "script") if rep % 2 == 0 else ("script", "rankplan")
        for side in order:
            st = sides[side]
            if st["stop"]:
                continue
            if side == "rankplan":
                out = os.path.join(scratch, "out")
                shutil.rmtree(out, ignore_errors=True)
                cmd = [exe, "run", plan, "--out", out, "--quiet"]
                stdout = os.path.join(scratch, "rankplan.stdout")
            else:
                cmd = [PYTHON, os.path.join(BENCH, "reference.py"), workload, csv, "--seed", str(PLAN_SEED)]
                stdout = os.path.join(scratch, "script.json")
            wall, rss, code = run(cmd, stdout)
            if code != 0:
                with open(stdout + ".stderr", errors="replace") as f:
                    failures.append(f"{side} exited {code}: {f.read().strip()[-2000:]}")
                st["stop"] = True
                continue
            st["wall"].append(wall)
            st["rss_kib"].append(rss)
            if rep == 0 and wall > max_seconds:
                st["stop"] = True
            if side == "rankplan":
                shutil.copyfile(os.path.join(out, "results.json"), os.path.join(scratch, "results.json"))
                shutil.rmtree(out, ignore_errors=True)
        if rep == 0 and not failures:
            bad, check = compare(workload, os.path.join(scratch, "results.json"), os.path.join(scratch, "script.json"))
            failures.extend(f"disagreement: {b}" for b in bad)
        log(f"  {case['label']} repetition {rep + 1}/{reps}: " + ", ".join(
            f"{s} {sides[s]['wall'][-1]:.3f} s" for s in ("rankplan", "script") if sides[s]["wall"]))
    rec = {k: case[k] for k in ("workload", "rows", "groups", "shift", "data_seed", "data_sha256")}
    for side, st in sides.items():
        rec[side] = {"wall_s": st["wall"], "peak_rss_kib": st["rss_kib"],
                     "median_wall_s": median(st["wall"]), "median_peak_rss_kib": median(st["rss_kib"])}
    rw, sw = rec["rankplan"]["median_wall_s"], rec["script"]["median_wall_s"]
    rm, sm = rec["rankplan"]["median_peak_rss_kib"], rec["script"]["median_peak_rss_kib"]
    rec["wall_ratio"] = rw / sw if rw and sw else None
    rec["rss_ratio"] = rm / sm if rm and sm else None
    rec["rankplan_bytes_per_row"] = rm * 1024 / case["rows"] if rm else None
    rec["check"] = check
    rec["failures"] = failures
    return rec


def workers_identical(exe, d, scratch):
    """Whether the Monte Carlo plan gives the same results.json bytes with 1, 2 and 8 workers."""
    digests = {}
    for w in (1, 2, 8):
        out = os.path.join(scratch, f"workers{w}")
        shutil.rmtree(out, ignore_errors=True)
        subprocess.run([exe, "run", os.path.join(d, "mc.yaml"), "--out", out, "--quiet", "--workers", str(w)],
                       check=True)
        digests[str(w)] = sha256(os.path.join(out, "results.json"))
        shutil.rmtree(out, ignore_errors=True)
    return digests


def find(records, workload, rows):
    for r in records:
        if r["workload"] == workload and r["rows"] == rows:
            return r
    return None


def targets(records, workers):
    """Each performance target that these records can judge: target, value, limit, met."""
    out = []

    def add(name, value, limit):
        if value is not None:
            out.append({"target": name, "value": value, "limit": limit, "met": value <= limit})

    big = 10_000_000
    kw, dunn, full = find(records, "kw", big), find(records, "dunn", big), find(records, "full", big)
    if kw:
        add("kw, 10^7 rows: wall rankplan/script", kw["wall_ratio"], 0.2)
        add("kw, 10^7 rows: peak memory rankplan/script", kw["rss_ratio"], 0.3)
    if dunn:
        add("dunn, 10^7 rows: wall rankplan/script", dunn["wall_ratio"], 0.3)
    for rows, limit in ((big, 2.0), (1_000_000, 1.0)):
        f, d = find(records, "full", rows), find(records, "dunn", rows)
        if f and d and f["rankplan"]["median_wall_s"] and d["script"]["median_wall_s"]:
            add(f"full, 10^{len(str(rows)) - 1} rows: rankplan wall / script's dunn wall",
                f["rankplan"]["median_wall_s"] / d["script"]["median_wall_s"], limit)
    if full and dunn and full["rankplan"]["median_peak_rss_kib"] and dunn["script"]["median_peak_rss_kib"]:
        add("full, 10^7 rows: rankplan memory / script's dunn memory",
            full["rankplan"]["median_peak_rss_kib"] / dunn["script"]["median_peak_rss_kib"], 0.3)
    for w in WORKLOADS:
        r = find(records, w, SMALL["rows"])
        if r and r["rankplan"]["median_wall_s"] is not None:
            add(f"{w}, 30 rows: rankplan wall in seconds", r["rankplan"]["median_wall_s"], 0.05)
    mc = find(records, "mc", MC["rows"])
    if mc:
        add("mc, 10^4 resamples at N = 1000: wall rankplan/script", mc["wall_ratio"], 0.05)
    if workers:
        same = len(set(workers.values())) == 1
        out.append({"target": "mc: identical results.json with 1, 2 and 8 workers", "value": same,
                    "limit": True, "met": same})
    for w in WORKLOADS:
        r = find(records, w, big)
        if r:
            add(f"{w}, 10^7 rows: rankplan peak memory in bytes per row", r["rankplan_bytes_per_row"], 40)
    return out


def fmt(x, unit=""):
    if x is None:
        return "-"
    if isinstance(x, bool):
        return "yes" if x else "no"
    if unit == "s":
        return f"{x:.3f}" if x < 10 else f"{x:.1f}"
    if unit == "MiB":
        return f"{x / 1024:.0f}"
    return f"{x:.3g}"


def table_rows(records):
    head = ["workload", "rows", "groups", "reps", "rankplan s", "script s", "wall ratio",
            "rankplan MiB", "script MiB", "memory ratio", "rankplan B/row", "agree"]
    rows = []
    for r in records:
        reps = f"{len(r['rankplan']['wall_s'])}/{len(r['script']['wall_s'])}"
        rows.append([r["workload"], f"{r['rows']:,}", str(r["groups"]), reps,
                     fmt(r["rankplan"]["median_wall_s"], "s"), fmt(r["script"]["median_wall_s"], "s"),
                     fmt(r["wall_ratio"]), fmt(r["rankplan"]["median_peak_rss_kib"], "MiB"),
                     fmt(r["script"]["median_peak_rss_kib"], "MiB"), fmt(r["rss_ratio"]),
                     fmt(r["rankplan_bytes_per_row"]), "no" if r["failures"] else "yes"])
    return head, rows


def text_table(head, rows):
    widths = [max(len(x) for x in col) for col in zip(head, *rows)]
    lines = ["  ".join(x.rjust(w) for x, w in zip(head, widths))]
    lines += ["  ".join(x.rjust(w) for x, w in zip(row, widths)) for row in rows]
    return "\n".join(lines)


def markdown(report):
    env = report["environment"]
    head, rows = table_rows(report["records"])
    md = [MARKER_BEGIN, "",
          f"Taken {report['started']} to {report['finished']} with `{report['command']}`; "
          f"{report['repetitions']} repetitions per case, medians; load average "
          f"{report['load_before'][0]:.2f} before, {report['load_after'][0]:.2f} after "
          f"(1-minute). {report['label']}", "",
          f"Machine: {env['cpu']}, {env['nproc']} cores (`nproc`), {env['memory_gib']} GiB, "
          f"Linux {env['kernel']}. rankplan {env['rankplan']} at {env['revision']}, {env['go']}; "
          f"Python {env['python']}, numpy {env['numpy']}, pandas {env['pandas']}, scipy {env['scipy']}, "
          f"statsmodels {env['statsmodels']}.", "",
          "| " + " | ".join(head) + " |", "|" + "|".join("---" if i == 0 else "---:" for i in range(len(head))) + "|"]
    md += ["| " + " | ".join(r) + " |" for r in rows]
    md += ["", "Performance targets (issue 15) that these figures can judge (ratios are rankplan over the script):", "",
           "| target | value | limit | within |", "|---|---:|---:|---|"]
    for t in report["targets"]:
        md.append(f"| {t['target']} | {fmt(t['value'])} | {fmt(t['limit'])} | {'yes' if t['met'] else 'no'} |")
    if not report["targets"]:
        md.append("| (none at these sizes) | | | |")
    md += ["", MARKER_END]
    return "\n".join(md)


def write_markdown(path, text):
    with open(path) as f:
        old = f.read()
    b, e = old.find(MARKER_BEGIN), old.find(MARKER_END)
    if b < 0 or e < b:
        raise SystemExit(f"{path}: no section between {MARKER_BEGIN!r} and {MARKER_END!r}")
    new = old[:b] + text + old[e + len(MARKER_END):]
    with open(path + ".tmp", "w") as f:
        f.write(new)
    os.replace(path + ".tmp", path)


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0],
                                 formatter_class=argparse.RawDescriptionHelpFormatter,
                                 epilog=__doc__.split("\n\n", 1)[1])
    ap.add_argument("--sizes", type=parse_sizes, default=parse_sizes("1e4,1e5,1e6,1e7"),
                    help="rows of the kw, dunn and full cases, comma-separated (default 1e4,1e5,1e6,1e7)")
    ap.add_argument("--full-sizes", type=parse_sizes,
                    help="rows of the full case, if fewer than --sizes (the bootstrap of 10^7 rows takes "
                         "about ten minutes a side)")
    ap.add_argument("--workloads", default="kw,dunn,full,mc,small",
                    help="cases to run: any of kw, dunn, full (at --sizes), small (kw, dunn, full at 30 rows), mc")
    ap.add_argument("-r", "--repetitions", type=int, default=5, help="runs of each side per case (default 5)")
    ap.add_argument("--max-seconds", type=float, default=300,
                    help="a side whose first run takes longer is not repeated (default 300)")
    ap.add_argument("--smoke", action="store_true",
                    help="10^4 rows, 1 repetition, every workload; the JSON goes to the work folder")
    ap.add_argument("--work", help="folder for binaries and data files (default bench/work; --smoke: a temporary one)")
    ap.add_argument("--json", help="the JSON file to write (default bench/side-by-side.json)")
    ap.add_argument("--markdown", help="a Markdown file whose side-by-side section is rewritten with the figures")
    ap.add_argument("--label", default="Preliminary, taken on a busy machine.",
                    help="a sentence printed with the figures about how they were taken")
    args = ap.parse_args()
    wanted = set(w.strip() for w in args.workloads.split(",") if w.strip())
    unknown = wanted - {"kw", "dunn", "full", "mc", "small"}
    if unknown:
        ap.error(f"unknown workloads: {', '.join(sorted(unknown))}")
    if args.repetitions < 1:
        ap.error("--repetitions must be at least 1")
    if args.smoke:
        args.sizes, args.full_sizes, args.repetitions = [10_000], None, 1
        if args.label == ap.get_default("label"):
            args.label = "Smoke run: one repetition at 10^4 rows checks the harness, not the speed."
    cleanup = None
    if args.work:
        work = os.path.abspath(args.work)
    elif args.smoke:
        work = cleanup = tempfile.mkdtemp(prefix="rankplan-bench-")
    else:
        work = os.path.join(BENCH, "work")
    json_path = args.json or (os.path.join(work, "side-by-side.json") if args.smoke
                              else os.path.join(BENCH, "side-by-side.json"))

    def log(msg):
        print(msg, file=sys.stderr, flush=True)

    try:
        started = datetime.datetime.now(datetime.timezone.utc)
        load_before = os.getloadavg()
        exe, gen = build(work)
        env = environment(exe)
        cases = []
        for w in WORKLOADS:
            if w in wanted:
                sizes = args.full_sizes if w == "full" and args.full_sizes else args.sizes
                cases += [dict(workload=w, rows=n, **LARGE) for n in sizes]
        if "small" in wanted:
            cases += [dict(workload=w, **SMALL) for w in WORKLOADS]
        if "mc" in wanted:
            cases.append(dict(workload="mc", **MC))
        scratch = os.path.join(work, "scratch")
        os.makedirs(scratch, exist_ok=True)
        records, workers = [], None
        for c in cases:
            c["dir"] = dataset(work, gen, c["rows"], c["groups"], c["shift"], c["seed"])
            c["data_seed"] = c.pop("seed")
            c["data_sha256"] = sha256(os.path.join(c["dir"], "data.csv"))
            c["label"] = f"{c['workload']} at {c['rows']:,} rows"
            log(f"{c['label']} ({c['groups']} groups)")
            records.append(measure(c, exe, args.repetitions, args.max_seconds, scratch, log))
            if c["workload"] == "mc":
                workers = workers_identical(exe, c["dir"], scratch)
        command = shlex.join(["/usr/bin/python3", "bench/side-by-side.py"] + sys.argv[1:])
        report = {
            "format": "rankplan-side-by-side/1",
            "command": command,
            "label": args.label,
            "started": started.strftime("%Y-%m-%dT%H:%M:%SZ"),
            "finished": datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ"),
            "load_before": load_before, "load_after": os.getloadavg(),
            "repetitions": args.repetitions, "environment": env,
            "records": records, "workers_results_sha256": workers,
        }
        report["targets"] = targets(records, workers)
        with open(json_path, "w") as f:
            json.dump(report, f, indent=1)
            f.write("\n")
        head, rows = table_rows(records)
        print(text_table(head, rows))
        print(f"\n{args.label} Medians of {args.repetitions} alternated runs; "
              f"load average {load_before[0]:.2f} before, {report['load_after'][0]:.2f} after.")
        for t in report["targets"]:
            print(f"target: {t['target']}: {fmt(t['value'])} (limit {fmt(t['limit'])}): "
                  f"{'within' if t['met'] else 'NOT within'}")
        if cleanup and not args.json:
            print(f"written: {json_path} (removed with the temporary work folder; --json PATH keeps it)")
        else:
            print(f"written: {json_path}")
        if args.markdown:
            write_markdown(args.markdown, markdown(report))
            print(f"rewritten: the side-by-side section of {args.markdown}")
        failed = [(r["workload"], r["rows"], f) for r in records for f in r["failures"]]
        if workers and len(set(workers.values())) != 1:
            failed.append(("mc", MC["rows"], f"results.json differs between worker counts: {workers}"))
        for w, n, f in failed:
            print(f"FAILED {w} at {n} rows: {f}", file=sys.stderr)
        return 1 if failed else 0
    finally:
        if cleanup:
            shutil.rmtree(cleanup, ignore_errors=True)


if __name__ == "__main__":
    sys.exit(main())
