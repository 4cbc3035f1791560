#!/usr/bin/env python3
"""Time xsheat's solve and mesh stages against external solvers and Triangle, in one run.

Usage (from the repository root):
    python3 -m venv .venv && .venv/bin/pip install scipy pyamg triangle
    .venv/bin/pip install scikit-sparse     # optional (CHOLMOD); needs libsuitesparse-dev
    .venv/bin/python bench/compare_solvers.py [MODEL.toml] [--repeats N] [--max-triangles N]

MODEL defaults to bench/slab-1m.toml (an invented section, ~1M triangles). Steps: build xsheat
and the examples solve_mtx and export_poly (cargo, release); `xsheat solve MODEL
--export-matrix` writes the reduced system K.mtx / f.mtx; on that one matrix the script times
xsheat's sparse Cholesky (examples/solve_mtx.rs), scipy.sparse.linalg.spsolve, pyamg (smoothed
aggregation + CG to a relative residual of 1e-10) and CHOLMOD (scikit-sparse) if installed,
medians of N repeats, and prints each time and its ratio to ours. Then it times the mesh stage
(`mesh_s` of summary.json's `run` timings, N solves) against triangle.triangulate on the same
segment set (examples/export_poly.rs) with the same angle and area limits ("pq<angle>a<area>").
A package that is missing is skipped with the pip command that installs it.
"""
import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def run(cmd, **kw):
    return subprocess.run(cmd, check=True, capture_output=True, text=True, cwd=ROOT, **kw)


def timed(fn, repeats):
    times, out = [], None
    for _ in range(repeats):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times), out


def missing(name, pip):
    print(f"  {name}: not installed, skipped (pip install {pip})")


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("model", nargs="?", default=os.path.join(ROOT, "bench", "slab-1m.toml"))
    ap.add_argument("--repeats", type=int, default=3)
    ap.add_argument("--max-triangles", type=int, default=3_000_000)
    a = ap.parse_args()
    try:
        import numpy as np
        import scipy.io
        import scipy.sparse.linalg
    except ImportError:
        sys.exit("needs numpy and scipy: pip install scipy")

    run(["cargo", "build", "--release", "--bin", "xsheat", "--example", "solve_mtx", "--example", "export_poly"])
    exe = os.path.join(ROOT, "target", "release")
    work = tempfile.mkdtemp(prefix="xsheat-compare-")
    out, mtx, poly = (os.path.join(work, n) for n in ("out", "mtx", "section.poly"))

    mesh_s, tri_ours = [], 0
    for i in range(a.repeats):
        args = [os.path.join(exe, "xsheat"), "--quiet", "solve", a.model, "--out", out,
                "--max-triangles", str(a.max_triangles), "--no-nodes-csv"]
        if i == 0:
            args += ["--export-matrix", mtx]
        t = time.perf_counter()
        run(args)
        wall = time.perf_counter() - t
        s = json.load(open(os.path.join(out, "summary.json")))
        timings = s["run"].get("timings_s", s["run"].get("timings", {}))
        mesh_s.append(timings["mesh_s"])
        tri_ours = s["triangles"]
        print(f"xsheat solve run {i + 1}: {tri_ours} triangles, wall {wall:.2f} s, "
              f"timings {json.dumps(timings)}")

    ours = run([os.path.join(exe, "examples", "solve_mtx"), mtx, str(a.repeats), os.path.join(work, "x.f64")]).stdout
    print(ours.strip())
    fields = ours.split("xsheat_cholesky")[1].split()
    our_s = float(fields[fields.index("total_s") + 1])
    x_ours = np.fromfile(os.path.join(work, "x.f64"), dtype="<f8")

    K = scipy.io.mmread(os.path.join(mtx, "K.mtx")).tocsc()
    f = np.asarray(scipy.io.mmread(os.path.join(mtx, "f.mtx"))).ravel()
    res = lambda x: np.linalg.norm(K @ x - f) / np.linalg.norm(f)
    rows = [("xsheat sparse Cholesky (faer)", our_s, res(x_ours), 0.0, None)]

    def add(name, seconds, x, target):
        rows.append((name, seconds, res(x), float(np.max(np.abs(x - x_ours))), target))

    print(f"solve: {K.shape[0]} unknowns, {K.nnz} nonzeros, median of {a.repeats}")
    t, x = timed(lambda: scipy.sparse.linalg.spsolve(K, f), a.repeats)
    add("scipy spsolve (SuperLU)", t, x, 0.3)
    try:
        import pyamg

        def amg():
            ml = pyamg.smoothed_aggregation_solver(K.tocsr(), symmetry="symmetric")
            return ml.solve(f, tol=1e-10, accel="cg", maxiter=1000)

        t, x = timed(amg, a.repeats)
        add("pyamg SA + CG (1e-10)", t, x, 0.4)
    except ImportError:
        missing("pyamg", "pyamg")
    try:
        from sksparse.cholmod import cholesky

        t, x = timed(lambda: cholesky(K)(f), a.repeats)
        add("CHOLMOD (scikit-sparse)", t, x, 0.5)
    except ImportError:
        missing("CHOLMOD", "scikit-sparse")

    print(f"{'solver':34} {'time s':>9} {'ours/them':>10} {'target':>8} {'met':>4} {'residual':>10} {'max|x-ours| K':>14}")
    for name, t, r, d, target in rows:
        ratio = our_s / t
        met = "" if target is None else ("yes" if ratio <= target else "no")
        tgt = "" if target is None else f"<= {target}"
        print(f"{name:34} {t:9.3f} {ratio:10.3f} {tgt:>8} {met:>4} {r:10.2e} {d:14.2e}")

    limits = run([os.path.join(exe, "examples", "export_poly"), a.model, poly]).stdout.split()
    # Triangle reads a switch's number up to the first letter, so "a3.2e-4" would be area 3.2
    # followed by the switch "e": write the area in plain decimals.
    limits = [f"a{float(s[1:]):.15f}".rstrip("0") if s.startswith("a") else s for s in limits]
    our_mesh = statistics.median(mesh_s)
    print(f"mesh: Triangle switches p{''.join(limits)}; xsheat mesh stage median {our_mesh:.3f} s "
          f"for {tri_ours} triangles")
    try:
        import triangle
    except ImportError:
        missing("triangle", "triangle")
        return
    with open(poly) as fh:
        lines = [l.split() for l in fh if l.strip() and not l.startswith("#")]
    nv = int(lines[0][0])
    verts = np.array([[float(v) for v in l[1:3]] for l in lines[1:1 + nv]])
    ns = int(lines[1 + nv][0])
    segs = np.array([[int(v) - 1 for v in l[1:3]] for l in lines[2 + nv:2 + nv + ns]])
    nh = int(lines[2 + nv + ns][0])
    holes = [[float(v) for v in l[1:3]] for l in lines[3 + nv + ns:3 + nv + ns + nh]]
    pslg = {"vertices": verts, "segments": segs}
    if holes:
        pslg["holes"] = np.array(holes)
    t, tri = timed(lambda: triangle.triangulate(pslg, "p" + "".join(limits).replace(" ", "")), a.repeats)
    n = len(tri["triangles"])
    print(f"{'mesher':34} {'time s':>9} {'triangles':>10} {'ours/them':>10} {'target':>8} {'met':>4}")
    print(f"{'xsheat mesh stage':34} {our_mesh:9.3f} {tri_ours:10d}")
    ratio = our_mesh / t
    print(f"{'Triangle (PyPI triangle)':34} {t:9.3f} {n:10d} {ratio:10.3f} {'<= 1':>8} {'yes' if ratio <= 1 else 'no':>4}")
    print(f"(files in {work})")


if __name__ == "__main__":
    main()
