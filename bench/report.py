#!/usr/bin/env python3
"""Runs keel_bench with repetitions and prints the Markdown tables of the README's performance section: median ns
per kf_step, keel's Joseph step against each baseline (ratios from one run), effective GFLOP/s from the naive flop
count (bench/problem.hpp) and its share of the GEMM peak measured in the same run; predict and correct alone; the
factored forms against the Joseph step; the nonlinear steps; the attitude steps on the manifold state. Each ratio the performance issue sets a target for is
marked ✓ (met) or ✗ (not met).
Usage: bench/report.py [path/to/keel_bench] [repetitions]"""
import json
import subprocess
import sys
import tempfile

exe = sys.argv[1] if len(sys.argv) > 1 else "build/bench-all/bench/keel_bench"
reps = sys.argv[2] if len(sys.argv) > 2 else "5"
with tempfile.NamedTemporaryFile(suffix=".json") as out:
    subprocess.run([exe, "--benchmark_repetitions=" + reps, "--benchmark_report_aggregates_only=true",
                    "--benchmark_out=" + out.name, "--benchmark_out_format=json"],
                   check=True, stdout=subprocess.DEVNULL)
    data = json.load(open(out.name))
med = {b["run_name"]: b for b in data["benchmarks"] if b.get("aggregate_name") == "median"}
ctx = data["context"]
print(f"{ctx.get('host_name', '')}: {ctx['num_cpus']} CPUs at {ctx['mhz_per_cpu']} MHz; medians of {reps}")
print()


def mark(ok):
    return "✓" if ok else "✗"


sizes = sorted({n.split("/")[3] for n in med if n.startswith("kf_step/")}, key=lambda s: int(s.split("x")[0]))
t = lambda v, sc, sz: med[f"{v}/{sc}/{sz}"]["real_time"]
print("| size | scalar | joseph ns | standard ns | sequential ns | loops_baseline ns | dynamic_baseline ns "
      "| loops / joseph (≥ 2 from 4x2) | dynamic / joseph (≥ 5 to 6x3) | joseph effective GFLOP/s (% of GEMM peak) |")
print("|---|---|---|---|---|---|---|---|---|---|")
for sc in ("float", "double"):
    peak = med[f"peak/gemm/{sc}/256x256"]["flops"]
    for sz in sizes:
        n = int(sz.split("x")[0])
        j = t("kf_step/joseph", sc, sz)
        lo, dy = t("kf_step/loops_baseline", sc, sz) / j, t("kf_step/dynamic_baseline", sc, sz) / j
        lo_m = f" {mark(lo >= 2)}" if n >= 4 else ""
        dy_m = f" {mark(dy >= 5)}" if n <= 6 else ""
        eff = med[f"kf_step/joseph/{sc}/{sz}"]["flops"]
        pk = f" {mark(eff / peak >= 0.5)}" if sz == "24x12" and sc == "double" else ""
        print(f"| {sz} | {sc} | {j:.0f} | {t('kf_step/standard', sc, sz):.0f} | {t('kf_step/sequential', sc, sz):.0f} "
              f"| {t('kf_step/loops_baseline', sc, sz):.0f} | {t('kf_step/dynamic_baseline', sc, sz):.0f} "
              f"| {lo:.2f}×{lo_m} | {dy:.2f}×{dy_m} | {eff / 1e9:.1f} ({100 * eff / peak:.0f}%){pk} |")
    print(f"| GEMM 256×256 | {sc} | peak {peak / 1e9:.1f} GFLOP/s | | | | | | | |")
print()
print("| size | scalar | predict ns | correct ns | predict + correct / kf_step |")
print("|---|---|---|---|---|")
for sc in ("float", "double"):
    for sz in sizes:
        p, c, j = t("predict/joseph", sc, sz), t("correct/joseph", sc, sz), t("kf_step/joseph", sc, sz)
        print(f"| {sz} | {sc} | {p:.0f} | {c:.0f} | {(p + c) / j:.2f} |")
print()
print("| size | scalar | joseph ns | sqrt ns | sqrt_sequential ns | ud ns | sqrt / joseph (≤ 2 at 6x3, 12x6) "
      "| sqrt_sequential / joseph | ud / joseph (≤ 2 at 6x3, 12x6) |")
print("|---|---|---|---|---|---|---|---|---|")
for sc in ("float", "double"):
    for sz in sizes:
        j = t("kf_step/joseph", sc, sz)
        q, qs, u = t("kf_step/sqrt", sc, sz) / j, t("kf_step/sqrt_sequential", sc, sz) / j, t("kf_step/ud", sc, sz) / j
        tgt = sz in ("6x3", "12x6")
        print(f"| {sz} | {sc} | {j:.0f} | {t('kf_step/sqrt', sc, sz):.0f} | {t('kf_step/sqrt_sequential', sc, sz):.0f} "
              f"| {t('kf_step/ud', sc, sz):.0f} | {q:.2f}×{' ' + mark(q <= 2) if tgt else ''} | {qs:.2f}× "
              f"| {u:.2f}×{' ' + mark(u <= 2) if tgt else ''} |")
print()
print("| step (5x3 boat model) | float ns | double ns |")
print("|---|---|---|")
for fam in ("ekf_step/analytic", "ekf_step/autodiff", "ekf_step/numeric", "ukf_step/scaled", "ukf_step/cubature",
            "ukf_step/sqrt"):
    print(f"| {fam} | {med[f'{fam}/float/5x3']['real_time']:.0f} | {med[f'{fam}/double/5x3']['real_time']:.0f} |")
print()
print("| step | float ns | double ns |")
print("|---|---|---|")
for name in ("ekf_step/analytic/5x3", "mekf_step/analytic/6x3", "mekf_step/analytic/6x6", "mekf_step/autodiff/6x3",
             "mekf_step/autodiff/6x6", "ukf_step/scaled/5x3", "ukf_step/manifold/6x3", "ukf_step/manifold/6x6"):
    fam, size = name.rsplit("/", 1)
    print(f"| {name} | {med[f'{fam}/float/{size}']['real_time']:.0f} | {med[f'{fam}/double/{size}']['real_time']:.0f} |")
