#!/usr/bin/env bash
# Side-by-side benchmark of Lacuna against what a user would otherwise run.
#
#   bash tests/peers/compare.sh
#
# Prints a Markdown table of ratios (the one in README.md, "Performance"),
# each measured in this one run, with the target beside it:
#
#   check        `lacuna check` on a 1,000,000-line reaction file against
#                `wc -l` on the same file (the physical floor: reading the
#                lines) and against tests/peers/check.py, a plain-Python
#                checker of the same three balances. Whole process against
#                whole process. The Python checker runs on the first 100,000
#                reactions and its time is scaled to the full file.
#   balance      the balancer on the reactions of tests/peers/balance.kvr:
#                an in-process loop (tests/bench/balance.rs) against an
#                in-process Python loop (tests/peers/balance_sympy.py, sympy
#                `Matrix.nullspace()`), both per reaction, parsing excluded.
#   equilibrium  the 10-species model tests/peers/model.kvr over 10,000 pO2
#                points: an in-process sweep (tests/bench/equilibrium.rs)
#                against a scipy `brentq` loop (tests/peers/equilibrium_scipy.py),
#                both per point, same grid, same 1e-12 residual.
#
# Before timing, the peers are checked against Lacuna: the same reactions
# fail, the same coefficients, the same concentrations to 1e-9.
#
# Needs: cargo, python3 (with venv). Installs sympy and scipy from PyPI
# into a virtualenv under the cargo target folder on first use. Uses
# `hyperfine` for whole-process timings when it is installed (Debian package
# `hyperfine`), else a small timing loop in Python. Every figure is a median.
# Sizes can be changed with LACUNA_PEER_LINES (default 1000000) and
# LACUNA_PEER_PY_LINES (default 100000). Takes a few minutes on two cores,
# more on the first run (release build, pip install).
set -euo pipefail
cd "$(dirname "$0")/../.."

TARGET=${CARGO_TARGET_DIR:-target}
VENV=$TARGET/peers-venv
WORK=$TARGET/peers-work
LINES=${LACUNA_PEER_LINES:-1000000}
PY_LINES=${LACUNA_PEER_PY_LINES:-100000}
RUNS=${LACUNA_PEER_RUNS:-5}
mkdir -p "$WORK"

say() { printf '== %s\n' "$*" >&2; }

say "python environment ($VENV)"
if ! "$VENV/bin/python" -c 'import sympy, scipy' 2>/dev/null; then
    python3 -m venv "$VENV"
    "$VENV/bin/pip" install --quiet sympy scipy
fi
PY=$VENV/bin/python

say "building (bench profile: release with line tables)"
cargo bench --no-run --quiet --bench balance --bench equilibrium
cargo build --quiet --profile bench --bin lacuna
LACUNA=$TARGET/release/lacuna

say "generating $LINES reactions"
"$PY" - "$WORK/million.kvr" "$LINES" "$WORK/sample.kvr" "$PY_LINES" <<'EOF'
import sys
# The reactions of tests/bench/check.rs: mostly balanced, one in eight with a slip.
REACTIONS = [
    "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
    "O_O -> V_O.. + 2e' + 1/2 O2(g)",
    "nil -> V_Zr'''' + 2V_O..",
    "CaO -> Ca_Zr'' + O_O + V_O..",
    "nil -> e' + h.",
    "Zr_Zr -> Zr_i.... + V_Zr''''",
    "O_O -> O_i'' + V_O..",
    "Y2O3 -> 2Y_Zr' + 3O_O + V_O.",
]
for path, count in ((sys.argv[1], int(sys.argv[2])), (sys.argv[3], int(sys.argv[4]))):
    with open(path, "w", encoding="utf-8") as out:
        out.write("host ZrO2\n")
        for i in range(count):
            out.write(f"r{i}: {REACTIONS[i % len(REACTIONS)]}\n")
EOF

# measure RUNS CMD...: median wall-clock seconds of CMD (output discarded).
measure() {
    local runs=$1
    shift
    if command -v hyperfine >/dev/null 2>&1; then
        hyperfine -N -i --warmup 1 --runs "$runs" --export-json "$WORK/time.json" -- "$*" >/dev/null 2>&1
        "$PY" -c 'import json, sys; print(json.load(open(sys.argv[1]))["results"][0]["median"])' "$WORK/time.json"
    else
        "$PY" - "$runs" "$@" <<'EOF'
import statistics, subprocess, sys, time
runs, command = int(sys.argv[1]), sys.argv[2:]
quiet = dict(stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
subprocess.run(command, **quiet)
times = []
for _ in range(runs):
    start = time.perf_counter()
    subprocess.run(command, **quiet)
    times.append(time.perf_counter() - start)
print(statistics.median(times))
EOF
    fi
}

say "checking that the peers agree with lacuna"
# The generated file repeats eight reactions: the repeated-reaction rule would
# flag nearly every line, so it is switched off (it still runs).
CHECK=(check --quiet --allow repeated-reaction)
lacuna_failed=$("$LACUNA" "${CHECK[@]}" "$WORK/sample.kvr" | sed -n 's/.*pass, \([0-9]*\) fail.*/\1/p' || true)
python_failed=$("$PY" tests/peers/check.py "$WORK/sample.kvr" | sed -n 's/.*, \([0-9]*\) failed/\1/p')
if [ "$lacuna_failed" != "$python_failed" ]; then
    echo "check.py and lacuna disagree: $python_failed vs $lacuna_failed failed reactions" >&2
    exit 1
fi
echo "check: check.py and lacuna agree: $lacuna_failed of $PY_LINES sample reactions fail" >&2
sympy_out=$("$PY" tests/peers/balance_sympy.py tests/peers/balance.kvr --lacuna "$LACUNA")
scipy_out=$("$PY" tests/peers/equilibrium_scipy.py tests/peers/model.kvr --lacuna "$LACUNA")
printf '%s\n' "$sympy_out" "$scipy_out" >&2

say "timing check (whole processes, $RUNS runs each)"
t_wc=$(measure "$RUNS" wc -l "$WORK/million.kvr")
t_check=$(measure "$RUNS" "$LACUNA" "${CHECK[@]}" "$WORK/million.kvr")
t_python=$(measure 3 "$PY" tests/peers/check.py "$WORK/sample.kvr")

say "timing balance and equilibrium (in-process loops)"
balance_out=$(cargo bench --quiet --bench balance 2>/dev/null)
equilibrium_out=$(cargo bench --quiet --bench equilibrium 2>/dev/null)
printf '%s\n' "$balance_out" "$equilibrium_out" >&2
rust_balance=$(sed -n 's/^bench: balance.ns_per_reaction = //p' <<<"$balance_out")
rust_equilibrium=$(sed -n 's/^bench: equilibrium.ns_per_point = //p' <<<"$equilibrium_out")
sympy_balance=$(sed -n 's/^peer: balance.ns_per_reaction = //p' <<<"$sympy_out")
scipy_equilibrium=$(sed -n 's/^peer: equilibrium.ns_per_point = //p' <<<"$scipy_out")

cpu=$(sed -n 's/^model name[[:space:]]*: //p' /proc/cpuinfo 2>/dev/null | head -1)
"$PY" - "$LINES" "$PY_LINES" "$t_wc" "$t_check" "$t_python" \
    "$rust_balance" "$sympy_balance" "$rust_equilibrium" "$scipy_equilibrium" \
    "$(nproc) cores, ${cpu:-unknown CPU}" <<'EOF'
import sys
lines, py_lines = int(sys.argv[1]), int(sys.argv[2])
wc, check, python = map(float, sys.argv[3:6])
balance, sympy_balance, equilibrium, scipy_equilibrium = map(float, sys.argv[6:10])
python_full = python * lines / py_lines

def t(seconds):
    if seconds >= 1:
        return f"{seconds:.2f} s"
    if seconds >= 1e-3:
        return f"{seconds * 1e3:.1f} ms"
    return f"{seconds * 1e6:.1f} µs"

rows = [
    ("check: lacuna / `wc -l`", f"whole process, {lines:,} lines",
     t(check), t(wc), check / wc, "≤ 10×", check / wc <= 10),
    ("check: Python checker / lacuna", f"whole process; Python on {py_lines:,} lines, scaled",
     t(check), t(python_full), python_full / check, "≥ 1000×", python_full / check >= 1000),
    ("balance: sympy / lacuna", "in-process, per reaction",
     t(balance * 1e-9), t(sympy_balance * 1e-9), sympy_balance / balance, "≥ 1000×",
     sympy_balance / balance >= 1000),
    ("equilibrium: scipy / lacuna", "in-process, per pO2 point",
     t(equilibrium * 1e-9), t(scipy_equilibrium * 1e-9), scipy_equilibrium / equilibrium,
     "≥ 100×", scipy_equilibrium / equilibrium >= 100),
]
print()
print(f"Measured on {sys.argv[10]}; medians of one run of tests/peers/compare.sh.")
print()
print("| comparison | how | lacuna | peer | ratio | target | met |")
print("|---|---|---:|---:|---:|---|---|")
for name, how, ours, peer, ratio, target, met in rows:
    print(f"| {name} | {how} | {ours} | {peer} | {ratio:,.1f}× | {target} | {'yes' if met else 'no'} |")
EOF
