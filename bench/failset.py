#!/usr/bin/python3
# failset.py - a plan's failed scenarios, and the model restricted to them. SPDX-License-Identifier: MIT
"""Writes the model in which a plan's failed scenarios are known in advance.

Reads a model, its scenarios as `surety sample MODEL -o SAMPLE.csv` writes them, and a plan as
`surety solve MODEL -o PLAN.json` writes it. It counts the scenarios the plan overloads (a
resource holds when its load is at most its capacity plus a relative 1e-12, as surety counts;
the count is compared with `surety check --json` when --surety is given) and prints, per
resource, how many it overloads and how many of those no other resource overloads.

With -o OUT.json it also writes OUT.json and OUT.csv: the same jobs and resources on the
scenarios the plan holds, with an allowance of 0 and each job's profit set to its mean over
the whole sample in every row, so that the objective is unchanged. Every plan of OUT.json
fails only the plan's failed scenarios in the full model, hence is feasible there, and the
plan itself is feasible in OUT.json: the optimum of OUT.json is the best plan with those
failed scenarios, at least the plan's value. Solving it shows how far the search's bound
stands above that optimum once the failed scenarios are fixed (bench/README.md,
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
    plan = json.load(open(a.plan))["plan"]
    rows = list(csv.DictReader(open(a.sample, newline="")))
    res = {r["id"]: r for r in model["resources"]}
    jobs = [j["id"] for j in model["jobs"]]
    N = len(rows)
    over = {i: set() for i in res}
    for l, row in enumerate(rows):
        load = dict.fromkeys(res, 0.0)
        for j, i in plan.items():
            if i is not None:
                load[i] += float(row[j + ".hours"]) * res[i].get("hours_factor", 1)
        for i, r in res.items():
            cap = r["capacity"]
            if load[i] > cap + 1e-12 * abs(cap):
                over[i].add(l)
    failed = sorted(set().union(*over.values()))
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
    keep = [row for l, row in enumerate(rows) if l not in set(failed)]
    mean = {j: sum(float(row[j + ".profit"]) for row in rows) / N for j in jobs}
    table = os.path.splitext(a.out)[0] + ".csv"
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
