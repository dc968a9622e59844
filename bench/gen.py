#!/usr/bin/python3
# gen.py - benchmark instance families for surety: small model files, reproducible from
# (family, n, m, N, eps, seed, tightness). SPDX-License-Identifier: MIT
"""Writes surety model files (JSON) for benchmarking; --rho sets the correlation level.

Every instance is a pure function of its parameters: the same command writes the same bytes.
Scenarios are not written: surety draws them from the model's distributions and seed, so a
model file stays a few kilobytes even for N = 10000.

Families (all invented data):
  ident   identical resources (same capacity, hours factor 1), every job allowed everywhere,
          independent hours
  diff    different resources (capacity shares and hours factors differ), eligibility
          restrictions (each job allowed in a random subset of resources)
  shock   like diff, plus a common shock: every pair of jobs correlated ("all")
  pairs   like diff, plus disjoint pairs of strongly correlated jobs ("pairs")

Construction (METHODS.md s.9.5, in the spirit of Chu & Beasley 1998 for tightness and
Pisinger 2005 for profit correlated with weight, then clamped):
  mean hours      mu_j ~ U(4, 40), coefficient of variation ~ U(0.10, 0.40)
  distribution    normal truncated at 0.5 h (two thirds) or lognormal (one third)
  profit rule     clamp(rate_j * hours + fixed_j, min_j, max_j) with rate_j ~ 80 * U(0.8, 1.2)
                  and fixed_j = 150 * (q_j - 0.5), q_j ~ U(0,1) (the noise term); the clamps
                  sit at 0.5x and 1.5x the profit at mean hours
  capacity        total capacity = tightness * sum_j mu_j, split across resources by shares
                  (equal for ident, Dirichlet(4) otherwise) and scaled by the resource's hours
                  factor, so tightness is the share of expected total hours the plan can hold
"""
import argparse
import hashlib
import json
import os
import sys

import numpy as np

FAMILIES = ("ident", "diff", "shock", "pairs")


def instance_name(family, n, m, N, eps, seed, tightness, rho=None):
    name = "%s-n%d-m%d-N%d-e%03d-t%02d-s%d" % (
        family, n, m, N, round(eps * 1000), round(tightness * 10), seed)
    return name if rho is None else name + "-r%02d" % round(rho * 100)


def rng_for(family, n, m, eps, seed, tightness):
    # The instance data depend on everything but N, so one family member at several N
    # differs only in the scenario count (and a larger sample extends a smaller one).
    key = "%s/%d/%d/%.6f/%d/%.6f" % (family, n, m, eps, seed, tightness)
    digest = hashlib.sha256(key.encode()).digest()
    return np.random.default_rng(int.from_bytes(digest[:8], "little"))


def r2(x):
    """Rounds to two decimals so the file is short and reads back exactly as written."""
    return float("%.2f" % x)


def generate(family, n, m, N, eps, seed, tightness=0.5, rho=None):
    """The model as a dict. rho overrides the correlation level of shock (default 0.3, every
    pair) and pairs (default 0.6, disjoint pairs); other families ignore it."""
    if family not in FAMILIES:
        raise ValueError("unknown family %r (one of %s)" % (family, ", ".join(FAMILIES)))
    if not (1 <= m <= 26 and n >= 1 and N >= 1 and 0 < eps < 1 and 0 < tightness <= 1):
        raise ValueError("parameters out of range")
    if rho is not None and not (0 <= rho < 1):
        raise ValueError("parameters out of range")
    rng = rng_for(family, n, m, eps, seed, tightness)
    width = max(2, len(str(n)))
    job_ids = ["J%0*d" % (width, j + 1) for j in range(n)]
    res_ids = ["R%s" % chr(ord("a") + i) for i in range(m)]

    mu = rng.uniform(4.0, 40.0, n)
    cv = rng.uniform(0.10, 0.40, n)
    kind = rng.uniform(0.0, 1.0, n)
    rate = 80.0 * rng.uniform(0.8, 1.2, n)
    q = rng.uniform(0.0, 1.0, n)

    if family == "ident":
        factor = np.ones(m)
        share = np.full(m, 1.0 / m)
    else:
        factor = rng.uniform(0.8, 1.25, m)
        share = rng.dirichlet(np.full(m, 4.0))
    total = tightness * float(np.sum(mu))
    resources = []
    for i in range(m):
        resources.append({"id": res_ids[i], "capacity": r2(total * share[i] * factor[i]),
                          "hours_factor": r2(factor[i])})

    allowed = np.ones((n, m), dtype=bool)
    if family != "ident" and m > 1:
        allowed = rng.uniform(0.0, 1.0, (n, m)) < 0.7
        for j in range(n):
            if not allowed[j].any():
                allowed[j, rng.integers(m)] = True

    jobs = []
    for j in range(n):
        mean, sd = r2(mu[j]), r2(max(0.05, cv[j] * mu[j]))
        if kind[j] < 2.0 / 3.0:
            hours = {"dist": "normal", "mean": mean, "sd": sd, "min": 0.5}
        else:
            hours = {"dist": "lognormal", "mean": mean, "sd": sd}
        fixed = 150.0 * (q[j] - 0.5)
        at_mean = rate[j] * mean + fixed
        job = {"id": job_ids[j], "hours": hours,
               "profit": {"rate": r2(rate[j]), "fixed": r2(fixed),
                          "min": r2(0.5 * at_mean), "max": r2(1.5 * at_mean)}}
        if not allowed[j].all():
            job["allowed"] = [res_ids[i] for i in range(m) if allowed[j, i]]
        jobs.append(job)

    if family not in ("shock", "pairs"):
        rho = None
    model = {"name": instance_name(family, n, m, N, eps, seed, tightness, rho),
             "risk": eps, "scenarios": N, "seed": seed, "constraint": "joint",
             "resources": resources, "jobs": jobs}
    if family == "shock":
        model["correlation"] = {"all": 0.3 if rho is None else rho}
    elif family == "pairs":
        # Disjoint pairs keep the correlation matrix block-diagonal with 2x2 blocks of
        # |rho| < 1, hence positive definite without any repair.
        order = rng.permutation(n)
        pairs = []
        for a in range(0, n - 1, 4):
            pairs.append([job_ids[order[a]], job_ids[order[a + 1]],
                          0.6 if rho is None else rho])
        model["correlation"] = {"pairs": pairs}
    return model


def dumps(model):
    """JSON with one resource or job per line: short, and diffs read line by line."""
    out = []
    for key, value in model.items():
        if isinstance(value, list) and value and isinstance(value[0], dict):
            rows = ",\n    ".join(json.dumps(v) for v in value)
            out.append('  "%s": [\n    %s\n  ]' % (key, rows))
        else:
            out.append('  "%s": %s' % (key, json.dumps(value)))
    return "{\n" + ",\n".join(out) + "\n}\n"


def command_line(family, n, m, N, eps, seed, tightness):
    return ("/usr/bin/python3 bench/gen.py %s -n %d -m %d -N %d --eps %g --seed %d "
            "--tightness %g" % (family, n, m, N, eps, seed, tightness))


# The committed benchmark set: (family, n, m, N, eps, seed, tightness). Small enough that a
# general MIP solver finishes the smallest ones, large enough in N that it stalls on the rest.
BENCH_SET = [
    ("ident", 10, 2, 25, 0.10, 1, 0.5),
    ("diff", 12, 2, 40, 0.05, 2, 0.5),
    ("ident", 20, 3, 100, 0.05, 1, 0.5),
    ("diff", 20, 3, 100, 0.05, 1, 0.5),
    ("shock", 20, 3, 100, 0.10, 1, 0.3),
    ("pairs", 20, 3, 100, 0.01, 1, 0.7),
    ("ident", 40, 4, 500, 0.05, 1, 0.5),
    ("diff", 40, 4, 500, 0.05, 1, 0.5),
    ("diff", 40, 4, 1000, 0.05, 1, 0.5),
    ("diff", 40, 4, 2000, 0.05, 1, 0.5),
    ("shock", 40, 4, 1000, 0.05, 1, 0.5),
    ("pairs", 40, 4, 1000, 0.10, 1, 0.3),
    ("diff", 60, 5, 1000, 0.05, 1, 0.7),
    ("diff", 100, 10, 1000, 0.05, 1, 0.5),
    ("ident", 100, 10, 10000, 0.01, 1, 0.5),
]

# The two tiny instances of `run.py --quick`.
QUICK_SET = BENCH_SET[:2]


def write_set(outdir, entries):
    os.makedirs(outdir, exist_ok=True)
    lines = []
    for e in entries:
        model = generate(*e)
        path = os.path.join(outdir, model["name"] + ".json")
        with open(path, "w") as fp:
            fp.write(dumps(model))
        lines.append((model["name"] + ".json", command_line(*e)))
    return lines


def main(argv):
    ap = argparse.ArgumentParser(description="Writes a benchmark model file for surety.")
    ap.add_argument("family", nargs="?", choices=FAMILIES)
    ap.add_argument("-n", type=int, default=20, help="jobs (default 20)")
    ap.add_argument("-m", type=int, default=3, help="resources (default 3)")
    ap.add_argument("-N", type=int, default=100, help="scenarios (default 100)")
    ap.add_argument("--eps", type=float, default=0.05, help="risk (default 0.05)")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--tightness", type=float, default=0.5,
                    help="capacity as a share of expected total hours (default 0.5)")
    ap.add_argument("--rho", type=float, default=None,
                    help="correlation level for shock (default 0.3) and pairs (default 0.6)")
    ap.add_argument("-o", dest="out", help="output file (default: stdout)")
    ap.add_argument("--set", metavar="DIR",
                    help="write the committed benchmark set into DIR (with README.md)")
    a = ap.parse_args(argv)
    if a.set:
        lines = write_set(a.set, BENCH_SET)
        with open(os.path.join(a.set, "README.md"), "w") as fp:
            fp.write("# Benchmark set\n\nInvented instances written by `bench/gen.py --set "
                     "instances/bench` (run from the repository root); each file alone is "
                     "rewritten byte for byte by the command beside it.\n\n")
            for name, cmd in lines:
                fp.write("- `%s`: `%s -o instances/bench/%s`\n" % (name, cmd, name))
        return 0
    if not a.family:
        ap.error("give a family or --set DIR")
    try:
        model = generate(a.family, a.n, a.m, a.N, a.eps, a.seed, a.tightness, a.rho)
    except ValueError as e:
        ap.error(str(e))
    text = dumps(model)
    if a.out:
        with open(a.out, "w") as fp:
            fp.write(text)
    else:
        sys.stdout.write(text)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
