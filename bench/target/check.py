#!/usr/bin/env python3
"""Checks and measures the Cortex-M images of one target (CTest label `target`) and prints the README's table.

For every image listed in images.txt (written by bench/target/CMakeLists.txt):
- the kernel's object must not reference malloc, free, calloc, realloc, operator new/delete or __cxa_* (nm -u);
- it runs under QEMU (MPS2 board, semihosting, -icount shift=0) and must exit 0 with status 0;
- its 27 results (mean and covariance triangle after 100 steps) must match the host's run of the same code
  (host_reference) to |a - b| <= tol * (1 + |b|): tol 2e-4 for float, 1e-9 for double (the target contracts
  multiply-adds and its libm differs from the host's; the differences seen are reported);
- flash is text + data of the image minus that of the empty-kernel image at the same optimization level; kernel code
  is the code reachable from the step's entry point (keel's kernels and the Eigen, libm and libgcc code the step
  pulls in) that the empty image does not also have; RAM is
  data + bss likewise; the largest frame is the largest -fstack-usage entry of the kernel's object; the stack
  is the depth the kernel's calls used, measured by painting; the instruction count per step is the harness's
  SysTick reading under -icount shift=0 (40 instructions per tick), the empty loop subtracted.
"""
import argparse
import pathlib
import re
import subprocess
import sys

FORBIDDEN = re.compile(r"\b(malloc|free|calloc|realloc|operator new|operator delete|__cxa_\w+)\b")
FORMS = ["joseph", "sqrt", "ud", "ekf", "ukf", "mekf", "ukf_manifold"]
LABEL = {"joseph": "linear Joseph (predict + correct)", "sqrt": "square root (QR array)",
         "ud": "UD (Thornton + Bierman)", "ekf": "EKF (analytic Jacobians)", "ukf": "UKF (scaled, 13 points)",
         "mekf": "attitude error-state EKF (SO(3) + bias)", "ukf_manifold": "attitude UKF on SO(3) (13 points)"}


def run(cmd, timeout=120):
    return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout, check=False)


def sizes(tool, elf):
    out = run([tool, "-A", elf]).stdout
    sec = {}
    for line in out.splitlines():
        parts = line.split()
        if len(parts) >= 2 and parts[0].startswith(".") and parts[1].isdigit():
            sec[parts[0]] = int(parts[1])
    text = sum(v for k, v in sec.items() if k in (".text", ".ARM.exidx", ".rodata"))
    return text + sec.get(".data", 0), sec.get(".data", 0) + sec.get(".bss", 0)


BRANCH = re.compile(r"\s(?:bl|blx|b|b\.w|b\.n|beq\.w|bne\.w|cbz|cbnz)\s.*<([^>+]+)(?:\+0x[0-9a-f]+)?>")


def functions(tool, elf):
    """{name: (size, {names it branches to})} of the functions in an image, from objdump's disassembly and nm's
    sizes (mangled names)."""
    size = {}
    for line in run([tool + "nm", "-S", elf]).stdout.splitlines():
        parts = line.split()
        if len(parts) == 4 and parts[2] in "tTwW":
            size[parts[3]] = int(parts[1], 16)
    calls, cur = {}, None
    for line in run([tool + "objdump", "-d", "--no-show-raw-insn", elf]).stdout.splitlines():
        m = re.match(r"^[0-9a-f]+ <([^>]+)>:$", line)
        if m:
            cur = m.group(1)
            calls.setdefault(cur, set())
            continue
        m = BRANCH.search(line)
        if cur and m and m.group(1) != cur:
            calls[cur].add(m.group(1))
    return {name: (size.get(name, 0), calls.get(name, set())) for name in set(size) | set(calls)}


def step_code(tool, elf, empty_elf):
    """Bytes of code the step pulls in: every function reachable by calls and branches from keel_target_step,
    except those the empty-kernel image also has (the harness's own C library code, e.g. memcpy). The scenario's
    set-up (the kernel object's constructor, init, results) and the Eigen copies only it calls are not counted."""
    fns = functions(tool, elf)
    shared = {n for n in functions(tool, empty_elf) if not n.startswith("keel_target_")}
    seen, todo = set(), ["keel_target_step"]
    while todo:
        name = todo.pop()
        if name in seen or name not in fns:
            continue
        seen.add(name)
        todo.extend(fns[name][1])
    return sum(fns[n][0] for n in seen - shared)


def largest_frame(obj):
    su = pathlib.Path(re.sub(r"\.(o|obj)$", ".su", obj))
    frames = [int(line.split("\t")[1]) for line in su.read_text().splitlines() if "\t" in line]
    return max(frames) if frames else 0


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--target", required=True, help="m4f or m7")
    ap.add_argument("--machine", required=True)
    ap.add_argument("--scalar", required=True, choices=["float", "double"])
    ap.add_argument("--images", required=True)
    ap.add_argument("--reference", required=True, help="the host_reference executable")
    ap.add_argument("--qemu", default="qemu-system-arm")
    ap.add_argument("--prefix", default="arm-none-eabi-")
    ap.add_argument("--report", help="write the Markdown rows here")
    a = ap.parse_args()

    ref = {}
    out = run([a.reference])
    if out.returncode != 0:
        sys.exit("host reference failed: " + out.stderr)
    for line in out.stdout.splitlines():
        form, scalar, i, v = line.split()
        ref[(form, scalar, int(i))] = float(v)
    tol = 2e-4 if a.scalar == "float" else 1e-9

    images = [line.split() for line in pathlib.Path(a.images).read_text().splitlines() if line.strip()]
    empty = {opt: sizes(a.prefix + "size", elf) for form, opt, elf, _ in images if form == "none"}
    empty_elf = {opt: elf for form, opt, elf, _ in images if form == "none"}
    failures, rows = [], []
    for form, opt, elf, obj in images:
        if form == "none":
            continue
        name = f"{a.target} {form} -{opt}"
        bad = [l for l in run([a.prefix + "nm", "-u", "-C", obj]).stdout.splitlines() if FORBIDDEN.search(l)]
        if bad:
            failures.append(f"{name}: the kernel references {', '.join(s.split()[-1] for s in bad)}")
        res = run([a.qemu, "-M", a.machine, "-nographic", "-monitor", "none", "-serial", "none", "-semihosting-config",
                   "enable=on,target=native", "-icount", "shift=0", "-kernel", elf], timeout=120)
        vals = {}
        fields = {}
        for line in res.stdout.splitlines():
            p = line.split()
            if len(p) >= 3 and p[0] == "keel-target":
                if p[1] == "result":
                    vals[int(p[2])] = float(p[3])
                else:
                    fields[p[1]] = p[2]
        if res.returncode != 0 or fields.get("status") != "0" or len(vals) != 27:
            failures.append(f"{name}: exit {res.returncode}, status {fields.get('status')}, {len(vals)} results\n"
                            f"{res.stdout[-2000:]}{res.stderr[-2000:]}")
            continue
        worst = max(abs(v - ref[(form, a.scalar, i)]) / (1 + abs(ref[(form, a.scalar, i)])) for i, v in vals.items())
        if not worst <= tol:
            failures.append(f"{name}: results differ from the host's by {worst:.3g} (tolerance {tol:g})")
        flash, ram = sizes(a.prefix + "size", elf)
        flash -= empty[opt][0]
        rows.append((form, opt, flash, step_code(a.prefix, elf, empty_elf[opt]), ram - empty[opt][1],
                     largest_frame(obj), int(fields["stack"]), int(fields["per_step"]), worst))

    lines = ["| kernel (6 states, 3 measurements) | target | opt | flash B | kernel code B | RAM B | largest frame B "
             "| stack B | instructions/step | max rel. diff. to host |", "|---|---|---|---|---|---|---|---|---|---|"]
    for form, opt, flash, code, ram, frame, stack, steps, worst in sorted(rows, key=lambda r: (FORMS.index(r[0]), r[1])):
        lines.append(f"| {LABEL[form]} | {a.target} {a.scalar} | -{opt} | {flash} | {code} | {ram} | {frame} | {stack} "
                     f"| {steps} | {worst:.1e} |")
    print("\n".join(lines))
    if a.report:
        pathlib.Path(a.report).write_text("\n".join(lines) + "\n")
    for f in failures:
        print("FAIL " + f, file=sys.stderr)
    sys.exit(1 if failures else 0)


if __name__ == "__main__":
    main()
