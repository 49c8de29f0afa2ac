#!/usr/bin/env python3
"""Oracle for intake units and masses: writes tests/intake/units_oracle.json.

SOURCES:
- scipy.constants (SciPy >= 1.15 ships CODATA 2022; checked below) for every unit factor
  "value of 1 <unit> in cm^-1";
- periodictable (AME 2020 atomic masses) for nuclide masses and reduced masses.

Run:  python3 scripts/oracles/units.py
"""

import json
import pathlib

import periodictable
import scipy
import scipy.constants as sc

OUT = pathlib.Path(__file__).resolve().parents[2] / "tests/intake/units_oracle.json"

# CODATA 2022 check: the atomic mass constant changed between 2018 and 2022.
u_kg = sc.physical_constants["atomic mass constant"][0]
assert abs(u_kg - 1.66053906892e-27) < 1e-36, f"scipy {scipy.__version__} is not CODATA 2022"

hc_j_cm = sc.h * sc.c * 100.0  # J cm
factors = {
    "cm-1": 1.0,
    "eV": sc.e / hc_j_cm,
    "meV": 1e-3 * sc.e / hc_j_cm,
    "GHz": 1e9 / (sc.c * 100.0),
    "MHz": 1e6 / (sc.c * 100.0),
    "THz": 1e12 / (sc.c * 100.0),
    "kJ/mol": 1e3 / (sc.N_A * hc_j_cm),
    "kcal/mol": sc.calorie * 1e3 / (sc.N_A * hc_j_cm),  # sc.calorie is the thermochemical 4.184 J
    "K": sc.k / hc_j_cm,
    "hartree": sc.physical_constants["hartree-inverse meter relationship"][0] / 100.0,
}
# Independent second route for two of them, straight from CODATA relationships.
factors_codata_relationships = {
    "eV": sc.physical_constants["electron volt-inverse meter relationship"][0] / 100.0,
    "K": sc.physical_constants["kelvin-inverse meter relationship"][0] / 100.0,
}

labels = ["1H", "D", "T", "12C", "13C", "14N", "16O", "18O", "23Na", "35Cl", "37Cl", "85Rb",
          "87Rb", "127I", "129Xe", "133Cs", "202Hg", "208Pb", "238U", "7Li", "40Ar", "19F"]


def mass_of(label):
    if label == "D":
        return periodictable.H[2].mass
    if label == "T":
        return periodictable.H[3].mass
    digits = "".join(ch for ch in label if ch.isdigit())
    sym = label[len(digits):]
    return getattr(periodictable, sym)[int(digits)].mass


masses = {lab: float(mass_of(lab)) for lab in labels}
pairs = [("1H", "35Cl"), ("12C", "16O"), ("35Cl", "35Cl"), ("127I", "127I"), ("23Na", "23Na"),
         ("7Li", "35Cl"), ("133Cs", "127I"), ("1H", "1H"), ("D", "D"), ("1H", "T")]
reduced = [
    {"a": a, "b": b, "mu_u": masses[a] * masses[b] / (masses[a] + masses[b])} for a, b in pairs
]

doc = {
    "source": f"scipy.constants (SciPy {scipy.__version__}, CODATA 2022); "
              f"periodictable {periodictable.__version__} (AME 2020 masses)",
    "codata_year": 2022,
    "cm1_per_unit": factors,
    "cm1_per_unit_codata_relationships": factors_codata_relationships,
    "masses_u": masses,
    "reduced_masses": reduced,
}
OUT.write_text(json.dumps(doc, indent=2) + "\n")
print(f"wrote {OUT}")
