#!/usr/bin/python3
# run.py - side-by-side benchmark: surety against general MIP solvers (CBC, GLPK, HiGHS) on
# the very same scenarios, with agreement checks that fail the run loudly. SPDX-License-Identifier: MIT
"""Benchmark harness. See bench/README.md for usage and the latest table.

For each model file: `surety export` writes the sample approximation as MPS (plain and
strengthened big-M) from the model's seed and N; `surety solve` solves the same scenarios;
every installed peer solves each MPS file under the same time limit, one run at a time,
single-threaded, with the order of solvers rotated from one instance to the next. Each run is
measured for wall time, CPU time and peak resident memory (GNU time around the solver alone;
see measure() for why not wait4 or RUSAGE_CHILDREN from here). Then:
  - every solver that claims optimality must agree with surety's objective to 1e-6 relative
    (the MPS minimises minus the mean profit; the harness flips the sign);
  - a solver stopped by the limit must stay consistent: its plan no better than surety's
    proven optimum, its bound no worse than it;
  - every returned plan (surety's and each peer's, rounded from its x values) must fit at
    least N-k of the N scenarios by surety's own count (`surety check --json`, in_sample);
  - each plan's objective recomputed from the MPS objective row must match what its solver
    reported, and surety's plan must have the same value in the MPS as surety says;
  - surety's plan must satisfy every row of both MPS files exactly (indicators completed at
    their cheapest), which tells an invalid export apart from a peer's wrong optimum.
Any disagreement is printed as DISAGREE lines and the exit status is 1.
"""
import argparse
import datetime
import glob
import json
import math
import os
import re
import shutil
import signal
import subprocess
import sys
import tempfile
import threading
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
sys.path.insert(0, HERE)

import gen  # noqa: E402
import mpsread  # noqa: E402
import report  # noqa: E402

REL_TOL = 1e-6       # agreement between objectives, relative (the brief's tolerance)
MPS_TOL = 1e-9       # row violation allowed when checking a plan against an MPS file, relative
GAP = 1e-9           # relative gap every solver is asked to close (surety's default)
PEERS = ("cbc", "glpk", "highs")
FORMS = ("plain", "strengthened")


def allowance(eps, N):
    """k = floor(eps*N), robust to eps = 1-0.9 and the like (METHODS.md s.1)."""
    return int(math.floor(eps * N + 1e-9))


def rel_diff(a, b):
    return abs(a - b) / max(1.0, abs(a), abs(b))


# ---------------------------------------------------------------------------------------------
# Running one process

TIME_PROG = "/usr/bin/time"


def measure(cmd, stdout_path, hard_timeout_s, env=None, cwd=None):
    """Runs cmd alone; returns (exit code or -signal, wall seconds, peak RSS in MB, killed,
    CPU seconds user+system). On a shared machine CPU seconds of a single-threaded solver vary
    less than wall seconds; both are kept.

    Peak memory: GNU time's %M, the ru_maxrss that wait4 reports for the solver process.
    It is not taken from os.wait4 on a child of this Python process: Linux keeps the larger
    of the pre-exec and post-exec peaks, and a child forked (or vforked) from a Python that
    has numpy and scipy loaded starts at ~47 MB, which would hide every small solver run.
    /usr/bin/time is a small C program, so the floor it adds is about 1-2 MB.
    RUSAGE_CHILDREN deltas would not do either: that field is the running maximum over all
    children waited for so far, not a sum, so a small run after a large one shows no delta.
    The hard timeout is a safety net beyond the solver's own limit (SIGKILL to the group)."""
    tfile = stdout_path + ".time"
    full = [TIME_PROG, "-f", "%M %U %S", "-o", tfile] + list(cmd) if os.access(TIME_PROG, os.X_OK) \
        else list(cmd)
    with open(stdout_path, "wb") as out, open(stdout_path + ".err", "wb") as err:
        t0 = time.perf_counter()
        p = subprocess.Popen(full, stdout=out, stderr=err, env=env, cwd=cwd,
                             start_new_session=True)
        killed = []

        def kill():
            killed.append(True)
            try:
                os.killpg(p.pid, signal.SIGKILL)
            except ProcessLookupError:
                pass
        timer = threading.Timer(hard_timeout_s, kill)
        timer.start()
        try:
            _, status, ru = os.wait4(p.pid, 0)
        finally:
            timer.cancel()
        wall = time.perf_counter() - t0
        p.returncode = os.waitstatus_to_exitcode(status)
    rc = p.returncode
    mem = cpu = None
    if full[0] == TIME_PROG:
        lines = read_text(tfile).split("\n")
        # GNU time prints "Command exited with non-zero status N" before the format line
        for line in lines:
            m = re.match(r"Command exited with non-zero status (\d+)", line)
            if m:
                rc = int(m.group(1))
            m = re.match(r"Command terminated by signal (\d+)", line)
            if m:
                rc = -int(m.group(1))
        vals = [x.split() for x in lines if re.match(r"^\d+ [\d.]+ [\d.]+$", x.strip())]
        if vals:
            mem = int(vals[-1][0]) / 1024.0
            cpu = float(vals[-1][1]) + float(vals[-1][2])
    return rc, wall, mem, bool(killed), cpu


def read_text(path):
    try:
        with open(path, errors="replace") as fp:
            return fp.read()
    except OSError:
        return ""


# ---------------------------------------------------------------------------------------------
# Solvers. Each returns a dict: status (optimal, time_limit, infeasible, killed, error),
# objective and bound in profit terms (maximisation), nodes, wall_s, mem_mb, x (column->value)

def obj_to_profit(mps, v):
    """The MPS minimises minus the profit (or maximises the profit when OBJSENSE says MAX)."""
    if v is None:
        return None
    return -v if mps.sense == 1 else v


def run_surety(ctx, inst, work):
    plan = os.path.join(work, "surety-plan.json")
    out = os.path.join(work, "surety.out")
    cmd = [ctx.surety, "solve", inst["path"], "-n", str(inst["N"]), "--seed", str(inst["seed"]),
           "--json", "--quiet", "--threads", "1", "--gap", repr(GAP),
           "--time-limit", repr(ctx.time_limit), "-o", plan]
    rc, wall, mem, killed, cpu = measure(cmd, out, ctx.hard_timeout)
    r = {"wall_s": wall, "cpu_s": cpu, "mem_mb": mem, "nodes": None, "objective": None, "bound": None,
         "x": None, "plan": None, "status": "error", "cmd": cmd}
    if killed:
        r["status"] = "killed"
        return r
    if rc not in (0, 4):
        r["error"] = "surety solve exit %d: %s" % (rc, read_text(out + ".err").strip()[-400:])
        return r
    try:
        js = json.loads(read_text(out))
    except ValueError as e:
        r["error"] = "surety solve --json is not JSON (%s)" % e
        return r
    r["json"] = js
    st, stop = js.get("status"), js.get("stop")
    if st == "optimal" and stop == "finished":
        r["status"] = "optimal"
    elif st == "infeasible":
        r["status"] = "infeasible"
    elif stop in ("time_limit", "node_limit"):
        r["status"] = "time_limit"
    else:
        r["status"] = "%s/%s" % (st, stop)
    r["objective"] = js.get("objective")
    r["bound"] = js.get("bound")
    r["nodes"] = js.get("nodes")
    r["solver_s"] = js.get("seconds")
    r["plan"] = js.get("plan")
    return r


def cbc_cmd(mps_path, sol, tl):
    # -timeMode elapsed: the limit is wall-clock time like everyone else's (CBC's default
    # counts CPU seconds). ratioGap/allowableGap: close the same relative gap as surety.
    return ["cbc", mps_path, "-threads", "1", "-timeMode", "elapsed", "-seconds", repr(tl),
            "-ratioGap", repr(GAP), "-allowableGap", "1e-9", "-solve", "-solution", sol]


def parse_cbc(log, sol_text, mps):
    r = {"status": "error", "objective": None, "bound": None, "nodes": None, "x": {}}
    m = re.search(r"^Result - (.*)$", log, re.M)
    res = m.group(1) if m else ""
    if res.startswith("Optimal solution found"):
        r["status"] = "optimal"
    elif "infeasible" in res.lower():
        r["status"] = "infeasible"
    elif res.startswith("Stopped on time") or res.startswith("Stopped on iterations"):
        r["status"] = "time_limit"
    m = re.search(r"best objective (\S+), took \d+ iterations and (\d+) nodes", log)
    if m:
        r["nodes"] = int(m.group(2))
    m = re.search(r"^Enumerated nodes:\s+(\d+)", log, re.M)
    if m:
        r["nodes"] = int(m.group(1))
    m = re.search(r"^Lower bound:\s+(\S+)", log, re.M)
    bound = float(m.group(1)) if m else None
    lines = sol_text.splitlines()
    objective = None
    if lines and "objective value" in lines[0] and "No feasible" not in lines[0] \
            and not lines[0].startswith("Infeasible"):
        objective = float(lines[0].split("objective value")[1].split()[0])
        for line in lines[1:]:
            t = line.split()
            # "idx name value reduced_cost", with "**" before idx on infeasible entries
            if t and t[0] == "**":
                t = t[1:]
            if len(t) >= 3:
                r["x"][t[1]] = float(t[2])
    # Stopped before any integer solution, CBC still writes a solution file, with the LP
    # relaxation's fractional values and objective: that is no plan.
    if objective is not None:
        for col, v in r["x"].items():
            j = mps.col_index.get(col)
            if j is not None and mps.integer[j] and abs(v - round(v)) > 1e-6:
                objective = None
                r["x"] = {}
                r["note"] = "CBC wrote a fractional (LP) solution: no integer solution found"
                break
    if r["status"] == "optimal" and objective is not None:
        bound = objective
    r["objective"] = obj_to_profit(mps, objective)
    r["bound"] = obj_to_profit(mps, bound)
    return r


def glpk_cmd(mps_path, sol, tl):
    return ["glpsol", "--freemps", mps_path, "--tmlim", str(max(1, int(math.ceil(tl)))),
            "--mipgap", repr(GAP), "-w", sol]


def parse_glpk(log, sol_text, mps):
    r = {"status": "error", "objective": None, "bound": None, "nodes": None, "x": {}}
    if "INTEGER OPTIMAL SOLUTION FOUND" in log:
        r["status"] = "optimal"
    elif "TIME LIMIT EXCEEDED" in log:
        r["status"] = "time_limit"
    elif "PROBLEM HAS NO INTEGER FEASIBLE SOLUTION" in log or \
            "PROBLEM HAS NO PRIMAL FEASIBLE SOLUTION" in log:
        r["status"] = "infeasible"
    # progress lines: "+ ITERS: mip = BEST >= BOUND GAP% (A; R)", where BEST may read "not found
    # yet", BOUND "tree is empty", and GAP is blank above 999.9%. A is the number of active
    # subproblems and R the number removed from the tree (GLPK's glpios03.c prints a_cnt and
    # t_cnt - n_cnt); nodes reported: A + R (inactive subproblems still in the tree are not shown
    # in the log, so this is a slight undercount).
    bound = None
    for line in log.splitlines():
        if not line.startswith("+"):
            continue
        m = re.search(r"\((\d+); (\d+)\)\s*$", line)
        if not m:
            continue
        r["nodes"] = int(m.group(1)) + int(m.group(2))
        b = re.search(r"[<>]=\s+(\S+)", line)
        try:
            bound = float(b.group(1)) if b else None
        except ValueError:
            bound = None        # "tree is empty"
    # solution file (glpsol -w): "s mip ROWS COLS STATUS OBJ", then "j COLNO VALUE" lines;
    # columns are numbered from 1 in the order they first appear in COLUMNS, as in mpsread
    objective = None
    x = {}
    for line in sol_text.splitlines():
        t = line.split()
        if not t:
            continue
        if t[0] == "s" and len(t) >= 6 and t[1] == "mip":
            if t[4] in ("o", "f"):
                objective = float(t[5])
        elif t[0] == "j" and len(t) >= 3 and 1 <= int(t[1]) <= len(mps.cols):
            x[mps.cols[int(t[1]) - 1]] = float(t[2])
    if objective is not None:
        r["x"] = x
    if r["status"] == "optimal" and objective is not None:
        bound = objective
    r["objective"] = obj_to_profit(mps, objective)
    r["bound"] = obj_to_profit(mps, bound)
    return r


def run_peer(ctx, peer, form, inst, work, mps):
    mps_path = inst["mps"][form]
    base = os.path.join(work, "%s-%s" % (peer, form))
    sol = base + ".sol"
    env = dict(os.environ, OMP_NUM_THREADS="1", OPENBLAS_NUM_THREADS="1")
    if peer == "cbc":
        cmd = cbc_cmd(mps_path, sol, ctx.time_limit)
    elif peer == "glpk":
        cmd = glpk_cmd(mps_path, sol, ctx.time_limit)
    else:
        cmd = [sys.executable, os.path.join(HERE, "highs_mps.py"), mps_path,
               repr(ctx.time_limit), repr(GAP)]
    if os.path.exists(sol):
        os.unlink(sol)
    rc, wall, mem, killed, cpu = measure(cmd, base + ".out", ctx.hard_timeout, env=env)
    log = read_text(base + ".out")
    if killed:
        r = {"status": "killed", "objective": None, "bound": None, "nodes": None, "x": {}}
    elif peer == "highs":
        try:
            js = json.loads(log)
            r = {"status": js["status"], "objective": obj_to_profit(mps, js["objective"]),
                 "bound": obj_to_profit(mps, js["bound"]), "nodes": js["nodes"],
                 "x": js["x"], "solver_s": js.get("solve_seconds")}
        except (ValueError, KeyError):
            r = {"status": "error", "objective": None, "bound": None, "nodes": None, "x": {},
                 "error": "highs_mps.py exit %d: %s" % (rc, read_text(base + ".out.err")[-400:])}
    elif peer == "cbc":
        r = parse_cbc(log, read_text(sol), mps)
    else:
        r = parse_glpk(log, read_text(sol), mps)
    if r["status"] == "error" and "error" not in r:
        r["error"] = "%s exit %d; see %s" % (peer, rc, base + ".out")
    if peer == "cbc":
        m = re.search(r"^Time \(Wallclock seconds\):\s+(\S+)", log, re.M)
        r["solver_s"] = float(m.group(1)) if m else None
    elif peer == "glpk":
        m = re.search(r"^Time used:\s+(\S+) secs", log, re.M)
        r["solver_s"] = float(m.group(1)) if m else None
    r.update({"wall_s": wall, "cpu_s": cpu, "mem_mb": mem, "cmd": cmd})
    return r


# ---------------------------------------------------------------------------------------------
# Plans and checks

def column_map(mps_path):
    """Column name -> (job id, resource id) from the comment lines `surety export` writes."""
    cmap = {}
    pat = re.compile(r"^\* (x_\d+_\d+) = job (\S+) in resource (\S+)\s*$")
    with open(mps_path) as fp:
        for line in fp:
            if not line.startswith("*"):
                break
            m = pat.match(line)
            if m:
                cmap[m.group(1)] = (m.group(2), m.group(3))
    return cmap


def plan_from_x(x, cmap):
    """Rounds a peer's x values to a plan {job: resource}; None when the values are not a plan."""
    plan = {}
    for col, v in x.items():
        if col in cmap and v > 0.5:
            job, res = cmap[col]
            if job in plan:
                return None
            plan[job] = res
    return plan


def plan_objective(plan, mps, cmap):
    """Profit of a plan from the MPS objective row (the indicators carry no cost)."""
    inv = {jr: col for col, jr in cmap.items()}
    s = mps.obj_const
    for job, res in plan.items():
        col = inv.get((job, res))
        if col is None:
            return None
        s += mps.c[mps.col_index[col]]
    return obj_to_profit(mps, s)


def mps_violation(plan, mps, cmap, arrays):
    """Largest row violation of the MPS file at the plan, with every indicator (a column that
    is not an x_ column) set to 1 exactly where a row would otherwise be violated, and 0
    elsewhere: the cheapest completion, so a positive result means no completion exists
    (or needs more than the allowance). Relative to max(1, |rhs|). Exact arithmetic on the
    file's numbers: no solver tolerance is involved. This separates an invalid export (a big-M
    that cuts off a plan which fits N-k scenarios) from a peer's wrong optimum."""
    import numpy as np
    c, A, rlb, rub, clb, cub, integ = arrays
    inv = {jr: col for col, jr in cmap.items()}
    x = np.zeros(len(mps.cols))
    for job, res in plan.items():
        col = inv.get((job, res))
        if col is None:
            return float("inf")
        x[mps.col_index[col]] = 1.0
    xcols = np.zeros(len(mps.cols), dtype=bool)
    for col in cmap:
        xcols[mps.col_index[col]] = True
    act = A @ x
    for r in np.nonzero(act > rub)[0]:
        lo, hi = A.indptr[r], A.indptr[r + 1]
        for jj, v in zip(A.indices[lo:hi], A.data[lo:hi]):
            if not xcols[jj] and v < 0:
                x[jj] = 1.0
    act = A @ x
    scale = np.maximum(1.0, np.abs(np.where(np.isfinite(rub), rub, rlb)))
    over = np.concatenate([(act - rub) / scale, (rlb - act) / scale])
    over = over[np.isfinite(over)]
    return float(max(0.0, over.max())) if over.size else 0.0


def surety_count(ctx, inst, plan, work, tag):
    """(fit, allowance) of a plan in the model's N scenarios by `surety check --json`."""
    path = os.path.join(work, "plan-%s.json" % tag)
    with open(path, "w") as fp:
        json.dump({"plan": plan}, fp)
    cmd = [ctx.surety, "check", inst["path"], path, "-n", str(inst["N"]),
           "--seed", str(inst["seed"]), "--samples", "1000", "--json"]
    p = subprocess.run(cmd, capture_output=True, text=True)
    if p.returncode != 0:
        raise RuntimeError("surety check exit %d: %s" % (p.returncode, p.stderr.strip()[-400:]))
    js = json.loads(p.stdout)
    return int(js["in_sample"]["fit"]), int(js["in_sample"]["allowance"])


class Checker:
    def __init__(self):
        self.failures = []

    def fail(self, inst, who, msg):
        line = "DISAGREE %s %s: %s" % (inst["name"], who, msg)
        self.failures.append(line)
        print(line, flush=True)


def check_instance(ctx, inst, runs, work, chk, mpss):
    """All agreement checks for one instance (see the module docstring)."""
    mps = mpss["strengthened"]
    arrays = {form: mpss[form].arrays() for form in FORMS}
    for form in FORMS:
        arrays[form] = arrays[form][:1] + (arrays[form][1].tocsr(),) + arrays[form][2:]
    N, k = inst["N"], allowance(inst["eps"], inst["N"])
    sur = runs["surety"]
    cmap = column_map(inst["mps"]["strengthened"])
    if not cmap:
        chk.fail(inst, "export", "no column map comments in the MPS file")
        return
    for form in FORMS:
        if column_map(inst["mps"][form]) != cmap:
            chk.fail(inst, "export", "plain and strengthened files name columns differently")
    s_opt = sur["status"] == "optimal"
    s_obj = sur["objective"]
    if sur["status"] == "error":
        chk.fail(inst, "surety", sur.get("error", "failed"))
    s_feasible = False
    if sur.get("plan") is not None:
        v = plan_objective(sur["plan"], mps, cmap)
        if v is None or rel_diff(v, s_obj) > REL_TOL:
            chk.fail(inst, "surety", "objective %r but its plan is worth %r in the MPS" % (s_obj, v))
    # surety first: the peers' checks below use what is learnt about surety's plan
    for name in ["surety"] + [x for x in runs if x != "surety"]:
        r = runs[name]
        if r["status"] in ("error", "killed"):
            if name != "surety":
                chk.fail(inst, name, r.get("error", r["status"]))
            continue
        plan = r.get("plan") if name == "surety" else None
        if name != "surety" and r["objective"] is not None:
            plan = plan_from_x(r["x"], cmap)
            if plan is None:
                chk.fail(inst, name, "x values assign a job twice")
                continue
            v = plan_objective(plan, mps, cmap)
            r["plan_objective"] = v
            if v is None or rel_diff(v, r["objective"]) > REL_TOL:
                chk.fail(inst, name, "reports %r but its rounded plan is worth %r"
                         % (r["objective"], v))
        if plan is not None:
            try:
                fit, kk = surety_count(ctx, inst, plan, work, name)
            except (RuntimeError, ValueError, KeyError) as e:
                chk.fail(inst, name, "plan check failed: %s" % e)
                continue
            r["fit"] = fit
            if kk != k:
                chk.fail(inst, name, "surety check says allowance %d, floor(eps*N) is %d" % (kk, k))
            if fit < N - k:
                chk.fail(inst, name, "plan fits %d of %d scenarios; at least %d required"
                         % (fit, N, N - k))
        if name == "surety":
            if plan is None or r.get("fit", -1) < N - k:
                continue
            s_feasible = True
            for form in FORMS:
                viol = mps_violation(plan, mpss[form], cmap, arrays[form])
                if viol > MPS_TOL:
                    s_feasible = False
                    chk.fail(inst, "export", "surety's plan fits %d >= N-k scenarios but "
                             "violates the %s MPS by %.3g (relative): the exported formulation "
                             "cuts it off" % (r["fit"], form, viol))
            continue
        if r["status"] == "infeasible" or sur["status"] == "infeasible":
            if r["status"] != sur["status"] and s_opt and r["status"] in ("optimal", "infeasible"):
                chk.fail(inst, name, "%s where surety says %s" % (r["status"], sur["status"]))
            continue
        tol = REL_TOL * max(1.0, abs(s_obj or 0.0))
        # who is wrong: a peer's optimum below surety's plan, which is exactly feasible in the
        # very file the peer solved, is the peer's error; one above surety's optimum with a plan
        # that fits N-k scenarios by surety's count is surety's
        blame = (" (surety's plan is exactly feasible in this MPS file: the peer's claimed "
                 "optimum is wrong)") if s_feasible else ""
        if r["status"] == "optimal" and s_opt:
            if r["objective"] < s_obj - tol:
                chk.fail(inst, name, "optimal %.10g but surety's optimum is %.10g%s"
                         % (r["objective"], s_obj, blame))
            elif r["objective"] > s_obj + tol:
                chk.fail(inst, name, "optimal %.10g above surety's optimum %.10g%s"
                         % (r["objective"], s_obj, " (the peer's plan fits N-k scenarios: "
                            "surety's optimum is wrong)" if r.get("fit", -1) >= N - k else ""))
        elif r["status"] == "optimal":
            # surety stopped early: the peer's optimum must lie between surety's plan and bound
            if s_obj is not None and r["objective"] < s_obj - tol:
                chk.fail(inst, name, "optimal %.10g below surety's plan %.10g%s"
                         % (r["objective"], s_obj, blame))
            if sur["bound"] is not None and r["objective"] > sur["bound"] + tol:
                chk.fail(inst, name, "optimal %.10g above surety's bound %.10g"
                         % (r["objective"], sur["bound"]))
        elif s_opt:
            if r["objective"] is not None and r["objective"] > s_obj + tol:
                chk.fail(inst, name, "plan %.10g beats surety's optimum %.10g"
                         % (r["objective"], s_obj))
            if r["bound"] is not None and r["bound"] < s_obj - tol:
                chk.fail(inst, name, "bound %.10g below surety's optimum %.10g"
                         % (r["bound"], s_obj))


# ---------------------------------------------------------------------------------------------
# Driver

def load_instance(path, N=None, seed=None):
    with open(path) as fp:
        js = json.load(fp)
    name = os.path.splitext(os.path.basename(path))[0]
    m = len(js["resources"])
    pairs = sum(len(j.get("allowed") or range(m)) for j in js["jobs"])
    N = int(N if N else js["scenarios"])
    return {"path": os.path.abspath(path), "name": name, "n": len(js["jobs"]), "m": m, "N": N,
            "eps": float(js["risk"]), "seed": int(seed if seed is not None else js.get("seed", 1)),
            "nonzeros": N * pairs}


def export(ctx, inst, work):
    inst["mps"] = {}
    for form in FORMS:
        path = os.path.join(work, "%s.mps" % form)
        cmd = [ctx.surety, "export", inst["path"], "-n", str(inst["N"]), "--seed",
               str(inst["seed"]), "--" + form, "-o", path]
        p = subprocess.run(cmd, capture_output=True, text=True)
        if p.returncode != 0:
            raise RuntimeError("%s: surety export exit %d: %s"
                               % (inst["name"], p.returncode, p.stderr.strip()[-400:]))
        inst["mps"][form] = path


def gap_of(r):
    """Relative gap (bound - plan)/|plan| in profit terms, or None."""
    if r.get("objective") is None or r.get("bound") is None:
        return None
    if r["status"] == "optimal":
        return 0.0
    return max(0.0, (r["bound"] - r["objective"]) / max(1e-9, abs(r["objective"])))


def solver_list(ctx):
    out = []
    for s in ctx.solvers:
        if s == "surety":
            continue
        for f in ctx.forms:
            out.append("%s-%s" % (s, f))
    return out


def run_instance(ctx, t, inst, chk):
    work = os.path.join(ctx.workdir, "%03d-%s" % (t, inst["name"]))
    os.makedirs(work, exist_ok=True)
    export(ctx, inst, work)
    mpss = {form: mpsread.read(inst["mps"][form]) for form in FORMS}
    names = ["surety"] + solver_list(ctx)
    # alternate the order across instances so no solver always runs first (cold caches) or
    # last (after the machine has warmed up)
    shift = t % len(names)
    order = names[shift:] + names[:shift]
    if t % 2:
        order.reverse()
    runs = {}
    for name in order:
        if name == "surety":
            runs[name] = run_surety(ctx, inst, work)
        else:
            peer, form = name.split("-", 1)
            runs[name] = run_peer(ctx, peer, form, inst, work, mpss[form])
    check_instance(ctx, inst, runs, work, chk, mpss)
    rows = []
    for name in names:
        r = runs[name]
        rows.append({"instance": inst["name"], "n": inst["n"], "m": inst["m"], "N": inst["N"],
                     "eps": inst["eps"], "seed": inst["seed"], "solver": name,
                     "status": r["status"], "objective": r.get("objective"),
                     "bound": r.get("bound"), "gap": gap_of(r), "nodes": r.get("nodes"),
                     "wall_s": r["wall_s"], "cpu_s": r.get("cpu_s"), "mem_mb": r["mem_mb"],
                     "solver_s": r.get("solver_s"), "fit": r.get("fit"),
                     "required_fit": inst["N"] - allowance(inst["eps"], inst["N"]),
                     "order": order.index(name)})
    if not ctx.keep:
        shutil.rmtree(work, ignore_errors=True)
    return rows


def find_surety(arg):
    if arg:
        return os.path.abspath(arg)
    for cand in sorted(glob.glob(os.path.join(ROOT, "build*", "surety"))):
        if os.access(cand, os.X_OK):
            return cand
    return shutil.which("surety")


def installed(ctx):
    found = []
    for s in ctx.solvers:
        if s == "cbc" and not shutil.which("cbc"):
            print("note: cbc not installed; skipped", file=sys.stderr)
        elif s == "glpk" and not shutil.which("glpsol"):
            print("note: glpsol not installed; skipped", file=sys.stderr)
        elif s == "highs":
            try:
                from scipy.optimize import milp  # noqa: F401
                found.append(s)
            except ImportError:
                print("note: scipy.optimize.milp missing; HiGHS skipped", file=sys.stderr)
        else:
            found.append(s)
    return found


def main(argv):
    ap = argparse.ArgumentParser(description="surety against general MIP solvers.")
    ap.add_argument("models", nargs="*", help="model files (default: instances/bench/*.json)")
    ap.add_argument("--surety", help="the surety program (default: build*/surety)")
    ap.add_argument("--solvers", default="cbc,glpk,highs",
                    help="peers, comma-separated (default cbc,glpk,highs)")
    ap.add_argument("--forms", default="plain,strengthened",
                    help="exported formulations (default plain,strengthened)")
    ap.add_argument("--time-limit", type=float, default=60.0,
                    help="seconds per run, every solver (default 60)")
    ap.add_argument("-n", dest="N", type=int, help="override every model's scenario count")
    ap.add_argument("--seeds", default=None,
                    help="comma-separated seeds: each model runs once per seed")
    ap.add_argument("--out", default=None,
                    help="folder for results.md, results.csv, time.svg (default: none)")
    ap.add_argument("--keep", action="store_true", help="keep MPS files, logs and plans")
    ap.add_argument("--max-nonzeros", type=float, default=5e6,
                    help="skip models whose MPS would hold more capacity-row nonzeros "
                    "(N x allowed job-resource pairs; default 5e6, about 200 MB of MPS)")
    ap.add_argument("--quick", action="store_true",
                    help="two tiny generated instances, CBC only: the test-suite check")
    a = ap.parse_args(argv)

    ctx = argparse.Namespace()
    ctx.surety = find_surety(a.surety)
    if not ctx.surety or not os.access(ctx.surety, os.X_OK):
        print("run.py: no surety program (build it, or pass --surety)", file=sys.stderr)
        return 2
    ctx.time_limit = a.time_limit
    ctx.keep = a.keep
    ctx.forms = [f for f in a.forms.split(",") if f]
    for f in ctx.forms:
        if f not in FORMS:
            ap.error("unknown form %r" % f)
    ctx.solvers = [s for s in a.solvers.split(",") if s]
    for s in ctx.solvers:
        if s not in PEERS:
            ap.error("unknown solver %r" % s)
    tmp = tempfile.mkdtemp(prefix="surety-bench-")
    ctx.workdir = tmp
    models = a.models
    if a.quick:
        ctx.solvers = ["cbc"]
        ctx.time_limit = min(ctx.time_limit, 30.0)
        models = []
        for e in gen.QUICK_SET:
            model = gen.generate(*e)
            path = os.path.join(tmp, model["name"] + ".json")
            with open(path, "w") as fp:
                fp.write(gen.dumps(model))
            models.append(path)
    elif not models:
        models = sorted(glob.glob(os.path.join(ROOT, "instances", "bench", "*.json")))
    ctx.solvers = installed(ctx)
    if a.quick and "cbc" not in ctx.solvers:
        print("run.py --quick: cbc is not installed", file=sys.stderr)
        return 77           # meson's "skipped"
    ctx.hard_timeout = 2 * ctx.time_limit + 60
    seeds = [int(s) for s in a.seeds.split(",")] if a.seeds else [None]

    chk = Checker()
    rows = []
    t = 0
    started = datetime.datetime.now(datetime.timezone.utc)
    try:
        for path in models:
            for seed in seeds:
                inst = load_instance(path, a.N, seed)
                if seed is not None:
                    inst["name"] += "@%d" % seed
                if inst["nonzeros"] > a.max_nonzeros:
                    print("== %s skipped: its MPS would hold about %.3g nonzeros (--max-nonzeros)"
                          % (inst["name"], inst["nonzeros"]), flush=True)
                    continue
                print("== %s (n=%d m=%d N=%d eps=%g seed=%d)" % (
                    inst["name"], inst["n"], inst["m"], inst["N"], inst["eps"], inst["seed"]),
                    flush=True)
                try:
                    new = run_instance(ctx, t, inst, chk)
                except RuntimeError as e:
                    chk.fail(inst, "harness", str(e))
                    t += 1
                    continue
                for r in new:
                    print("   %-20s %-10s %9.2f s  obj %-14s gap %-9s nodes %-8s mem %s MB"
                          % (r["solver"], r["status"], r["wall_s"], report.num(r["objective"]),
                             report.pct(r["gap"]), r["nodes"] if r["nodes"] is not None
                             else "-", report.num(r["mem_mb"], 4)), flush=True)
                rows.extend(new)
                t += 1
    finally:
        if not a.keep:
            shutil.rmtree(tmp, ignore_errors=True)
        else:
            print("work files kept in %s" % tmp)

    meta = report.machine(started, ctx.time_limit, argv, ctx.surety)
    table = report.markdown(rows, meta)
    print()
    print(table)
    if a.out:
        os.makedirs(a.out, exist_ok=True)
        with open(os.path.join(a.out, "results.md"), "w") as fp:
            fp.write(table)
        report.write_csv(rows, os.path.join(a.out, "results.csv"))
        with open(os.path.join(a.out, "time.svg"), "w") as fp:
            fp.write(report.svg(rows, ctx.time_limit))
        print("wrote %s/results.md, results.csv, time.svg" % a.out)
    if chk.failures:
        print("\nFAILED: %d disagreement(s):" % len(chk.failures))
        for f in chk.failures:
            print("  " + f)
        return 1
    print("all solvers agree (objectives to %g relative; every plan fits N-k by surety's count)"
          % REL_TOL)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
