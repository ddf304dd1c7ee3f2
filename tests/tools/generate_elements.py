#!/usr/bin/env python3
"""Generate src/elements/table.rs, Lacuna's embedded element table.

Data source: the PyPI package `mendeleev`, version 1.3.0 (the version used for
the committed table). The generated Rust file is committed, so building Lacuna
needs neither Python nor a network connection; rerun this script only to
refresh the data.

How to rerun (from the repository root):

    python3 -m venv /tmp/mendeleev-venv
    /tmp/mendeleev-venv/bin/pip install mendeleev==1.3.0
    /tmp/mendeleev-venv/bin/python tests/tools/generate_elements.py
    cargo fmt && cargo test elements

The script writes src/elements/table.rs (or the path given as its only
argument) and prints a short summary of what it dropped or corrected.

What is taken from mendeleev, and what is changed on the way:

* Symbols and names: as mendeleev spells them (American spelling, e.g.
  "Aluminum", "Cesium").
* Pauling electronegativity: mendeleev's `en_pauling`; NaN where it has none.
* Oxidation states: mendeleev's `oxidationstates` table; category "main" gives
  `common_states`, "main" and "extended" together give `known_states`.
* Standard atomic weights: mendeleev 1.3.0 stores the CIAAW 2013 values
  (J. Meija et al., Pure Appl. Chem. 88, 2016; conventional values for
  elements given as intervals) and, for
  radioactive elements, the mass number of the longest-lived isotope. The
  table is brought to the IUPAC/CIAAW 2021 standard atomic weights
  (T. Prohaska et al., Standard atomic weights of the elements 2021, Pure
  Appl. Chem. 94, 573, 2022):
    - elements without a standard atomic weight (Tc, Pm, Po, At, Rn, Fr, Ra,
      Ac and Np onwards) get NaN instead of a mass number;
    - WEIGHT_CORRECTIONS below lists the values revised since mendeleev's
      source, each with its reference.
* Ionic radii: Shannon's effective ionic radii (R. D. Shannon, Acta Cryst.
  A32, 751-767, 1976, Table 1), in pm. mendeleev also carries 15 rows for
  nine-coordinate trivalent actinides (Ac to Lr) which its metadata credits
  to a 2016 study by Lundberg; they are not Shannon 1976 values and carry no
  electron configuration, so they are dropped. The ionic radius, not the crystal
  radius, is kept.
  Shannon's coordination labels are roman numerals, some with a suffix
  (IVSQ square planar, IIIPY and IVPY pyramidal); they are mapped to the
  plain count (IVSQ -> 4). Where two rows then collide on (charge,
  coordination number, spin), the first row in mendeleev's table order is
  kept and the later one dropped. With mendeleev 1.3.0 that happens four
  times, each time a tetrahedral IV row beating a square-planar IVSQ row:
  Fe2+ high spin (63 kept, 64 dropped), Ni2+ (55 kept, 49 dropped), Cu2+
  (57 kept, 57 dropped), Ag+ (100 kept, 102 dropped). The script prints
  every collision it resolves.
"""

import math
import re
import sys
from pathlib import Path

import mendeleev
from mendeleev.fetch import fetch_table

EXPECTED_VERSION = "1.3.0"

# Elements for which IUPAC/CIAAW 2021 gives no standard atomic weight: no
# stable isotope and no characteristic terrestrial isotopic composition.
NO_STANDARD_WEIGHT = {43, 61, 84, 85, 86, 87, 88, 89} | set(range(93, 119))

# Standard atomic weights changed between mendeleev's source and the 2021
# table. Value used here, then its reference.
WEIGHT_CORRECTIONS = {
    # CIAAW 2017 revisions (announced 2018), carried into the 2021 table.
    13: (26.9815384, "CIAAW 2017: Al 26.981 5384(3)"),
    25: (54.938043, "CIAAW 2017: Mn 54.938 043(2)"),
    45: (102.90549, "CIAAW 2017: Rh 102.905 49(2)"),
    65: (158.925354, "CIAAW 2017: Tb 158.925 354(8)"),
    67: (164.930328, "CIAAW 2017: Ho 164.930 328(7)"),
    69: (168.934218, "CIAAW 2017: Tm 168.934 218(6)"),
    79: (196.966570, "CIAAW 2017: Au 196.966 570(4)"),
    # Argon became an interval [39.792, 39.963] in 2017; IUPAC's abridged and
    # conventional value is 39.95.
    18: (39.95, "CIAAW 2017/2021: Ar [39.792, 39.963], conventional 39.95"),
    # Prohaska et al. 2021, abstract.
    72: (178.486, "CIAAW 2021: Hf 178.486(6)"),
}
# Note: the 2021 table also retouched Ho, Tb, Tm and Y in the last digit on
# the 2020 Atomic Mass Evaluation; those differences (a few parts in 10^8)
# lie inside the 2017 uncertainties and are not applied here.

ROMAN = {
    "I": 1, "II": 2, "III": 3, "IV": 4, "V": 5, "VI": 6, "VII": 7,
    "VIII": 8, "IX": 9, "X": 10, "XI": 11, "XII": 12, "XIV": 14,
}
SPIN = {"": "N", "HS": "H", "LS": "L"}


def coordination_number(label):
    """Map a Shannon coordination label (e.g. 'IVSQ', 'IIIPY') to its count."""
    match = re.fullmatch(r"([IVX]+)(SQ|PY)?", label)
    if match is None or match.group(1) not in ROMAN:
        raise ValueError(f"unknown coordination label {label!r}")
    return ROMAN[match.group(1)]


def is_missing(value):
    return value is None or (isinstance(value, float) and math.isnan(value))


def rust_str(text):
    """A Rust string literal for plain ASCII text."""
    if not re.fullmatch(r"[A-Za-z]+", text):
        raise ValueError(f"unexpected characters in {text!r}")
    return f'"{text}"'


def float_literal(value):
    """A Rust f64 literal that round-trips; NaN becomes f64::NAN."""
    if is_missing(value):
        return "f64::NAN"
    text = repr(float(value))
    if "e" in text or "inf" in text:
        raise ValueError(f"unexpected float {value!r}")
    return text


def main():
    if mendeleev.__version__ != EXPECTED_VERSION:
        print(
            f"warning: mendeleev {mendeleev.__version__} found, "
            f"script written for {EXPECTED_VERSION}; review the output",
            file=sys.stderr,
        )
    out_path = Path(sys.argv[1]) if len(sys.argv) > 1 else (
        Path(__file__).resolve().parents[2] / "src" / "elements" / "table.rs"
    )

    elements = fetch_table("elements").sort_values("atomic_number")
    if list(elements.atomic_number) != list(range(1, 119)):
        raise SystemExit("expected elements 1..118 exactly")

    states = fetch_table("oxidationstates")
    common = {z: set() for z in range(1, 119)}
    known = {z: set() for z in range(1, 119)}
    for row in states.itertuples():
        z, s = int(row.atomic_number), int(row.oxidation_state)
        known[z].add(s)
        if row.category == "main":
            common[z].add(s)
        elif row.category != "extended":
            raise SystemExit(f"unknown oxidation state category {row.category!r}")

    radii_rows = fetch_table("ionicradii").sort_values("id")
    radii = {z: [] for z in range(1, 119)}
    seen = {}
    dropped_non_shannon = 0
    for row in radii_rows.itertuples():
        if is_missing(row.econf):
            # Rows from the 2016 actinide study, not Shannon (1976).
            dropped_non_shannon += 1
            continue
        z = int(row.atomic_number)
        key = (z, int(row.charge), coordination_number(row.coordination),
               SPIN[row.spin if not is_missing(row.spin) else ""])
        if key in seen:
            kept = seen[key]
            print(
                f"collision: Z={z} charge {key[1]} CN {key[2]} spin {key[3]}: "
                f"kept {kept.coordination} {round(kept.ionic_radius, 2)} pm, "
                f"dropped {row.coordination} {round(row.ionic_radius, 2)} pm"
            )
            continue
        seen[key] = row
        # Stored in pm with binary noise (57.00000000000001); Shannon gives at
        # most three decimals in angstrom, i.e. one in pm.
        radius = round(float(row.ionic_radius), 2)
        radii[z].append((key[1], key[2], key[3], radius))
    spin_order = {"N": 0, "H": 1, "L": 2}
    for z in radii:
        radii[z].sort(key=lambda r: (r[0], r[1], spin_order[r[2]]))

    lines = [
        f"//! Generated by tests/tools/generate_elements.py from mendeleev "
        f"{'.'.join(mendeleev.__version__.split('.')[:2])}; do not edit.",
        "//!",
        f"//! mendeleev {mendeleev.__version__}; atomic weights brought to the IUPAC 2021 table,",
        "//! radii restricted to Shannon (1976). See the script for every change.",
        "",
        "use super::data::Spin::{High as H, Low as L, None as N};",
        "use super::data::{Element, IonicRadius, Spin};",
        "",
        "const fn r(charge: i8, coordination: u8, spin: Spin, radius_pm: f64) -> IonicRadius {",
        "    IonicRadius {",
        "        charge,",
        "        coordination,",
        "        spin,",
        "        radius_pm,",
        "    }",
        "}",
        "",
        "#[rustfmt::skip]",
        "pub(super) static ELEMENTS: [Element; 118] = [",
    ]
    radius_statics = []
    missing_weight, missing_en, missing_radii, missing_states = [], [], [], []
    for row in elements.itertuples():
        z = int(row.atomic_number)
        symbol = row.symbol
        weight = row.atomic_weight
        if z in NO_STANDARD_WEIGHT:
            weight = math.nan
        elif z in WEIGHT_CORRECTIONS:
            new, _why = WEIGHT_CORRECTIONS[z]
            if abs(new - weight) > 0.01:
                raise SystemExit(f"suspicious correction for Z={z}: {weight} -> {new}")
            weight = new
        if is_missing(weight):
            missing_weight.append(symbol)
        if is_missing(row.en_pauling):
            missing_en.append(symbol)
        if not radii[z]:
            missing_radii.append(symbol)
        if not known[z]:
            missing_states.append(symbol)
        if not common[z] <= known[z]:
            raise SystemExit(f"common states not within known states for {symbol}")
        cs = ", ".join(str(s) for s in sorted(common[z]))
        ks = ", ".join(str(s) for s in sorted(known[z]))
        rname = f"R_{symbol.upper()}"
        if radii[z]:
            radius_ref = f"&{rname}"
            body = ", ".join(
                f"r({c}, {cn}, {sp}, {float_literal(v)})" for c, cn, sp, v in radii[z]
            )
            radius_statics.append(
                f"static {rname}: [IonicRadius; {len(radii[z])}] = [{body}];"
            )
        else:
            radius_ref = "&[]"
        lines.append(
            f"    Element {{ z: {z}, symbol: {rust_str(symbol)}, name: {rust_str(row.name)}, "
            f"atomic_weight: {float_literal(weight)}, "
            f"electronegativity: {float_literal(row.en_pauling)}, "
            f"common_states: &[{cs}], known_states: &[{ks}], radii: {radius_ref} }},"
        )
    lines.append("];")
    lines.append("")
    # One static per element with radii, one line each.
    for s in radius_statics:
        lines.append("#[rustfmt::skip]")
        lines.append(s)
    out_path.write_text("\n".join(lines) + "\n", encoding="utf-8")

    print(f"wrote {out_path}")
    print(f"dropped {dropped_non_shannon} non-Shannon radius rows")
    print(f"no atomic weight: {' '.join(missing_weight)}")
    print(f"no Pauling electronegativity: {' '.join(missing_en)}")
    print(f"no Shannon radius: {' '.join(missing_radii)}")
    print(f"no oxidation state: {' '.join(missing_states)}")


if __name__ == "__main__":
    main()
