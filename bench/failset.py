#!/usr/bin/python3
# failset.py - a plan's failed scenarios, and the model restricted to them. SPDX-License-Identifier: MIT
"""Writes the model in which a plan's failed scenarios are known in advance.

Reads a model with the joint constraint, its scenarios as `surety sample MODEL -o SAMPLE.csv`
writes them, and a feasible plan as `surety solve MODEL -o PLAN.json` writes it. It counts the
scenarios the plan overloads, as surety counts them (a resource's base hours summed in the
model's job order, times its hours factor, above its capacity plus a relative 1e-12; with
--surety the count is also compared with `surety check --json`), and prints, per resource, how
many it overloads and how many of those no other resource overloads.

With -o OUT.json it also writes OUT.json and OUT.csv: the same jobs and resources on the
scenarios the plan holds, with an allowance of 0 and each job's profit set to its mean over
the whole sample in every row, so that every plan keeps its objective. A plan of OUT.json
fails at most the plan's failed scenarios in the full model, at most its allowance, so it is
feasible there; the plan itself is feasible in OUT.json. So the optimum of OUT.json is the best
plan that fails no other scenario, at least the plan's value. Solving it shows how far the
search's bound stands above that optimum once the failed scenarios are fixed (bench/README.md,
"The bound's gap lies in the choice of failed scenarios").
"""
import argparse
import csv
import json
import os
import subprocess
import sys


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("model")
    ap.add_argument("sample", help="CSV written by surety sample")
    ap.add_argument("plan", help="plan JSON written by surety solve -o")
    ap.add_argument("-o", dest="out", help="write the restricted model here (and .csv beside)")
    ap.add_argument("--surety", help="surety binary: compare the count with surety check")
    ap.add_argument("--check-args", default="", help="extra arguments for surety check")
    a = ap.parse_args()

    model = json.load(open(a.model))
    if model.get("constraint", "joint") != "joint":
        sys.exit("failset.py: the model's constraint is not joint: with one allowance per "
                 "resource the failed scenarios of all resources together fix nothing")
    plan = json.load(open(a.plan)).get("plan") or {}
    rows = list(csv.DictReader(open(a.sample, newline="")))
    res = {r["id"]: r for r in model["resources"]}
    jobs = [j["id"] for j in model["jobs"]]
    for j, i in plan.items():
        if j not in jobs or (i is not None and i not in res):
            sys.exit(f"failset.py: the plan places {j!r} in {i!r}, "
                     "which the model does not have")
    N = len(rows)
    over = {i: set() for i in res}
    for l, row in enumerate(rows):
        base = dict.fromkeys(res, 0.0)  # base hours in the model's job order
        for j in jobs:
            i = plan.get(j)
            if i is not None:
                base[i] += float(row[j + ".hours"])
        for i, r in res.items():
            if r.get("hours_factor", 1) * base[i] > r["capacity"] * (1 + 1e-12):
                over[i].add(l)
    failed = set().union(*over.values())
    k = int(model.get("risk", 0.05) * N + 1e-9)
    print(f"{N} scenarios, allowance {k}: the plan fails {len(failed)}")
    for i in res:
        alone = sum(1 for l in over[i] if all(l not in over[o] for o in res if o != i))
        print(f"  {i}: overloaded in {len(over[i])}, {alone} of them by it alone")
    if a.surety:
        cmd = [a.surety, "check", a.model, a.plan, "--samples", "1000", "--json"]
        cmd += a.check_args.split()
        fit = json.loads(subprocess.run(cmd, check=True, capture_output=True,
                                        text=True).stdout)["in_sample"]["fit"]
        if fit != N - len(failed):
            sys.exit(f"failset.py: surety check counts {fit} fitting scenarios, "
                     f"this count {N - len(failed)}")
        print(f"  surety check agrees: {fit} fit")
    if not a.out:
        return
    if len(failed) > k:
        sys.exit(f"failset.py: the plan fails {len(failed)} scenarios, more than the "
                 f"allowance {k}: it is not feasible, and neither would the restricted "
                 "model's plans be")
    table = os.path.splitext(a.out)[0] + ".csv"
    if os.path.abspath(table) == os.path.abspath(a.sample):
        sys.exit(f"failset.py: {table} would overwrite the sample; choose another -o")
    keep = [row for l, row in enumerate(rows) if l not in failed]
    mean = {j: sum(float(row[j + ".profit"]) for row in rows) / N for j in jobs}
    with open(table, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow([c for j in jobs for c in (j + ".hours", j + ".profit")])
        for row in keep:
            w.writerow([v for j in jobs for v in (row[j + ".hours"], repr(mean[j]))])
    out = dict(model)
    out["name"] = model.get("name", "model") + "-failset"
    out["scenarios"] = len(keep)
    out["risk"] = 0.5 / len(keep)  # an allowance of floor(0.5) = 0
    out["scenario_table"] = os.path.basename(table)
    with open(a.out, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")
    print(f"wrote {a.out} and {table}: {len(keep)} scenarios, allowance 0")


if __name__ == "__main__":
    main()
