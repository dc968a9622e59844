#!/usr/bin/python3
# highs_mps.py - solves one MPS file with HiGHS through scipy.optimize.milp (scipy 1.10.1) and
# prints the outcome as JSON; run as its own process so its time and memory are its own.
# SPDX-License-Identifier: MIT
"""usage: highs_mps.py FILE.mps TIME_LIMIT_S REL_GAP

Prints {"status", "objective", "bound", "gap", "nodes", "read_seconds", "solve_seconds"
(reading plus solving, without starting Python), "x": {column: value, ...}} with the
objective and bound in the file's own sense (minimisation unless OBJSENSE says MAX). Only
nonzero x values are listed. status is one of optimal, time_limit, infeasible, unbounded,
error.
"""
import json
import math
import os
import sys
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))

import numpy as np  # noqa: E402
from scipy.optimize import Bounds, LinearConstraint, milp  # noqa: E402

import mpsread  # noqa: E402


def main(argv):
    if len(argv) != 3:
        sys.stderr.write(__doc__)
        return 1
    path, tl, gap = argv[0], float(argv[1]), float(argv[2])
    t0 = time.perf_counter()
    m = mpsread.read(path)
    c, A, rlb, rub, clb, cub, integ = m.arrays()
    read_s = time.perf_counter() - t0
    # milp minimises; a MAX file is negated here and its results negated back.
    sign = float(m.sense)
    # scipy 1.10.1 milp passes time_limit, mip_rel_gap, presolve and disp to HiGHS; the MIP
    # solver of the HiGHS it ships runs on one thread.
    res = milp(sign * c, integrality=integ, bounds=Bounds(clb, cub),
               constraints=[LinearConstraint(A, rlb, rub)] if A.shape[0] else [],
               options={"time_limit": max(1e-3, tl - read_s), "mip_rel_gap": gap,
                        "disp": False, "presolve": True})
    solve_s = time.perf_counter() - t0
    status = {0: "optimal", 1: "time_limit", 2: "infeasible", 3: "unbounded"}.get(
        res.status, "error")
    out = {"status": status, "message": str(res.message), "objective": None, "bound": None,
           "gap": None, "nodes": getattr(res, "mip_node_count", None), "read_seconds": read_s,
           "solve_seconds": solve_s,
           "x": {}}
    if res.x is not None:
        out["objective"] = sign * float(res.fun) + m.obj_const
        out["x"] = {m.cols[j]: float(v) for j, v in enumerate(res.x) if abs(v) > 1e-9}
    bound = getattr(res, "mip_dual_bound", None)
    if bound is not None and math.isfinite(bound):
        out["bound"] = sign * float(bound) + m.obj_const
    g = getattr(res, "mip_gap", None)
    if g is not None and math.isfinite(g):
        out["gap"] = float(g)
    if out["nodes"] is not None:
        out["nodes"] = int(out["nodes"])
    json.dump(out, sys.stdout)
    sys.stdout.write("\n")
    return 0


if __name__ == "__main__":
    np.seterr(all="ignore")
    sys.exit(main(sys.argv[1:]))
