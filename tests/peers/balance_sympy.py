#!/usr/bin/env python3
"""A sympy balancer of defect reactions, written for the side-by-side
benchmark (tests/peers/compare.sh): what a scripting user would otherwise
write. It is a peer to time against, not part of Lacuna.

Each reaction of the file (`host` lines set the host of the reactions below
them) becomes a matrix with one column per term (left side negated) and one
row per element, one for charge and one per extra sublattice of the host
(site ratio: Δ_first · count_j − Δ_j · count_first = 0). The coefficients are
the nullspace of that matrix (`Matrix.nullspace()`), scaled to the smallest
positive integers. The notation read is the ASCII Kröger–Vink subset of the
benchmark file: `X_S` with marks `.` `'` `x`, `V_S`, `X_i`, `e'`, `h.`,
associates `(A B)m`, formulas with `(g)`.

Usage:
  balance_sympy.py FILE [--rounds R] [--lacuna BIN]
Times matrix construction + nullspace + integer scaling per reaction, from
reactions parsed once beforehand (as the Rust bench times `balance()` on
parsed reactions). With --lacuna, each reaction is also balanced by
`BIN balance --format json` and the two coefficient vectors must match.
"""

import argparse
import json
import math
import re
import statistics
import subprocess
import sys
import time

import sympy

ELEMENT = re.compile(r"([A-Z][a-z]?)(\d*)")
SPECIES = re.compile(r"^([A-Z][a-z]?[A-Za-z0-9]*|V|e|h)(?:_([A-Z][a-z]?|i))?([.'x*]*)$")
ASSOCIATE = re.compile(r"^\((.+)\)([.'x*]*)$")


def formula(text):
    atoms = {}
    for symbol, count in ELEMENT.findall(text):
        atoms[symbol] = atoms.get(symbol, 0) + int(count or 1)
    return atoms


def mark_charge(marks):
    return marks.count(".") + marks.count("*") - marks.count("'")


def species(text):
    """(atoms, charge, sites) of one Kröger–Vink species or associate."""
    associate = ASSOCIATE.match(text)
    if associate:
        atoms, sites = {}, {}
        for part in associate.group(1).split():
            part_atoms, _, part_sites = species(part)
            for key, n in part_atoms.items():
                atoms[key] = atoms.get(key, 0) + n
            for key, n in part_sites.items():
                sites[key] = sites.get(key, 0) + n
        return atoms, mark_charge(associate.group(2)), sites
    occupant, site, marks = SPECIES.match(text).groups()
    atoms = {} if occupant in ("V", "e", "h") else formula(occupant)
    sites = {site: 1} if site and site != "i" else {}
    return atoms, mark_charge(marks), sites


def term(text):
    """One side's entry: a Kröger–Vink species or a compound like O2(g)."""
    if "_" in text or text in ("e'", "h."):
        return species(text)
    return formula(re.sub(r"\(\w+\)$", "", text)), 0, {}


def parse(reaction, host):
    left, right = re.split(r"\s*->\s*", reaction)
    terms = [(-1, t.strip()) for t in left.split(" + ")]
    terms += [(1, t.strip()) for t in right.split(" + ")]
    return [(sign, text, term(text)) for sign, text in terms], formula(host)


def balance(parsed):
    """Smallest positive integer coefficients, or None unless unique."""
    terms, host = parsed
    elements = sorted({e for _, _, (atoms, _, _) in terms for e in atoms})
    sublattices = list(host.items())
    rows = [[sign * atoms.get(e, 0) for sign, _, (atoms, _, _) in terms] for e in elements]
    rows.append([sign * charge for sign, _, (_, charge, _) in terms])
    first, first_count = sublattices[0]
    for site, count in sublattices[1:]:
        rows.append([sign * (sites.get(first, 0) * count - sites.get(site, 0) * first_count)
                     for sign, _, (_, _, sites) in terms])
    nullspace = sympy.Matrix(rows).nullspace()
    if len(nullspace) != 1:
        return None
    vector = nullspace[0]
    scale = math.lcm(*[int(sympy.fraction(x)[1]) for x in vector])
    integers = [int(x * scale) for x in vector]
    divisor = math.gcd(*integers)
    sign = 1 if integers[0] > 0 else -1
    return [sign * x // divisor for x in integers]


def read(path):
    host, out = None, []
    with open(path, encoding="utf-8") as handle:
        for line in handle:
            line = line.split("#", 1)[0].strip()
            if not line:
                continue
            if line.startswith("host "):
                host = line[5:].strip()
            else:
                out.append((host, line))
    return out


def lacuna_coefficients(binary, host, reaction):
    run = subprocess.run(
        [binary, "balance", "--host", host, "--format", "json", reaction],
        capture_output=True, text=True, check=False,
    )
    result = json.loads(run.stdout)
    if result["status"] != "unique":
        return None
    return [int(t["coefficient"]) for t in result["reactions"][0]["terms"]]


def main():
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("file")
    parser.add_argument("--rounds", type=int, default=5)
    parser.add_argument("--lacuna")
    args = parser.parse_args()
    reactions = read(args.file)
    parsed = [parse(reaction, host) for host, reaction in reactions]

    if args.lacuna:
        disagreements = 0
        for (host, reaction), p in zip(reactions, parsed):
            ours, theirs = balance(p), lacuna_coefficients(args.lacuna, host, reaction)
            if ours is None or ours != theirs:
                disagreements += 1
                print(f"  {host}: {reaction}: sympy {ours}, lacuna {theirs}")
        verdict = "agree" if disagreements == 0 else "DISAGREE"
        print(f"check: sympy and lacuna {verdict} on the coefficients of "
              f"{len(reactions) - disagreements}/{len(reactions)} reactions")
        if disagreements:
            sys.exit(1)

    times = []
    for _ in range(args.rounds):
        start = time.perf_counter()
        for p in parsed:
            if balance(p) is None:
                sys.exit("a benchmark reaction did not balance uniquely")
        times.append(time.perf_counter() - start)
    median = statistics.median(times)
    per = median / len(parsed)
    print(f"sympy nullspace: {len(parsed)} reactions x {args.rounds} rounds, "
          f"{per * 1e3:.2f} ms per reaction (median round)")
    print(f"peer: balance.ns_per_reaction = {per * 1e9:.1f}")


if __name__ == "__main__":
    main()
