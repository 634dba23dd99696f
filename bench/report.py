#!/usr/bin/env python3
"""Runs keel_bench with repetitions and prints the Markdown table of the README's performance section:
median ns per kf_step, keel's Joseph step against each baseline (ratios from one run), effective GFLOP/s from the
naive flop count (bench/problem.hpp) and its share of the GEMM peak measured in the same run; then the factored
forms (square root, UD) against the Joseph step.
Usage: bench/report.py [path/to/keel_bench] [repetitions]"""
import json
import subprocess
import sys
import tempfile

exe = sys.argv[1] if len(sys.argv) > 1 else "build/default/bench/keel_bench"
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
print("| size | scalar | joseph ns | standard ns | sequential ns | loops_baseline ns | dynamic_baseline ns "
      "| loops / joseph | dynamic / joseph | joseph effective GFLOP/s (% of GEMM peak) |")
print("|---|---|---|---|---|---|---|---|---|---|")
sizes = sorted({n.split("/")[3] for n in med if n.startswith("kf_step/")}, key=lambda s: int(s.split("x")[0]))
for sc in ("float", "double"):
    peak = med[f"peak/gemm/{sc}/256x256"]["flops"]
    for sz in sizes:
        g = lambda v: med[f"kf_step/{v}/{sc}/{sz}"]
        j = g("joseph")["real_time"]
        print(f"| {sz} | {sc} | {j:.0f} | {g('standard')['real_time']:.0f} | {g('sequential')['real_time']:.0f} "
              f"| {g('loops_baseline')['real_time']:.0f} | {g('dynamic_baseline')['real_time']:.0f} "
              f"| {g('loops_baseline')['real_time'] / j:.2f}× | {g('dynamic_baseline')['real_time'] / j:.2f}× "
              f"| {g('joseph')['flops'] / 1e9:.1f} ({100 * g('joseph')['flops'] / peak:.0f}%) |")
    print(f"| GEMM 256×256 | {sc} | peak {peak / 1e9:.1f} GFLOP/s | | | | | | | |")
print()
print("| size | scalar | joseph ns | sqrt ns | sqrt_sequential ns | ud ns | sqrt / joseph | sqrt_sequential / joseph "
      "| ud / joseph |")
print("|---|---|---|---|---|---|---|---|---|")
for sc in ("float", "double"):
    for sz in sizes:
        t = lambda v: med[f"kf_step/{v}/{sc}/{sz}"]["real_time"]
        j = t("joseph")
        print(f"| {sz} | {sc} | {j:.0f} | {t('sqrt'):.0f} | {t('sqrt_sequential'):.0f} | {t('ud'):.0f} "
              f"| {t('sqrt') / j:.2f}× | {t('sqrt_sequential') / j:.2f}× | {t('ud') / j:.2f}× |")
print()
print("| step (5x3 boat model) | float ns | double ns |")
print("|---|---|---|")
for fam in ("ekf_step/analytic", "ekf_step/autodiff", "ekf_step/numeric", "ukf_step/scaled", "ukf_step/cubature",
            "ukf_step/sqrt"):
    print(f"| {fam} | {med[f'{fam}/float/5x3']['real_time']:.0f} | {med[f'{fam}/double/5x3']['real_time']:.0f} |")
