"""Per-call cost of the Python package against the library's own transform time.

Runs `kugel bench --lmax L --json` (the engine timing its plan, synthesis and analysis on a
Gauss grid) and times `kugel.synthesize` / `kugel.analyze` on the same grid from Python, median
of N calls each, in rounds alternating with the benchmark so machine load affects both alike.
The Python calls take their plans from the native module's cache, so the ratio that counts is
a call's time over the engine's transform time alone. Prints one JSON line.

A second figure does not depend on machine load drifting between the benchmark process and
this one: inside this process, every public call is paired with the engine's own timing of the
same transform (`kugel._native.engine_transform_seconds`: the plan's synthesis and analysis as
`kugel bench` times them, plan from the same cache), and the medians of both are compared
(`*_overhead_in_process`).

    python python/bench/overhead.py --kugel target/release/kugel --lmax 255 --calls 20
"""

import argparse
import json
import statistics
import subprocess
import time

import numpy as np

import kugel


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--kugel", required=True, help="the kugel binary")
    parser.add_argument("--lmax", type=int, default=255)
    parser.add_argument("--calls", type=int, default=20)
    parser.add_argument("--rounds", type=int, default=3)
    parser.add_argument("--repeat", type=int, default=5, help="repeats of each benchmark run")
    args = parser.parse_args()
    L = args.lmax
    rng = np.random.default_rng(0)
    C = np.tril(rng.standard_normal((L + 1, L + 1)))
    S = np.tril(rng.standard_normal((L + 1, L + 1)))
    S[:, 0] = 0.0
    model = kugel.Model(C, S)
    grid = kugel.synthesize(model)
    values = np.ascontiguousarray(grid.values)

    # Cold calls: four small models on other grids between two timed calls push the degree-L
    # grid, layout and plan out of the native module's caches (four entries each), so each
    # cold call rebuilds them, as every call did before the caches existed.
    evictors = []
    for k in range(4):
        small = kugel.Model(np.tril(np.ones((4 + k, 4 + k))), np.zeros((4 + k, 4 + k)))
        evictors.append((small, np.ascontiguousarray(kugel.synthesize(small).values)))

    def evict():
        for small, small_values in evictors:
            kugel.synthesize(small)
            kugel.analyze(small_values, grid="gauss")

    def timed(call, into):
        t = time.perf_counter()
        call()
        into.append(time.perf_counter() - t)

    bench, py_syn, py_ana, cold_syn, cold_ana = [], [], [], [], []
    engine_syn, engine_ana, paired_syn, paired_ana = [], [], [], []
    for _ in range(args.rounds):
        out = subprocess.run([args.kugel, "bench", "--lmax", str(L), "--json", "--repeat",
                              str(args.repeat)], capture_output=True, text=True, check=True)
        bench.append(json.loads(out.stdout.strip().splitlines()[-1]))
        for _ in range(args.calls):
            timed(lambda: kugel.synthesize(model), py_syn)
            timed(lambda: kugel.analyze(values, grid="gauss"), py_ana)
            evict()
            timed(lambda: kugel.synthesize(model), cold_syn)
            evict()
            timed(lambda: kugel.analyze(values, grid="gauss"), cold_ana)
            # warm again, then the engine alone and the public calls back to back
            kugel.synthesize(model)
            kugel.analyze(values, grid="gauss")
            s_engine, a_engine = kugel._native.engine_transform_seconds(model)
            engine_syn.append(s_engine)
            engine_ana.append(a_engine)
            timed(lambda: kugel.synthesize(model), paired_syn)
            timed(lambda: kugel.analyze(values, grid="gauss"), paired_ana)
    med = statistics.median
    syn = med(b["synthesis_s"] for b in bench)
    ana = med(b["analysis_s"] for b in bench)
    plan = med(b.get("plan_s", 0.0) for b in bench)
    result = {
        "lmax": L,
        "bench_synthesis_s": syn,
        "bench_analysis_s": ana,
        "bench_plan_s": plan,
        "python_synthesize_s": med(py_syn),
        "python_analyze_s": med(py_ana),
        "python_synthesize_min_s": min(py_syn),
        "python_analyze_min_s": min(py_ana),
        "python_cold_synthesize_s": med(cold_syn),
        "python_cold_analyze_s": med(cold_ana),
        "python_cold_synthesize_min_s": min(cold_syn),
        "python_cold_analyze_min_s": min(cold_ana),
        # the goal: a Python call (with its plan from the native module's cache) costs at
        # most 5 % more than the engine's transform alone
        "synthesize_overhead_vs_transform": med(py_syn) / syn - 1.0,
        "analyze_overhead_vs_transform": med(py_ana) / ana - 1.0,
        # what a call would cost if it built its plan each time, as one command-line run does
        "engine_synthesis_in_process_s": med(engine_syn),
        "engine_analysis_in_process_s": med(engine_ana),
        "synthesize_overhead_in_process": med(paired_syn) / med(engine_syn) - 1.0,
        "analyze_overhead_in_process": med(paired_ana) / med(engine_ana) - 1.0,
        "synthesize_overhead_vs_plan_plus_transform": med(py_syn) / (plan + syn) - 1.0,
        "analyze_overhead_vs_plan_plus_transform": med(py_ana) / (plan + ana) - 1.0,
    }
    print(json.dumps(result))


if __name__ == "__main__":
    main()
