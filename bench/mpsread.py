# mpsread.py - a small reader for the MPS files `surety export` writes (fixed or free
# format), into dense-free arrays that scipy.optimize.milp takes. SPDX-License-Identifier: MIT
"""MPS reader for the benchmark harness.

scipy.optimize.milp (HiGHS inside scipy 1.10.1) reads no files, so the harness parses the very
file CBC and GLPK read and hands HiGHS the same matrices. Supported: NAME, OBJSENSE (MIN/MAX,
same line or next), ROWS (N/L/G/E; the first N row is the objective, later N rows are
ignored), COLUMNS with INTORG/INTEND markers, RHS (an RHS on the objective row is minus the
objective constant), RANGES, BOUNDS (UP LO FX FR MI PL BV LI UI), ENDATA. Names must not contain
blanks (free-format rule).

Integer columns with no bound entry keep the MPS default [0, +inf); the reader reports them in
`Mps.unbounded_integers` so a caller can see a file that relies on a solver-specific default.
"""
import math

import numpy as np
from scipy.sparse import csr_matrix


class MpsError(Exception):
    pass


class Mps:
    def __init__(self):
        self.name = ""
        self.sense = 1                # +1 minimise, -1 maximise (as written in the file)
        self.obj_row = None
        self.rows = []                # constraint row names, in file order
        self.row_type = {}            # name -> 'L' | 'G' | 'E'
        self.cols = []                # column names, in file order
        self.col_index = {}
        self.c = []                   # objective coefficients
        self.obj_const = 0.0
        self.entries = []             # (row index, column index, value)
        self.rhs = {}
        self.ranges = {}
        self.lb = []
        self.ub = []
        self.integer = []
        self.bounded = []             # column had a bound entry
        self.unbounded_integers = []

    def arrays(self):
        """(c, A (csr), row_lb, row_ub, col_lb, col_ub, integrality) for milp."""
        nr, nc = len(self.rows), len(self.cols)
        if self.entries:
            r, k, v = zip(*self.entries)
        else:
            r, k, v = (), (), ()
        A = csr_matrix((np.array(v, dtype=float), (np.array(r, dtype=int),
                        np.array(k, dtype=int))), shape=(nr, nc))
        rlb = np.full(nr, -np.inf)
        rub = np.full(nr, np.inf)
        for i, name in enumerate(self.rows):
            t = self.row_type[name]
            b = self.rhs.get(name, 0.0)
            rg = self.ranges.get(name)
            if t == "L":
                rub[i] = b
                if rg is not None:
                    rlb[i] = b - abs(rg)
            elif t == "G":
                rlb[i] = b
                if rg is not None:
                    rub[i] = b + abs(rg)
            else:
                if rg is None:
                    rlb[i] = rub[i] = b
                elif rg > 0:
                    rlb[i], rub[i] = b, b + rg
                else:
                    rlb[i], rub[i] = b + rg, b
        return (np.array(self.c, dtype=float), A, rlb, rub, np.array(self.lb, dtype=float),
                np.array(self.ub, dtype=float), np.array(self.integer, dtype=int))

    def objective(self, x):
        """Objective of a full column vector x, in the file's sense, constant included."""
        return float(np.dot(self.c, x)) + self.obj_const


def _num(tok, where):
    try:
        v = float(tok)
    except ValueError:
        raise MpsError("%s: not a number: %r" % (where, tok))
    if math.isnan(v):
        raise MpsError("%s: NaN" % where)
    return v


def read(path):
    m = Mps()
    section = None
    in_int = False
    want_sense = False
    with open(path) as fp:
        for lineno, raw in enumerate(fp, 1):
            line = raw.rstrip("\n")
            if not line.strip() or line.startswith("*"):
                continue
            where = "%s:%d" % (path, lineno)
            tok = line.split()
            if not line[0].isspace():
                head = tok[0].upper()
                section = head
                if head == "NAME":
                    m.name = tok[1] if len(tok) > 1 else ""
                elif head == "OBJSENSE":
                    if len(tok) > 1:
                        m.sense = -1 if tok[1].upper().startswith("MAX") else 1
                    else:
                        want_sense = True
                elif head == "ENDATA":
                    break
                elif head not in ("ROWS", "COLUMNS", "RHS", "RANGES", "BOUNDS", "OBJSENSE"):
                    raise MpsError("%s: unknown section %s" % (where, head))
                continue
            if section == "OBJSENSE" and want_sense:
                m.sense = -1 if tok[0].upper().startswith("MAX") else 1
                want_sense = False
            elif section == "ROWS":
                t, name = tok[0].upper(), tok[1]
                if t == "N":
                    if m.obj_row is None:
                        m.obj_row = name
                    continue
                if t not in ("L", "G", "E"):
                    raise MpsError("%s: bad row type %s" % (where, t))
                if name in m.row_type:
                    raise MpsError("%s: row %s twice" % (where, name))
                m.row_type[name] = t
                m.rows.append(name)
            elif section == "COLUMNS":
                if len(tok) >= 3 and tok[1].strip("'\"").upper() == "MARKER":
                    mark = tok[2].strip("'\"").upper()
                    in_int = mark == "INTORG"
                    continue
                col = tok[0]
                j = m.col_index.get(col)
                if j is None:
                    j = len(m.cols)
                    m.col_index[col] = j
                    m.cols.append(col)
                    m.c.append(0.0)
                    m.lb.append(0.0)
                    m.ub.append(math.inf)
                    m.integer.append(1 if in_int else 0)
                    m.bounded.append(False)
                if not hasattr(m, "_row_pos"):
                    m._row_pos = {r: i for i, r in enumerate(m.rows)}
                pairs = tok[1:]
                if len(pairs) % 2:
                    raise MpsError("%s: odd COLUMNS entry" % where)
                for a in range(0, len(pairs), 2):
                    row, v = pairs[a], _num(pairs[a + 1], where)
                    if row == m.obj_row:
                        m.c[j] += v
                    elif row in m._row_pos:
                        m.entries.append((m._row_pos[row], j, v))
                    elif row not in m.row_type:
                        # A second N row: free rows after the objective are ignored.
                        continue
            elif section in ("RHS", "RANGES"):
                pairs = tok[1:] if len(tok) % 2 else tok
                for a in range(0, len(pairs), 2):
                    row, v = pairs[a], _num(pairs[a + 1], where)
                    if section == "RHS":
                        if row == m.obj_row:
                            m.obj_const = -v
                        elif row in m.row_type:
                            m.rhs[row] = v
                    elif row in m.row_type:
                        m.ranges[row] = v
            elif section == "BOUNDS":
                t = tok[0].upper()
                if t in ("FR", "MI", "PL", "BV"):
                    if len(tok) == 2:
                        col, v = tok[1], None
                    else:
                        col, v = tok[2], None
                else:
                    if len(tok) == 3:
                        col, v = tok[1], _num(tok[2], where)
                    else:
                        col, v = tok[2], _num(tok[3], where)
                j = m.col_index.get(col)
                if j is None:
                    raise MpsError("%s: bound on unknown column %s" % (where, col))
                m.bounded[j] = True
                if t == "UP":
                    m.ub[j] = v
                    if v < 0 and m.lb[j] == 0:
                        m.lb[j] = -math.inf
                elif t == "LO":
                    m.lb[j] = v
                elif t == "FX":
                    m.lb[j] = m.ub[j] = v
                elif t == "FR":
                    m.lb[j], m.ub[j] = -math.inf, math.inf
                elif t == "MI":
                    m.lb[j] = -math.inf
                elif t == "PL":
                    m.ub[j] = math.inf
                elif t == "BV":
                    m.lb[j], m.ub[j] = 0.0, 1.0
                    m.integer[j] = 1
                elif t == "LI":
                    m.lb[j] = v
                    m.integer[j] = 1
                elif t == "UI":
                    m.ub[j] = v
                    m.integer[j] = 1
                else:
                    raise MpsError("%s: bad bound type %s" % (where, t))
            else:
                raise MpsError("%s: data outside a section" % where)
    if m.obj_row is None:
        raise MpsError("%s: no objective row" % path)
    m.unbounded_integers = [m.cols[j] for j in range(len(m.cols))
                            if m.integer[j] and not m.bounded[j]]
    if hasattr(m, "_row_pos"):
        del m._row_pos
    return m
