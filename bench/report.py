# report.py - the benchmark's outputs: markdown table, CSV, and an SVG chart of solve time
# against N (log scales) written by hand. SPDX-License-Identifier: MIT
import csv
import math
import os
import platform
import statistics

COLORS = ["#1b6ca8", "#d1495b", "#2e8b57", "#edae49", "#6a4c93", "#8d6e63", "#00798c",
          "#c0392b"]
SHORT = {"optimal": "opt", "time_limit": "TL", "infeasible": "infeas", "killed": "KILLED",
         "error": "ERROR"}


def num(v, digits=10):
    return "-" if v is None else "%.*g" % (digits, v)


def pct(g):
    if g is None:
        return "-"
    return ">1000%" if g > 10 else "%.3g%%" % (100.0 * g)


def cpu_model():
    try:
        with open("/proc/cpuinfo") as fp:
            for line in fp:
                if line.startswith("model name"):
                    return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or "unknown"


def machine(started, time_limit, argv, surety):
    return {"date": started.strftime("%Y-%m-%d %H:%M UTC"), "nproc": os.cpu_count(),
            "cpu": cpu_model(), "time_limit": time_limit,
            "command": "/usr/bin/python3 bench/run.py " + " ".join(argv), "surety": surety}


def solvers_of(rows):
    out = []
    for r in rows:
        if r["solver"] not in out:
            out.append(r["solver"])
    return out


def cell(r):
    s = "%.2f s %s" % (r["wall_s"], SHORT.get(r["status"], r["status"]))
    if r["status"] != "optimal" and r["gap"] is not None:
        s += " %s" % pct(r["gap"])
    return s


def ratio(peer, sur):
    """Peer time over surety time; '>' when only the peer hit the limit (a lower bound on the
    true ratio), '<' when only surety did."""
    if sur["wall_s"] <= 0:
        return "-"
    v = peer["wall_s"] / sur["wall_s"]
    p_done, s_done = peer["status"] == "optimal", sur["status"] == "optimal"
    mark = ""
    if s_done and not p_done:
        mark = ">"
    elif p_done and not s_done:
        mark = "<"
    elif not p_done and not s_done:
        mark = "~"
    return "%s%.3gx" % (mark, v)


def markdown(rows, meta):
    solvers = solvers_of(rows)
    peers = [s for s in solvers if s != "surety"]
    by_inst = {}
    for r in rows:
        by_inst.setdefault(r["instance"], {})[r["solver"]] = r
    out = []
    out.append("Run %s on %d x %s; time limit %g s per run; command `%s`.\n"
               % (meta["date"], meta["nproc"], meta["cpu"], meta["time_limit"], meta["command"]))
    out.append("Cells: wall time, status (opt = proven optimal, TL = stopped by the time limit, "
               "with the gap at the limit), and the time ratio peer/surety ('>' the peer hit "
               "the limit so the true ratio is larger, '<' only surety hit it, '~' both did).\n")
    head = ["instance", "N", "surety"]
    for p in peers:
        head += [p, "ratio"]
    out.append("| " + " | ".join(head) + " |")
    out.append("|" + "|".join(["---"] * len(head)) + "|")
    for inst, d in by_inst.items():
        sur = d.get("surety")
        line = [inst, str(next(iter(d.values()))["N"]), cell(sur) if sur else "-"]
        for p in peers:
            r = d.get(p)
            line += [cell(r) if r else "-", ratio(r, sur) if (r and sur) else "-"]
        out.append("| " + " | ".join(line) + " |")
    out.append("")
    out.append("| solver | runs | proven optimal | median wall s | median CPU s "
               "| median wall ratio to surety* | median CPU ratio* | median peak MB |")
    out.append("|---|---|---|---|---|---|---|---|")
    for s in solvers:
        rs = [r for r in rows if r["solver"] == s]
        # ratios only where surety proved its optimum: where both stopped at the limit the
        # ratio is about 1 by construction and says nothing
        ratios, cratios = [], []
        for r in rs:
            sur = by_inst[r["instance"]].get("surety")
            if not sur or sur["status"] != "optimal":
                continue
            if sur["wall_s"] > 0:
                ratios.append(r["wall_s"] / sur["wall_s"])
            # CPU ratios with a 10 ms floor: GNU time counts in 10 ms ticks
            if sur and sur.get("cpu_s") is not None and r.get("cpu_s") is not None:
                cratios.append(max(r["cpu_s"], 0.01) / max(sur["cpu_s"], 0.01))
        cpus = [r["cpu_s"] for r in rs if r.get("cpu_s") is not None]
        mems = [r["mem_mb"] for r in rs if r.get("mem_mb") is not None]
        out.append("| %s | %d | %d | %.3g | %s | %s | %s | %s |" % (
            s, len(rs), sum(r["status"] == "optimal" for r in rs),
            statistics.median(r["wall_s"] for r in rs) if rs else float("nan"),
            "%.3g" % statistics.median(cpus) if cpus else "-",
            "%.3g" % statistics.median(ratios) if ratios and s != "surety" else "-",
            "%.3g" % statistics.median(cratios) if cratios and s != "surety" else "-",
            "%.3g" % statistics.median(mems) if mems else "-"))
    out.append("")
    out.append("\\* over the instances surety solved to optimality; a ratio involving a peer "
               "stopped by the limit is a lower bound.")
    return "\n".join(out) + "\n"


FIELDS = ["instance", "n", "m", "N", "eps", "seed", "solver", "status", "objective", "bound",
          "gap", "nodes", "wall_s", "cpu_s", "solver_s", "mem_mb", "fit", "required_fit",
          "order"]


def write_csv(rows, path):
    with open(path, "w", newline="") as fp:
        w = csv.DictWriter(fp, fieldnames=FIELDS)
        w.writeheader()
        for r in rows:
            w.writerow({k: ("" if r.get(k) is None else r.get(k)) for k in FIELDS})


def _esc(s):
    return str(s).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def svg(rows, time_limit, title="Solve time against scenario count N"):
    """Log-log scatter of wall time against N, one colour per solver, a line through each
    solver's median time at every N; runs stopped by the limit are hollow triangles."""
    W, H = 760, 460
    L, R, T, B = 70, 190, 40, 60
    pts = [r for r in rows if r["wall_s"] and r["wall_s"] > 0 and r["N"] > 0]
    if not pts:
        return '<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"/>\n'
    xs = [r["N"] for r in pts]
    ys = [r["wall_s"] for r in pts]
    # whole decades with a margin, so no point sits on the frame
    x0 = math.floor(math.log10(min(xs)) - 0.15)
    x1 = math.ceil(math.log10(max(xs)) + 0.15)
    y0 = math.floor(math.log10(min(ys)) - 0.15)
    y1 = math.ceil(math.log10(max(ys)) + 0.15)

    def px(x):
        return L + (math.log10(x) - x0) / (x1 - x0) * (W - L - R)

    def py(y):
        return H - B - (math.log10(y) - y0) / (y1 - y0) * (H - T - B)

    o = ['<svg xmlns="http://www.w3.org/2000/svg" width="%d" height="%d" '
         'font-family="sans-serif" font-size="12">' % (W, H),
         '<rect width="100%" height="100%" fill="white"/>',
         '<text x="%d" y="22" font-size="15">%s</text>' % (L, _esc(title))]
    for e in range(x0, x1 + 1):
        for f in (1, 2, 5) if e < x1 else (1,):
            x = px(f * 10 ** e)
            o.append('<line x1="%.1f" y1="%d" x2="%.1f" y2="%d" stroke="#%s"/>'
                     % (x, T, x, H - B, "ccc" if f == 1 else "eee"))
            if f in (1, 2, 5):
                o.append('<text x="%.1f" y="%d" text-anchor="middle">%g</text>'
                         % (x, H - B + 16, f * 10 ** e))
    for e in range(y0, y1 + 1):
        y = py(10 ** e)
        o.append('<line x1="%d" y1="%.1f" x2="%d" y2="%.1f" stroke="#ccc"/>' % (L, y, W - R, y))
        o.append('<text x="%d" y="%.1f" text-anchor="end">%g</text>' % (L - 6, y + 4, 10 ** e))
    if time_limit and 10 ** y0 <= time_limit <= 10 ** y1:
        y = py(time_limit)
        o.append('<line x1="%d" y1="%.1f" x2="%d" y2="%.1f" stroke="#999" '
                 'stroke-dasharray="6,4"/>' % (L, y, W - R, y))
        o.append('<text x="%d" y="%.1f" fill="#666">time limit</text>' % (L + 4, y - 4))
    o.append('<rect x="%d" y="%d" width="%d" height="%d" fill="none" stroke="#333"/>'
             % (L, T, W - L - R, H - T - B))
    o.append('<text x="%d" y="%d" text-anchor="middle">scenarios N (log scale)</text>'
             % ((L + W - R) // 2, H - 18))
    o.append('<text transform="translate(18,%d) rotate(-90)" text-anchor="middle">'
             'wall time, s (log scale)</text>' % ((T + H - B) // 2))
    for si, s in enumerate(solvers_of(rows)):
        col = COLORS[si % len(COLORS)]
        rs = [r for r in pts if r["solver"] == s]
        byN = {}
        for r in rs:
            byN.setdefault(r["N"], []).append(r["wall_s"])
        line = " ".join("%.1f,%.1f" % (px(n), py(statistics.median(v)))
                        for n, v in sorted(byN.items()))
        if len(byN) > 1:
            o.append('<polyline points="%s" fill="none" stroke="%s" stroke-width="1.5"/>'
                     % (line, col))
        for r in rs:
            x, y = px(r["N"]), py(r["wall_s"])
            if r["status"] == "optimal":
                o.append('<circle cx="%.1f" cy="%.1f" r="4" fill="%s"/>' % (x, y, col))
            else:
                o.append('<path d="M%.1f %.1f l5 9 h-10 z" fill="white" stroke="%s" '
                         'stroke-width="1.5"><title>%s</title></path>'
                         % (x, y - 6, col, _esc(r["status"])))
        ly = T + 10 + 20 * si
        o.append('<circle cx="%d" cy="%d" r="4" fill="%s"/>' % (W - R + 16, ly, col))
        o.append('<text x="%d" y="%d">%s</text>' % (W - R + 26, ly + 4, _esc(s)))
    ly = T + 10 + 20 * len(solvers_of(rows)) + 10
    o.append('<path d="M%d %d l5 9 h-10 z" fill="white" stroke="#333"/>' % (W - R + 16, ly - 6))
    o.append('<text x="%d" y="%d">stopped by limit</text>' % (W - R + 26, ly + 4))
    o.append("</svg>")
    return "\n".join(o) + "\n"


def read_csv(path):
    """Rows of a results.csv, with numbers as numbers (for re-rendering)."""
    ints = ("n", "m", "N", "seed", "nodes", "fit", "required_fit", "order")
    rows = []
    with open(path, newline="") as fp:
        for r in csv.DictReader(fp):
            for k, v in r.items():
                if v == "":
                    r[k] = None
                elif k in ints:
                    r[k] = int(v)
                elif k not in ("instance", "solver", "status"):
                    r[k] = float(v)
            rows.append(r)
    return rows


def main(argv):
    import argparse
    ap = argparse.ArgumentParser(description="Re-renders results.md and time.svg from a "
                                 "results.csv written by run.py.")
    ap.add_argument("csv")
    ap.add_argument("--time-limit", type=float, required=True)
    ap.add_argument("--command", default="(see the CSV's run)")
    ap.add_argument("--date", default="")
    ap.add_argument("--out", required=True)
    a = ap.parse_args(argv)
    rows = read_csv(a.csv)
    meta = {"date": a.date, "nproc": os.cpu_count(), "cpu": cpu_model(),
            "time_limit": a.time_limit, "command": a.command}
    os.makedirs(a.out, exist_ok=True)
    with open(os.path.join(a.out, "results.md"), "w") as fp:
        fp.write(markdown(rows, meta))
    with open(os.path.join(a.out, "time.svg"), "w") as fp:
        fp.write(svg(rows, a.time_limit))
    return 0


if __name__ == "__main__":
    import sys
    sys.exit(main(sys.argv[1:]))
