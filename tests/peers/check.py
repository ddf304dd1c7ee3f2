#!/usr/bin/env python3
"""A plain-Python checker of Lacuna's three balances, written for the
side-by-side benchmark: what a scripting user would otherwise write. It reads
the same reaction files (host lines, optional names, ASCII marks) and checks
mass, charge and site balance with exact fractions. Usage: check.py FILE"""

import re
import sys
from fractions import Fraction

ANIONS = {"O": -2, "S": -2, "F": -1, "Cl": -1, "N": -3}
# Usual cation charges for the hosts the benchmark uses.
CATIONS = {"Zr": 4, "Ce": 4, "Y": 3, "Mg": 2, "Ca": 2, "Ti": 4, "Ba": 2, "Sr": 2, "Al": 3, "Na": 1, "Sc": 3}
ELEMENT = re.compile(r"([A-Z][a-z]?)(\d+(?:\.\d+)?)?")
SPECIES = re.compile(r"^([A-Z][a-z]?|V|e|h)(?:_([A-Z][a-z]?|i))?([.*']*|x)?$")
TERM = re.compile(r"^(\d+(?:/\d+)?(?:\.\d+)?)?\s*(.+)$")


def formula(text):
    atoms = {}
    for symbol, count in ELEMENT.findall(text):
        atoms[symbol] = atoms.get(symbol, 0) + Fraction(count or 1)
    return atoms


def host_sites(text):
    atoms = formula(text)
    return {s: n for s, n in atoms.items()}


def check(reaction, sites):
    left, right = re.split(r"\s*(?:->|<=>|=)\s*", reaction, maxsplit=1)
    mass, charge, site = {}, Fraction(0), {s: Fraction(0) for s in sites}
    for sign, side in ((-1, left), (1, right)):
        for raw in side.split("+"):
            raw = raw.strip()
            if raw in ("nil", "0"):
                continue
            coefficient, body = TERM.match(raw).groups()
            k = Fraction(coefficient or 1) * sign
            body = body.strip()
            if "_" in body or body[0] in "eh" and (len(body) == 1 or body[1] in ".'*x"):
                occupant, where, marks = SPECIES.match(body).groups()
                marks = marks or ""
                charge += k * (marks.count(".") + marks.count("*") - marks.count("'"))
                if occupant not in ("V", "e", "h"):
                    mass[occupant] = mass.get(occupant, 0) + k
                if where and where != "i":
                    site[where] += k
            else:
                for symbol, n in formula(body.replace("(g)", "")).items():
                    mass[symbol] = mass.get(symbol, 0) + k * n
    ratio = None
    balanced_sites = True
    for s, n in site.items():
        r = n / sites[s]
        if ratio is None:
            ratio = r
        elif r != ratio:
            balanced_sites = False
    return all(v == 0 for v in mass.values()), charge == 0, balanced_sites


def main(path):
    sites, total, failed = None, 0, 0
    with open(path, encoding="utf-8") as handle:
        for line in handle:
            line = line.split("#", 1)[0].strip()
            if not line:
                continue
            if line.startswith("host "):
                sites = host_sites(line[5:].strip())
                continue
            label = re.match(r"^[A-Za-z][\w.-]*:\s", line)
            if label:
                line = line[label.end():]
            total += 1
            if not all(check(line, sites)):
                failed += 1
    print(f"{total} reactions, {failed} failed")


if __name__ == "__main__":
    main(sys.argv[1])
