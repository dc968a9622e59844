#!/usr/bin/python3
# fuzz_solve.py - correctness fuzzing of surety's solver: random small models, each solved by
# surety and by outside references (CBC, exhaustive enumeration, HiGHS). SPDX-License-Identifier: MIT
"""Correctness fuzzing of `surety solve` against references outside the project.

usage (from the repository root, with the Python that has numpy and scipy):
    nice -n 15 /usr/bin/python3 bench/fuzz_solve.py --surety build-fuzz/surety \\
        --count 500 --seed 1 [--minutes 40] [--large] [--keep DIR] [--regress DIR] [--verbose]
        [--surety-args '--split-after 1 --split-rounds 2']

Every instance is a pure function of (--seed, instance index): rerun one with
`--seed S --first I --count 1 --keep DIR` to get its model file and the commands' files.

For each random model (invented data, written directly as a model file; the kinds are listed
in KINDS below) the script:
  1. runs `surety solve --json -o plan.json` (single-threaded, no limit);
  2. writes the model's scenarios with `surety sample` and recounts the plan itself, in
     Python, with the project's capacity test (factor * sum of base hours in ascending job
     order <= capacity * (1 + 1e-12); src/plan.h), and checks eligibility and required jobs;
  3. runs `surety check --json` on the plan: in sample it must fit at least N - k;
  4. solves the plain big-M export (`surety export --plain`) with CBC, single-threaded
     (the reference the project's own tests use; the strengthened file is avoided because
     CBC 2.10.8 has been seen to return a wrong "optimal" on one);
  5. when the model has few plans ((m+1)^n small), enumerates every plan exactly in numpy
     from the sampled scenarios: an exact reference that shares no code with any solver;
     otherwise, when the model is small enough, solves an independent formulation written
     here from the sampled table with HiGHS (scipy.optimize.milp, scipy 1.10.1);
  6. compares: the same status (optimal / infeasible), objectives within 1e-6 relative,
     allowance k = floor(eps N + 1e-9) (METHODS.md s.1) as surety reports it.
A share of the models is also solved with tiny --time-limit / --node-limit values: the plan
returned must fit, be no better than the reference optimum, and the bound must not fall below it.

A disagreement is re-checked with GLPK (glpsol, time-limited) and HiGHS on the same export
and with the independent formulation before it is called a surety bug; it is then minimised
(jobs, resources, scenarios dropped while the disagreement persists) and the smallest model
is written to --regress (default instances/regress). Exit status 1 when any disagreement
remains, 0 otherwise.
"""
import argparse
import collections
import csv
import itertools
import json
import math
import os
import random
import re
import shlex
import shutil
import subprocess
import sys
import tempfile
import time

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)

REL_TOL = 1e-6          # agreement between solvers' objectives, relative
SELF_TOL = 1e-9         # surety's objective against the recomputed mean profit of its plan
ENUM_MAX_PLANS = 60000  # exhaustive enumeration up to this many raw plans ((m+1)^n)
ENUM_RECHECK_PLANS = 2000000  # on a disagreement, enumeration settles it up to this many
CBC_LIMIT_S = 30        # a CBC run past this is "no reference" rather than a verdict
CAPACITY_SLACK = 1e-12  # relative slack of the project's capacity test (src/plan.h)
KINDS = ("mixed", "tight", "loose", "discrete", "table", "infeasible", "empty", "linked")
EPS_CHOICES = (0.0, 0.01, 0.05, 0.1, 0.2, 0.5)
# The model file refuses risk 0 (it must lie strictly between 0 and 1), so "eps = 0" is
# written as a risk so small that k = floor(eps N) = 0 for every N used here.
EPS_ZERO = 1e-4


def allowance(eps, N):
    """k = floor(eps*N), robust to products such as 0.1*30 = 3.0000000000000004 (METHODS.md s.1)."""
    return int(math.floor(eps * N + 1e-9))


def rel_diff(a, b):
    return abs(a - b) / max(1.0, abs(a), abs(b))


# ---------------------------------------------------------------------------------------------
# Random models

def r2(x):
    return float("%.2f" % x)


def hours_spec(rng, kind):
    """A job's hours law and its (approximate) mean. Discrete laws come up often in the
    'discrete' kind so that whole scenarios repeat (the solver's presolve merges them)."""
    if kind == "discrete":
        choice = rng.choice(["fixed", "fixedobj", "empirical", "empirical"])
    else:
        choice = rng.choice(["normal", "normal", "lognormal", "uniform", "triangular",
                             "empirical", "fixed"])
    if choice == "fixed":
        v = float(rng.randint(1, 12)) if rng.random() < 0.7 else r2(rng.uniform(0.5, 15))
        return v, v
    if choice == "fixedobj":
        v = float(rng.randint(1, 12))
        return {"dist": "fixed", "value": v}, v
    if choice == "empirical":
        vals = [float(rng.randint(1, 14)) for _ in range(rng.randint(1, 4))]
        return {"dist": "empirical", "values": vals}, sum(vals) / len(vals)
    if choice == "uniform":
        lo = r2(rng.uniform(0, 8))
        hi = r2(lo + rng.uniform(0.5, 10))
        return {"dist": "uniform", "low": lo, "high": hi}, (lo + hi) / 2
    if choice == "triangular":
        lo = r2(rng.uniform(0, 8))
        hi = r2(lo + rng.uniform(1, 10))
        mode = r2(rng.uniform(lo, hi))
        return {"dist": "triangular", "low": lo, "mode": mode, "high": hi}, (lo + mode + hi) / 3
    mean = r2(rng.uniform(2, 14))
    sd = r2(max(0.05, mean * rng.uniform(0.05, 0.6)))
    spec = {"dist": choice, "mean": mean, "sd": sd}
    if choice == "normal" and rng.random() < 0.5:
        spec["min"] = r2(rng.uniform(0, mean * 0.8))
    if rng.random() < 0.2:
        spec["max"] = r2(mean + rng.uniform(0.5, 3) * sd)
    return spec, mean


def profit_spec(rng, kind, mu):
    """Fixed profits (ties likely), or a rule linked to the hours, sometimes clamped,
    sometimes with a negative rate; 'empty' models get profits no plan wants."""
    if kind == "empty":
        if rng.random() < 0.5:
            return -float(rng.randint(0, 50))
        return {"rate": -r2(rng.uniform(0, 20)), "fixed": -r2(rng.uniform(0, 30))}
    if kind != "linked" and rng.random() < 0.4:
        if rng.random() < 0.5:
            return float(rng.randint(-5, 60)) * 10
        return r2(rng.uniform(-50, 600))
    rate = r2(rng.uniform(-30, 90))
    fixed = r2(rng.uniform(-100, 300))
    p = {"rate": rate, "fixed": fixed}
    at_mean = rate * mu + fixed
    if rng.random() < 0.5:
        p["min"] = r2(at_mean - abs(at_mean) * rng.uniform(0.05, 0.6) - 1)
    if rng.random() < 0.5:
        p["max"] = r2(at_mean + abs(at_mean) * rng.uniform(0.0, 0.4) + 1)
    return p


def make_model(seed, index, large=False):
    """A random model dict plus a description (kind and features) and, for the 'table'
    kind, the rows of its scenario table (the caller writes it beside the model). large:
    only the largest sizes and the kinds that give the search a real tree."""
    rng = random.Random("%d/%d%s" % (seed, index, "/large" if large else ""))
    if large:
        kind = rng.choice(("mixed", "discrete", "linked", "loose", "table"))
    else:
        kind = rng.choice(KINDS + ("mixed", "mixed", "discrete", "linked"))
    # Mostly small models, where every reference finishes in a second; now and then the
    # largest sizes of the campaign (n up to 14, N up to 80).
    if large:
        n, m, N = rng.randint(10, 14), rng.randint(2, 4), rng.randint(20, 80)
    elif rng.random() < 0.85:
        n, m, N = rng.randint(3, 9), rng.randint(1, 3), rng.randint(5, 40)
    else:
        n, m, N = rng.randint(6, 14), rng.randint(1, 4), rng.randint(5, 80)
    eps = rng.choice(EPS_CHOICES)
    joint = rng.random() < 0.6
    identical = rng.random() < 0.35
    res_ids = ["R%d" % i for i in range(m)]
    job_ids = ["J%02d" % j for j in range(n)]

    jobs, mus = [], []
    for j in range(n):
        h, mu = hours_spec(rng, kind)
        mus.append(mu)
        jobs.append({"id": job_ids[j], "hours": h, "profit": profit_spec(rng, kind, mu)})

    if kind == "tight":
        tight = rng.uniform(0.03, 0.2)
    elif kind == "loose":
        tight = rng.uniform(1.0, 3.0)
    else:
        tight = rng.uniform(0.2, 0.8)
    total = tight * sum(mus)
    resources = []
    for i in range(m):
        if identical:
            factor, share = 1.0, 1.0 / m
        else:
            factor = 1.0 if rng.random() < 0.3 else r2(rng.uniform(0.7, 1.4))
            share = rng.uniform(0.5, 1.5) / m
        cap = total * share * factor
        # Whole capacities half the time, so whole-hour loads meet them exactly.
        cap = float(max(1, round(cap))) if rng.random() < 0.5 else r2(max(0.05, cap))
        r = {"id": res_ids[i], "capacity": cap}
        if factor != 1.0 or rng.random() < 0.2:
            r["hours_factor"] = factor
        resources.append(r)
    if identical and m > 1:
        for r in resources[1:]:
            r["capacity"] = resources[0]["capacity"]

    restricted = False
    if not identical and m > 1 and rng.random() < 0.6:
        for job in jobs:
            if rng.random() < 0.5:
                allowed = [x for x in res_ids if rng.random() < 0.6] or [rng.choice(res_ids)]
                if len(allowed) < m:
                    job["allowed"] = allowed
                    restricted = True
    required = 0
    p_req = 0.6 if kind == "infeasible" else (0.0 if kind == "empty" else
                                               0.03 if large else 0.12)
    for job in jobs:
        if rng.random() < p_req:
            job["required"] = True
            required += 1
    if kind == "infeasible":
        # A required job that is too large for its resources in nearly every scenario.
        big = rng.choice(jobs)
        big["required"] = True
        big["hours"] = {"dist": "uniform", "low": 0, "high": 1000} if rng.random() < 0.5 \
            else float(10 * max(r["capacity"] for r in resources) + 1)
        required = sum(1 for job in jobs if job.get("required"))

    model = {"name": "fuzz-%d-%d" % (seed, index), "risk": EPS_ZERO if eps == 0 else eps,
             "scenarios": N, "seed": rng.randint(0, 10 ** 6),
             "constraint": "joint" if joint else "separate",
             "resources": resources, "jobs": jobs}

    correlated = False
    if kind != "table" and rng.random() < 0.4:
        corr = {}
        if rng.random() < 0.5:
            corr["all"] = r2(rng.uniform(-0.05, 0.8))
        if rng.random() < 0.6 and n >= 2:
            order = list(range(n))
            rng.shuffle(order)
            corr["pairs"] = [[job_ids[order[a]], job_ids[order[a + 1]], r2(rng.uniform(0.3, 0.9))]
                             for a in range(0, n - 1, 3)]
            # Pairs on top of "all" may contradict it; let the model ask for the nearest
            # valid matrix then.
            if "all" in corr:
                corr["repair"] = True
        if corr:
            model["correlation"] = corr
            correlated = True

    table = None
    if kind == "table":
        # Whole-hour rows drawn from a few patterns, so rows repeat; some jobs carry a
        # profit column, the others follow their profit rule.
        patterns = [[float(rng.randint(0, 9)) for _ in range(n)] for _ in range(rng.randint(1, 6))]
        with_profit = [j for j in range(n) if rng.random() < 0.4]
        header = []
        for j in range(n):
            header.append(job_ids[j] + ".hours")
            if j in with_profit:
                header.append(job_ids[j] + ".profit")
        rows = []
        for _ in range(N):
            pat = rng.choice(patterns)
            row = []
            for j in range(n):
                row.append(pat[j])
                if j in with_profit:
                    row.append(float(rng.choice([-20, 0, 50, 100, 150, 200])))
            rows.append(row)
        table = (header, rows)
        model["scenario_table"] = "table.csv"

    features = {"kind": kind, "n": n, "m": m, "N": N, "eps": eps,
                "constraint": model["constraint"],
                "resources": "identical" if identical else "different",
                "restricted": restricted, "required": required > 0, "correlated": correlated}
    return model, table, features


def write_model(work, model, table):
    path = os.path.join(work, "model.json")
    with open(path, "w") as fp:
        json.dump(model, fp, indent=1)
    if table is not None:
        header, rows = table
        with open(os.path.join(work, "table.csv"), "w", newline="") as fp:
            w = csv.writer(fp)
            w.writerow(header)
            for row in rows:
                w.writerow([repr(v) for v in row])
    return path


# ---------------------------------------------------------------------------------------------
# Running programs

def run(cmd, timeout=None, cwd=None):
    """Runs cmd (niceness inherited from this process); returns (exit code, stdout, stderr)."""
    try:
        p = subprocess.run(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                           timeout=timeout, cwd=cwd)
        return p.returncode, p.stdout, p.stderr
    except subprocess.TimeoutExpired as e:
        return -9, e.stdout or "", "timeout"


class Instance:
    """One model and what every solver said about it."""

    def __init__(self, model, features, work):
        self.model = model
        self.features = features
        self.work = work
        self.n = len(model["jobs"])
        self.m = len(model["resources"])
        self.job_ids = [j["id"] for j in model["jobs"]]
        self.res_ids = [r["id"] for r in model["resources"]]
        self.factor = [float(r.get("hours_factor", 1.0)) for r in model["resources"]]
        self.cap = [float(r["capacity"]) for r in model["resources"]]
        self.allowed = []
        for job in model["jobs"]:
            a = job.get("allowed")
            self.allowed.append([self.res_ids.index(x) for x in a] if a else list(range(self.m)))
        self.required = [bool(job.get("required")) for job in model["jobs"]]
        self.joint = model.get("constraint", "joint") == "joint"
        self.H = None       # N x n base hours, from `surety sample`
        self.P = None       # N x n profits
        self.N = None
        self.k = None


def read_scenarios(inst, surety, path):
    csv_path = os.path.join(inst.work, "scen.csv")
    rc, out, err = run([surety, "sample", path, "-o", csv_path])
    if rc != 0:
        raise RuntimeError("surety sample failed: " + err.strip())
    with open(csv_path) as fp:
        rows = list(csv.reader(fp))
    head = rows[0]
    data = np.array([[float(v) for v in r] for r in rows[1:]], dtype=float)
    H = np.empty((data.shape[0], inst.n))
    P = np.empty((data.shape[0], inst.n))
    for j, jid in enumerate(inst.job_ids):
        H[:, j] = data[:, head.index(jid + ".hours")]
        P[:, j] = data[:, head.index(jid + ".profit")]
    inst.H, inst.P, inst.N = H, P, data.shape[0]
    eps = float(inst.model["risk"])
    inst.k = allowance(eps, inst.N)


def recount(inst, plan):
    """(feasible, objective, fails, detail) of a plan given as a list res-index or -1 per job,
    by the project's own capacity test written out here: factor_i * (sum of the base hours
    of the jobs in i, added in ascending job order) <= capacity_i * (1 + 1e-12) (src/plan.h,
    a slack for decimal values stored in binary). detail names
    the first structural violation (eligibility, required job) or is ''."""
    for j in range(inst.n):
        r = plan[j]
        if r >= 0 and r not in inst.allowed[j]:
            return False, None, None, "job %s in a resource it may not use" % inst.job_ids[j]
        if r < 0 and inst.required[j]:
            return False, None, None, "required job %s declined" % inst.job_ids[j]
    N = inst.N
    over = np.zeros((inst.m, N), dtype=bool)
    for i in range(inst.m):
        s = np.zeros(N)
        for j in range(inst.n):
            if plan[j] == i:
                s = s + inst.H[:, j]
        over[i] = ~(inst.factor[i] * s <= inst.cap[i] * (1 + CAPACITY_SLACK))
    if inst.joint:
        fails = int(over.any(axis=0).sum())
        feasible = fails <= inst.k
    else:
        per = over.sum(axis=1)
        fails = int(per.max()) if inst.m else 0
        feasible = bool((per <= inst.k).all())
    obj = float(sum(inst.P[:, j].mean() for j in range(inst.n) if plan[j] >= 0))
    return feasible, obj, fails, ""


def plan_from_names(inst, names):
    plan = [-1] * inst.n
    for jid, rid in (names or {}).items():
        plan[inst.job_ids.index(jid)] = inst.res_ids.index(rid)
    return plan


# ---------------------------------------------------------------------------------------------
# References

def enumerate_optimum(inst):
    """Exact optimum by listing every plan (job j: declined or one allowed resource), in
    numpy, with the same capacity test as recount(). Returns ('optimal', obj) or
    ('infeasible', None)."""
    choices = []
    for j in range(inst.n):
        c = list(inst.allowed[j])
        if not inst.required[j]:
            c = [-1] + c
        choices.append(c)
    plans = np.array(list(itertools.product(*choices)), dtype=np.int64).reshape(-1, inst.n)
    if plans.shape[0] == 0:
        return "infeasible", None
    mean_p = inst.P.mean(axis=0)
    best = None
    for start in range(0, plans.shape[0], 4096):
        blk = plans[start:start + 4096]
        over = np.zeros((blk.shape[0], inst.m, inst.N), dtype=bool)
        for i in range(inst.m):
            s = np.zeros((blk.shape[0], inst.N))
            for j in range(inst.n):
                s = s + (blk[:, j] == i)[:, None] * inst.H[None, :, j]
            over[:, i, :] = ~(inst.factor[i] * s <= inst.cap[i] * (1 + CAPACITY_SLACK))
        if inst.joint:
            ok = over.any(axis=1).sum(axis=1) <= inst.k
        else:
            ok = (over.sum(axis=2) <= inst.k).all(axis=1)
        if not ok.any():
            continue
        obj = ((blk[ok] >= 0) * mean_p[None, :]).sum(axis=1)
        v = float(obj.max())
        best = v if best is None else max(best, v)
    return ("infeasible", None) if best is None else ("optimal", best)


def own_milp(inst, time_limit):
    """The sample approximation written here from the sampled table (not from surety's
    export) and solved with HiGHS through scipy.optimize.milp (scipy 1.10.1): binaries x_ij for
    allowed pairs, z (one per scenario, or per scenario and resource when separate) = 1 when
    the scenario may overload; big-M = factor_i * (all allowed hours in i) - capacity_i.
    Returns (status, objective)."""
    from scipy.optimize import Bounds, LinearConstraint, milp
    pairs = [(j, i) for j in range(inst.n) for i in inst.allowed[j]]
    nx = len(pairs)
    nz = inst.N if inst.joint else inst.N * inst.m
    nv = nx + nz
    c = np.zeros(nv)
    mean_p = inst.P.mean(axis=0)
    for t, (j, i) in enumerate(pairs):
        c[t] = -mean_p[j]
    rows, lo, hi = [], [], []
    for j in range(inst.n):
        row = np.zeros(nv)
        for t, (jj, i) in enumerate(pairs):
            if jj == j:
                row[t] = 1
        rows.append(row)
        lo.append(1 if inst.required[j] else 0)
        hi.append(1)
    for l in range(inst.N):
        for i in range(inst.m):
            row = np.zeros(nv)
            allh = 0.0
            for t, (j, ii) in enumerate(pairs):
                if ii == i:
                    row[t] = inst.factor[i] * inst.H[l, j]
                    allh += inst.factor[i] * inst.H[l, j]
            bigm = max(0.0, allh - inst.cap[i])
            zt = nx + (l if inst.joint else l * inst.m + i)
            row[zt] = -bigm
            rows.append(row)
            lo.append(-np.inf)
            hi.append(inst.cap[i])
    if inst.joint:
        row = np.zeros(nv)
        row[nx:] = 1
        rows.append(row)
        lo.append(-np.inf)
        hi.append(inst.k)
    else:
        for i in range(inst.m):
            row = np.zeros(nv)
            for l in range(inst.N):
                row[nx + l * inst.m + i] = 1
            rows.append(row)
            lo.append(-np.inf)
            hi.append(inst.k)
    res = milp(c, integrality=np.ones(nv), bounds=Bounds(np.zeros(nv), np.ones(nv)),
               constraints=[LinearConstraint(np.array(rows), np.array(lo), np.array(hi))],
               options={"time_limit": time_limit, "mip_rel_gap": 1e-9, "disp": False})
    if res.status == 0:
        return "optimal", -float(res.fun)
    if res.status == 2:
        return "infeasible", None
    return "stopped", None


def cbc_plain(inst, surety, path, limit):
    """CBC on surety's plain export: (status, objective as mean profit, plan or None)."""
    mps = os.path.join(inst.work, "plain.mps")
    rc, out, err = run([surety, "export", path, "--plain", "-o", mps])
    if rc != 0:
        raise RuntimeError("surety export failed: " + err.strip())
    with open(mps) as fp:
        text = fp.read()
    m = re.search(r"allowance k = (\d+)", text)
    export_k = int(m.group(1)) if m else None
    sol = os.path.join(inst.work, "cbc.sol")
    if os.path.exists(sol):
        os.unlink(sol)
    # -timeMode elapsed: the limit is wall-clock time (CBC counts CPU seconds by default,
    # which on a shared, niced machine can be a fraction of the wall time).
    rc, out, err = run(["cbc", mps, "-threads", "1", "-timeMode", "elapsed", "-seconds",
                        str(limit), "-ratioGap", "0",
                        "-allowableGap", "1e-9", "-solve", "-solu", sol], timeout=limit + 60)
    if rc != 0 or not os.path.exists(sol):
        return "error", None, None, export_k
    with open(sol) as fp:
        lines = fp.read().splitlines()
    first = lines[0] if lines else ""
    if first.startswith("Optimal"):
        status = "optimal"
    elif "nfeasible" in first:
        return "infeasible", None, None, export_k
    else:
        return "stopped", None, None, export_k
    obj = -float(first.split("objective value")[1].split()[0])
    plan = [-1] * inst.n
    for line in lines[1:]:
        t = line.replace("**", " ").split()
        if len(t) >= 3 and t[1].startswith("x_") and float(t[2]) > 0.5:
            _, j, i = t[1].split("_")
            plan[int(j)] = int(i)
    return status, obj, plan, export_k


def glpk_plain(inst, limit):
    mps = os.path.join(inst.work, "plain.mps")
    out = os.path.join(inst.work, "glpk.out")
    rc, so, se = run(["glpsol", "--freemps", mps, "--tmlim", str(int(limit)), "-o", out],
                     timeout=limit + 30)
    if rc != 0 or not os.path.exists(out):
        return "error", None
    status, obj = "stopped", None
    with open(out) as fp:
        for line in fp:
            if line.startswith("Status:"):
                if "INTEGER OPTIMAL" in line:
                    status = "optimal"
                elif "EMPTY" in line or "INFEASIBLE" in line:
                    status = "infeasible"
            mm = re.search(r"Objective:.*=\s*(\S+)", line)
            if mm:
                obj = -float(mm.group(1))
    return status, (obj if status == "optimal" else None)


def highs_plain(inst, limit):
    mps = os.path.join(inst.work, "plain.mps")
    rc, out, err = run(["/usr/bin/python3", os.path.join(HERE, "highs_mps.py"), mps, str(limit),
                        "0"], timeout=limit + 60)
    if rc != 0:
        return "error", None
    r = json.loads(out)
    if r["status"] == "optimal":
        return "optimal", -r["objective"]
    return r["status"], None


# ---------------------------------------------------------------------------------------------
# One instance

# further options of every `surety solve` (--surety-args), e.g. "--split-after 1
# --split-rounds 2", which brings the decomposition's rounds and probes into trees of a few
# hundred nodes. The instances here mostly close within the first dive (4096 nodes), before
# any node is restored from the best-bound pool and before the root LP; "--dive-nodes 1"
# brings the pool, its restored nodes (their own split solves, and with "--lp-after 1
# --node-lp always" their LPs) into every search of more than one node.
SURETY_ARGS = []


def solve_surety(surety, path, extra, work):
    plan_path = os.path.join(work, "plan.json")
    if os.path.exists(plan_path):
        os.unlink(plan_path)
    rc, out, err = run([surety, "solve", path, "--json", "--progress", "--threads", "1",
                        "-o", plan_path] + SURETY_ARGS + extra, timeout=600)
    if rc not in (0, 4) or not out.strip():
        raise RuntimeError("surety solve exit %d: %s" % (rc, err.strip()[:300]))
    res = json.loads(out)
    # what the search went through, from its log on stderr: nodes restored from the pool
    # bounded by the LP, and the restored nodes' own split solves
    m = re.search(r"LP bound: root .*?, (\d+) nodes bounded by it", err)
    res["_lp_nodes"] = int(m.group(1)) if m else 0
    m = re.search(r"decomposition at restored nodes: (\d+) one-resource solves", err)
    res["_restored_solves"] = int(m.group(1)) if m else 0
    return res, plan_path


def reference(inst, surety, path, limit, stats):
    """The reference optimum: enumeration when the model is small, otherwise CBC on the plain
    export; the second one available is a cross-check. Returns a dict."""
    ref = {"sources": {}}
    raw_plans = 1
    for j in range(inst.n):
        raw_plans *= len(inst.allowed[j]) + 1
    t0 = time.time()
    cbc = cbc_plain(inst, surety, path, limit)
    stats["cbc_s"] += time.time() - t0
    ref["sources"]["cbc"] = cbc[:2]
    ref["cbc_plan"] = cbc[2]
    ref["export_k"] = cbc[3]
    if raw_plans <= ENUM_MAX_PLANS:
        t0 = time.time()
        ref["sources"]["enum"] = enumerate_optimum(inst)
        stats["enum_s"] += time.time() - t0
    elif inst.n * inst.m * inst.N <= 1200:
        t0 = time.time()
        ref["sources"]["highs-own"] = own_milp(inst, limit)
        stats["highs_s"] += time.time() - t0
    return ref


def verdict_of(sources):
    """The agreed reference among the sources that finished, or None when none did, or
    'split' when they disagree with each other."""
    done = [(s, st, obj) for s, (st, obj) in sources.items() if st in ("optimal", "infeasible")]
    if not done:
        return None
    first = done[0]
    for s, st, obj in done[1:]:
        if st != first[1] or (st == "optimal" and rel_diff(obj, first[2]) > REL_TOL):
            return "split"
    return first[1], first[2]


def compare(inst, res, plan_path, ref, surety, path):
    """Problems (strings) of surety's answer against the reference."""
    problems = []
    if res.get("allowance") != inst.k:
        problems.append("allowance %s, expected floor(eps N) = %d" % (res.get("allowance"), inst.k))
    if ref.get("export_k") is not None and ref["export_k"] != inst.k:
        problems.append("export allowance %s, expected %d" % (ref["export_k"], inst.k))
    v = verdict_of(ref["sources"])
    st = res["status"]
    if st in ("optimal", "feasible"):
        plan = plan_from_names(inst, res.get("plan"))
        feas, obj, fails, detail = recount(inst, plan)
        if detail:
            problems.append("plan invalid: " + detail)
        elif not feas:
            problems.append("plan fails %d scenarios, allowance %d" % (fails, inst.k))
        elif rel_diff(obj, res["objective"]) > SELF_TOL:
            problems.append("objective %.10g but the plan's mean profit is %.10g" %
                            (res["objective"], obj))
        rc, out, err = run([surety, "check", path, plan_path, "--json", "--samples", "200"])
        if rc != 0:
            problems.append("surety check exit %d: %s" % (rc, err.strip()[:200]))
        else:
            ins = json.loads(out)["in_sample"]
            # "fit" counts scenarios where every resource holds; with separate constraints
            # it may fall below N - k while each resource keeps its own allowance.
            if (inst.joint and ins["fit"] < inst.N - inst.k) or not ins["holds"]:
                problems.append("surety check: fit %d of %d, holds %s" %
                                (ins["fit"], inst.N, ins["holds"]))
    if v is None:
        return problems, "noref"
    if v == "split":
        problems.append("references disagree among themselves: %s" % ref["sources"])
        return problems, "split"
    vst, vobj = v
    if st == "optimal":
        if vst == "infeasible":
            problems.append("surety optimal %.10g, reference infeasible" % res["objective"])
        elif rel_diff(res["objective"], vobj) > REL_TOL:
            problems.append("surety optimal %.10g, reference %.10g" % (res["objective"], vobj))
    elif st == "infeasible":
        if vst != "infeasible":
            problems.append("surety infeasible, reference optimal %.10g" % vobj)
    else:
        problems.append("surety status %s without a limit" % st)
    return problems, vst


def limited_checks(inst, ref, surety, path, rng, stats):
    """Solves again under a tiny time or node limit: whatever comes back must be consistent
    with the reference optimum (plan feasible and no better; bound not below it)."""
    problems = []
    v = verdict_of(ref["sources"])
    if v is None or v == "split":
        return problems, 0
    vst, vobj = v
    runs = 0
    for extra in (["--time-limit", rng.choice(["0.0001", "0.001", "0.005", "0.02"])],
                  ["--node-limit", str(rng.choice([1, 2, 5, 20, 100]))]):
        res, plan_path = solve_surety(surety, path, extra, inst.work)
        runs += 1
        st = res["status"]
        tag = " ".join(extra)
        stats["limited_%s_%s" % (extra[0][2:6], st)] += 1
        if vst == "infeasible":
            if st in ("optimal", "feasible"):
                problems.append("%s: status %s on an infeasible model" % (tag, st))
            continue
        if st == "infeasible":
            problems.append("%s: infeasible, reference optimal %.10g" % (tag, vobj))
            continue
        bound = res.get("bound")
        if bound is not None and bound < vobj - REL_TOL * max(1.0, abs(vobj)):
            problems.append("%s: bound %.10g below the optimum %.10g" % (tag, bound, vobj))
        if st in ("optimal", "feasible"):
            feas, obj, fails, detail = recount(inst, plan_from_names(inst, res.get("plan")))
            if detail or not feas:
                problems.append("%s: plan does not fit (%s, %s fails)" % (tag, detail, fails))
            elif obj > vobj + REL_TOL * max(1.0, abs(vobj)):
                problems.append("%s: plan %.10g better than the optimum %.10g" % (tag, obj, vobj))
            if st == "optimal" and rel_diff(res["objective"], vobj) > REL_TOL:
                problems.append("%s: optimal %.10g, reference %.10g" % (tag, res["objective"], vobj))
    return problems, runs


def run_one(model, table, features, surety, work, limit, stats, rng, do_limits):
    path = write_model(work, model, table)
    inst = Instance(model, features, work)
    inst.path = path
    t0 = time.time()
    res, plan_path = solve_surety(surety, path, [], work)
    inst.plan_path = plan_path
    stats["surety_s"] += time.time() - t0
    read_scenarios(inst, surety, path)
    ref = reference(inst, surety, path, limit, stats)
    problems, vst = compare(inst, res, plan_path, ref, surety, path)
    nlim = 0
    if do_limits and vst in ("optimal", "infeasible"):
        p2, nlim = limited_checks(inst, ref, surety, path, rng, stats)
        problems += p2
    return inst, res, ref, problems, vst, nlim


def raw_plan_count(inst):
    count = 1
    for j in range(inst.n):
        count *= len(inst.allowed[j]) + 1
    return count


def recheck(inst, limit):
    """Further references on a disagreement: GLPK and HiGHS on the same export, HiGHS on the
    formulation written here, and exhaustive enumeration when the model has at most
    ENUM_RECHECK_PLANS raw plans (exact, and then the only verdict that counts: the MIP
    references have been seen to disagree with each other and with it, seed 51 model 836)."""
    out = {}
    out["glpk"] = glpk_plain(inst, limit)
    out["highs-export"] = highs_plain(inst, limit)
    out["highs-own"] = own_milp(inst, limit)
    if raw_plan_count(inst) <= ENUM_RECHECK_PLANS:
        out["enum"] = enumerate_optimum(inst)
    return out


def reference_fault(inst, res, ref, more, surety, work, stats, a, idx):
    """True when the rechecks (GLPK and HiGHS on the same export, HiGHS on the formulation
    written here) all finished, agree with each other, and surety passes every check against
    them, including the limited runs when this instance had them: then the first reference
    was wrong, not surety. CBC 2.10.8 has been seen to return a wrong "optimal"."""
    if "enum" in more:
        more = {"enum": more["enum"]}
    if any(st not in ("optimal", "infeasible") for st, _ in more.values()):
        return False
    v = verdict_of(more)
    if v in (None, "split"):
        return False
    ref2 = dict(ref)
    ref2["sources"] = dict(more)
    problems, _ = compare(inst, res, inst.plan_path, ref2, surety, inst.path)
    rng = random.Random("limits/%d/%d" % (a.seed, idx))
    if rng.random() < a.limits:
        p2, _ = limited_checks(inst, ref2, surety, inst.path, rng, collections.Counter())
        problems += p2
    return not problems


# ---------------------------------------------------------------------------------------------
# Minimising a disagreement

def still_disagrees(model, table, features, surety, limit):
    work = tempfile.mkdtemp(prefix="surety-fuzz-min-")
    try:
        stats = collections.Counter()
        inst, res, ref, problems, vst, _ = run_one(model, table, features, surety, work, limit,
                                                   stats, random.Random(0), False)
        return bool(problems)
    except (RuntimeError, ValueError, KeyError):
        return False
    finally:
        shutil.rmtree(work, ignore_errors=True)


def drop_job(model, table, j):
    m2 = json.loads(json.dumps(model))
    jid = m2["jobs"][j]["id"]
    del m2["jobs"][j]
    corr = m2.get("correlation")
    if corr and "pairs" in corr:
        corr["pairs"] = [p for p in corr["pairs"] if jid not in p[:2]]
        if not corr["pairs"]:
            del corr["pairs"]
        if not corr or list(corr) == ["repair"]:
            del m2["correlation"]
    t2 = None
    if table is not None:
        header, rows = table
        keep = [c for c, h in enumerate(header) if not h.startswith(jid + ".")]
        t2 = ([header[c] for c in keep], [[r[c] for c in keep] for r in rows])
    return m2, t2


def drop_resource(model, i):
    m2 = json.loads(json.dumps(model))
    rid = m2["resources"][i]["id"]
    del m2["resources"][i]
    for job in m2["jobs"]:
        if "allowed" in job:
            job["allowed"] = [x for x in job["allowed"] if x != rid]
            if not job["allowed"]:
                return None
    return m2


def minimise(model, table, features, surety, limit, budget_s=240):
    """Greedy: drop jobs, resources, the correlation block and scenarios (first ones kept)
    while surety still disagrees with the references."""
    t_end = time.time() + budget_s
    changed = True
    while changed and time.time() < t_end:
        changed = False
        for j in range(len(model["jobs"]) - 1, -1, -1):
            if len(model["jobs"]) <= 1 or time.time() > t_end:
                break
            m2, t2 = drop_job(model, table, j)
            if still_disagrees(m2, t2, features, surety, limit):
                model, table, changed = m2, t2, True
        for i in range(len(model["resources"]) - 1, -1, -1):
            if len(model["resources"]) <= 1 or time.time() > t_end:
                break
            m2 = drop_resource(model, i)
            if m2 is not None and still_disagrees(m2, table, features, surety, limit):
                model, changed = m2, True
        if "correlation" in model:
            m2 = json.loads(json.dumps(model))
            del m2["correlation"]
            if still_disagrees(m2, table, features, surety, limit):
                model, changed = m2, True
        N = model["scenarios"]
        for N2 in sorted({N // 2, N - 1}):
            if N2 < 1 or N2 >= N or time.time() > t_end:
                continue
            m2 = json.loads(json.dumps(model))
            m2["scenarios"] = N2
            t2 = None if table is None else (table[0], table[1][:N2])
            if still_disagrees(m2, t2, features, surety, limit):
                model, table, changed = m2, t2, True
                break
    return model, table


# ---------------------------------------------------------------------------------------------

def main(argv):
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--surety", default=os.path.join(ROOT, "build-fuzz", "surety"))
    ap.add_argument("--count", type=int, default=200, help="instances (default 200)")
    ap.add_argument("--seed", type=int, default=1, help="campaign seed (default 1)")
    ap.add_argument("--first", type=int, default=0, help="index of the first instance")
    ap.add_argument("--minutes", type=float, default=0,
                    help="stop starting new instances after this many minutes (0: no limit)")
    ap.add_argument("--limits", type=float, default=0.25,
                    help="share of instances also solved under tiny time/node limits")
    ap.add_argument("--cbc-limit", type=float, default=CBC_LIMIT_S,
                    help="seconds per reference solve (default %d)" % CBC_LIMIT_S)
    ap.add_argument("--large", action="store_true",
                    help="only n 10-14, m 2-4, N 20-80 and kinds with deeper search trees")
    ap.add_argument("--keep", metavar="DIR", help="keep every instance's files under DIR")
    ap.add_argument("--regress", default=os.path.join(ROOT, "instances", "regress"),
                    help="where minimised disagreements are written")
    ap.add_argument("--no-minimise", action="store_true")
    ap.add_argument("--verbose", action="store_true", help="one line per instance")
    ap.add_argument("--surety-args", default="", metavar="ARGS",
                    help="further options of every surety solve, e.g. '--split-after 1 "
                         "--split-rounds 2'")
    a = ap.parse_args(argv)
    SURETY_ARGS[:] = shlex.split(a.surety_args)
    surety = os.path.abspath(a.surety)
    if not os.access(surety, os.X_OK) or not shutil.which("cbc"):
        print("fuzz_solve.py: needs %s and cbc" % surety, file=sys.stderr)
        return 2

    t_start = time.time()
    stats = collections.Counter()
    by = collections.defaultdict(collections.Counter)
    bad = []
    ref_faults = []
    nodes = []
    done = 0
    for idx in range(a.first, a.first + a.count):
        if a.minutes and time.time() - t_start > a.minutes * 60:
            break
        model, table, features = make_model(a.seed, idx, a.large)
        work = os.path.join(a.keep, "i%05d" % idx) if a.keep else \
            tempfile.mkdtemp(prefix="surety-fuzz-")
        os.makedirs(work, exist_ok=True)
        rng = random.Random("limits/%d/%d" % (a.seed, idx))
        try:
            inst, res, ref, problems, vst, nlim = run_one(
                model, table, features, surety, work, a.cbc_limit, stats, rng,
                rng.random() < a.limits)
        except (RuntimeError, ValueError, KeyError) as e:
            print("instance %d (%s): ERROR %s" % (idx, features["kind"], e))
            stats["errors"] += 1
            bad.append((idx, features, ["error: %s" % e], None))
            if not a.keep:
                shutil.rmtree(work, ignore_errors=True)
            continue
        done += 1
        stats["limited_runs"] += nlim
        stats["status_" + res["status"]] += 1
        nodes.append(int(res.get("nodes") or 0))
        if res["_lp_nodes"]:
            stats["lp_node_instances"] += 1
            stats["lp_nodes"] += res["_lp_nodes"]
        if res["_restored_solves"]:
            stats["restored_solve_instances"] += 1
        stats["ref_" + str(vst)] += 1
        for src, (st, _) in ref["sources"].items():
            stats["src_%s_%s" % (src, st)] += 1
        if "enum" in ref["sources"] and ref["sources"]["cbc"][0] in ("optimal", "infeasible"):
            stats["two_refs"] += 1
        if "highs-own" in ref["sources"] and ref["sources"]["cbc"][0] in ("optimal", "infeasible") \
                and ref["sources"]["highs-own"][0] in ("optimal", "infeasible"):
            stats["two_refs"] += 1
        if res["status"] == "optimal" and res.get("plan") == {}:
            stats["empty_optimal"] += 1
        if res["status"] in ("optimal", "feasible") and len(res.get("plan") or {}) == inst.n:
            stats["full_plan"] += 1
        f = features
        keys = [("kind", f["kind"]), ("constraint", f["constraint"]),
                ("resources", f["resources"]), ("eps", "0" if f["eps"] == 0 else str(f["eps"])),
                ("m", str(f["m"])), ("n", "3-6" if f["n"] <= 6 else "7-10" if f["n"] <= 10
                                     else "11-14"),
                ("N", "5-20" if f["N"] <= 20 else "21-40" if f["N"] <= 40 else "41-80"),
                ("restricted", str(f["restricted"])), ("required", str(f["required"])),
                ("correlated", str(f["correlated"]))]
        for key in keys:
            by[key]["runs"] += 1
            by[key][vst] += 1
            if problems:
                by[key]["disagree"] += 1
        line = "instance %d %s n=%d m=%d N=%d k=%d %s: surety %s %s, reference %s %s" % (
            idx, f["kind"], inst.n, inst.m, inst.N, inst.k, f["constraint"], res["status"],
            res.get("objective"), vst,
            " ".join("%s=%s" % (s, v[1] if v[0] == "optimal" else v[0])
                     for s, v in ref["sources"].items()))
        if problems:
            print(line)
            for p in problems:
                print("    DISAGREE " + p)
            more = recheck(inst, a.cbc_limit)
            print("    recheck: %s" % more)
            if reference_fault(inst, res, ref, more, surety, work, stats, a, idx):
                # exhaustive enumeration, or else the three further references agreeing
                # with each other, agree with surety, and every check passes against them:
                # the first reference was wrong
                print("    REFERENCE FAULT: %s with surety, and every check passes against "
                      "them; the first reference (%s) is wrong here, not counted as a surety "
                      "disagreement" % (
                          "exhaustive enumeration agrees" if "enum" in more else
                          "glpk, highs-export and highs-own agree with each other and",
                          " ".join("%s=%s" % (s, v[1] if v[0] == "optimal" else v[0])
                                   for s, v in ref["sources"].items())))
                ref_faults.append(idx)
                if not a.keep:
                    shutil.rmtree(work, ignore_errors=True)
                continue
            bad.append((idx, features, problems, more))
            if not a.no_minimise:
                mm, tt = minimise(model, table, features, surety, a.cbc_limit)
                os.makedirs(a.regress, exist_ok=True)
                name = "fuzz-s%d-i%d" % (a.seed, idx)
                mm["name"] = name
                if tt is not None:
                    mm["scenario_table"] = name + ".csv"
                    header, rows = tt
                    with open(os.path.join(a.regress, name + ".csv"), "w", newline="") as fp:
                        w = csv.writer(fp)
                        w.writerow(header)
                        for row in rows:
                            w.writerow([repr(v) for v in row])
                with open(os.path.join(a.regress, name + ".json"), "w") as fp:
                    json.dump(mm, fp, indent=1)
                    fp.write("\n")
                print("    minimised: %s (n=%d, m=%d, N=%d)" % (
                    os.path.join(a.regress, name + ".json"), len(mm["jobs"]),
                    len(mm["resources"]), mm["scenarios"]))
        elif a.verbose:
            print(line)
        sys.stdout.flush()
        if not a.keep:
            shutil.rmtree(work, ignore_errors=True)

    wall = time.time() - t_start
    print("\n%d instances in %.0f s (seed %d, first %d); %d errors; %d disagreeing" % (
        done, wall, a.seed, a.first, stats["errors"], len(bad)))
    if ref_faults:
        print("reference faults (the first reference contradicted by exhaustive enumeration, "
              "or by three others, agreeing with surety): %d, instances %s" % (len(ref_faults),
                                                   " ".join(str(i) for i in ref_faults)))
    print("surety statuses: %s" % ", ".join("%s %d" % (k[7:], v) for k, v in sorted(stats.items())
                                             if k.startswith("status_")))
    print("reference verdicts: %s" % ", ".join("%s %d" % (k[4:], v)
                                               for k, v in sorted(stats.items())
                                               if k.startswith("ref_")))
    print("sources: %s" % ", ".join("%s %d" % (k[4:], v) for k, v in sorted(stats.items())
                                    if k.startswith("src_")))
    print("instances with two finished references: %d; empty plan optimal: %d; every job "
          "accepted: %d; limited runs: %d" % (stats["two_refs"], stats["empty_optimal"],
                                             stats["full_plan"], stats["limited_runs"]))
    print("limited runs by status: %s" % ", ".join(
        "%s %d" % (k[8:], v) for k, v in sorted(stats.items()) if k.startswith("limited_")
        and k != "limited_runs"))
    if nodes:
        nodes.sort()
        print("surety nodes per instance: median %d, 90th percentile %d, max %d; %d instances "
              "over 100 nodes, %d over 1000" % (
                  nodes[len(nodes) // 2], nodes[int(0.9 * (len(nodes) - 1))], nodes[-1],
                  sum(1 for v in nodes if v > 100), sum(1 for v in nodes if v > 1000)))
    print("instances whose LP bounded nodes below the root: %d (%d nodes); whose restored "
          "nodes solved their own split: %d" % (stats["lp_node_instances"], stats["lp_nodes"],
                                                stats["restored_solve_instances"]))
    print("seconds: surety %.1f, cbc %.1f, enumeration %.1f, highs %.1f" % (
        stats["surety_s"], stats["cbc_s"], stats["enum_s"], stats["highs_s"]))
    print("\n| feature | value | runs | optimal | infeasible | no reference | disagree |")
    print("|---|---|---|---|---|---|---|")
    for (key, val) in sorted(by):
        c = by[(key, val)]
        print("| %s | %s | %d | %d | %d | %d | %d |" % (key, val, c["runs"], c["optimal"],
                                                        c["infeasible"], c["noref"] + c["split"],
                                                        c["disagree"]))
    return 1 if bad else 0


if __name__ == "__main__":
    np.seterr(all="ignore")
    sys.exit(main(sys.argv[1:]))
