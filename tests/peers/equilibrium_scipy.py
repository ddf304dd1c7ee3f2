#!/usr/bin/env python3
"""The equilibrium benchmark model solved the way a scripting user would:
one scipy `brentq` call per pO2 point. Written for the side-by-side
benchmark (tests/peers/compare.sh); it is a peer to time against, not part
of Lacuna.

The model is tests/peers/model.kvr (the file tests/bench/equilibrium.rs
solves): acceptor-doped ZrO2 with V_O••, V_O•, V_O×, e′, h•, O_i″, V_Zr⁗,
Zr_i••••, Y_Zr′ and (Y_Zr′ V_O••)•, concentrations per formula unit, K from
the file, [Y_Zr′] + [(Y_Zr′ V_O••)•] = 0.08 (one Zr site per formula unit).
Given n = [e′], every other concentration follows from the mass-action
laws, so electroneutrality is one equation in ln n, monotone decreasing:
brentq brackets it between n = 1e-40 and n = 1.

Tolerance: as Lacuna's, a point counts as solved when the relative
electroneutrality residual |P − N| / (P + N) is at most 1e-12; brentq runs
to xtol = 1e-13 in ln n, which reaches that, and every point is checked.

Usage:
  equilibrium_scipy.py MODEL [--points N] [--rounds R] [--lacuna BIN]
With --lacuna, the decade points of `BIN brouwer MODEL --format csv` are
compared with this solver's, species by species, to 1e-9 relative.
"""

import argparse
import csv
import io
import math
import re
import statistics
import subprocess
import sys
import time

from scipy.optimize import brentq

TOLERANCE = 1e-12
LN_N_BRACKET = (math.log(1e-40), 0.0)
# The constants the solver uses; read_constants() checks them against MODEL.
K = {
    "red": 1e-22,
    "ion1": 1e-2,
    "ion0": 1e-3,
    "i": 1e-18,
    "af": 1e-14,
    "s": 1e-30,
    "f": 1e-32,
    "assoc": 10.0,
}
Y_TOTAL = 0.08
TEMPERATURE = 1273.0
# The columns of `lacuna brouwer --format csv` for the ten species.
COLUMNS = [
    "[V_O..]", "n", "[V_O.]", "[V_Ox]", "p", "[O_i'']", "[V_Zr'''']",
    "[Zr_i....]", "[Y_Zr']", "[(Y_Zr' V_O..).]",
]


def read_constants(path):
    """Fails loudly when MODEL no longer holds the numbers written above."""
    found, fixed, temperature = {}, None, None
    with open(path, encoding="utf-8") as handle:
        for line in handle:
            line = line.split("#", 1)[0].strip()
            m = re.fullmatch(r"K\s+(\S+)\s*=\s*(\S+)", line)
            if m:
                found[m.group(1)] = float(m.group(2))
            m = re.fullmatch(r"fix\s+Y_Zr'\s*=\s*(\S+)\s+site fraction", line)
            if m:
                fixed = float(m.group(1))
            m = re.fullmatch(r"temperature\s+(\S+)\s+K", line)
            if m:
                temperature = float(m.group(1))
    if found != K or fixed != Y_TOTAL or temperature != TEMPERATURE:
        sys.exit(f"{path} does not hold the model this script solves: {found}, fix {fixed}, T {temperature}")


def species(n, root_po2):
    """The ten concentrations, in COLUMNS order, given n and sqrt(pO2)."""
    v2 = K["red"] / (n * n * root_po2)
    v1 = v2 * n / K["ion1"]
    v0 = v1 * n / K["ion0"]
    p = K["i"] / n
    oi = K["af"] / v2
    vzr = K["s"] / (v2 * v2)
    zri = K["f"] / vzr
    y = Y_TOTAL / (1.0 + K["assoc"] * v2)
    pair = K["assoc"] * y * v2
    return [v2, n, v1, v0, p, oi, vzr, zri, y, pair]


def charges(c):
    """Positive and negative charge sums of the concentrations c."""
    v2, n, v1, _v0, p, oi, vzr, zri, y, pair = c
    return 2.0 * v2 + v1 + p + 4.0 * zri + pair, n + 2.0 * oi + 4.0 * vzr + y


def neutrality(ln_n, root_po2):
    positive, negative = charges(species(math.exp(ln_n), root_po2))
    return math.log(positive) - math.log(negative)


def solve(po2):
    """Concentrations at one pO2 (bar) and the relative charge residual."""
    root = math.sqrt(po2)
    ln_n = brentq(neutrality, *LN_N_BRACKET, args=(root,), xtol=1e-13)
    c = species(math.exp(ln_n), root)
    positive, negative = charges(c)
    return c, abs(positive - negative) / (positive + negative)


def log_grid(low, high, count):
    """The grid of lacuna::equilibrium::log_grid."""
    a, b = math.log10(low), math.log10(high)
    return [10.0 ** (a + (b - a) * i / (count - 1)) for i in range(count)]


def compare_with_lacuna(binary, model):
    csv_text = subprocess.run(
        [binary, "brouwer", model, "--format", "csv", "--per-decade", "1"],
        check=True, capture_output=True, text=True,
    ).stdout
    rows = list(csv.DictReader(io.StringIO(csv_text)))
    worst = 0.0
    for row in rows:
        ours, _ = solve(float(row["po2_bar"]))
        for column, value in zip(COLUMNS, ours):
            theirs = float(row[column])
            worst = max(worst, abs(value - theirs) / abs(theirs))
    verdict = "agree" if worst <= 1e-9 else "DISAGREE"
    print(f"check: scipy and lacuna {verdict} at {len(rows)} pO2 points (1e-30 to 1e5 bar), "
          f"10 species, largest relative difference {worst:.1e} (limit 1e-9)")
    return worst <= 1e-9


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("model")
    parser.add_argument("--points", type=int, default=10_000)
    parser.add_argument("--rounds", type=int, default=3)
    parser.add_argument("--lacuna")
    args = parser.parse_args()
    read_constants(args.model)
    agreed = compare_with_lacuna(args.lacuna, args.model) if args.lacuna else True

    grid = log_grid(1e-30, 1e5, args.points)
    times, converged = [], 0
    for _ in range(args.rounds):
        start = time.perf_counter()
        results = [solve(po2) for po2 in grid]
        times.append(time.perf_counter() - start)
        converged = sum(1 for _, residual in results if residual <= TOLERANCE)
    median = statistics.median(times)
    print(f"scipy brentq: {args.points} pO2 points in {median * 1e3:.0f} ms "
          f"(median of {args.rounds}), {converged}/{args.points} within {TOLERANCE:g}")
    print(f"peer: equilibrium.ns_per_point = {median * 1e9 / args.points:.1f}")
    if converged != args.points or not agreed:
        sys.exit(1)


if __name__ == "__main__":
    main()
