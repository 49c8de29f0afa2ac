#!/usr/bin/env python3
"""Generate crates/core/src/masses_table.rs from the `periodictable` package.

SOURCE: periodictable (its isotope masses are the AME 2020 atomic mass evaluation, M. Wang et al.,
Chinese Phys. C 45, 030003 (2021), rounded table `massround.mas20`; natural abundances from the
CIAAW 2021 isotopic compositions, as documented in `periodictable.mass`).

Elements: Z = 1 (H) … 54 (Xe), plus Cs, Hg, Pb, U (Rb and I lie inside H…Xe).

Which nuclides (the rule; a short table keeps the browser module small):
  1. every nuclide with a natural abundance listed by periodictable (CIAAW 2021), and
  2. every radionuclide of these elements whose ground-state half-life is at least one day
     (HALF_LIFE_MIN_DAYS), half-lives from the Python package `radioactivedecay` (its default
     data set: ICRP Publication 107 decay data with AME 2020 / NUBASE 2020 updates). This keeps
     tritium, 14C, 99Tc, 129I, 137Cs, 210Pb, 232…238U and the like; it drops the short-lived
     nuclides no diatomic molecule is measured with. Masses always come from periodictable.

Usage:  python3 scripts/gen_masses.py            (rewrites the table in place)
        python3 scripts/gen_masses.py --check    (exit 1 if the committed table differs)
Needs:  pip install periodictable==2.1.0 radioactivedecay==0.6.1

"""

import pathlib
import sys

import periodictable
import radioactivedecay

ELEMENTS_Z = list(range(1, 55)) + [55, 80, 82, 92]
HALF_LIFE_MIN_DAYS = 1.0
OUT = pathlib.Path(__file__).resolve().parent.parent / "crates/core/src/masses_table.rs"


def half_life_days(symbol: str, a: int):
    """Ground-state half-life in days, or None when the decay data do not list the nuclide."""
    try:
        return radioactivedecay.Nuclide(f"{symbol}-{a}").half_life("d")
    except ValueError:
        return None


def kept(symbol: str, a: int, abundance: float) -> bool:
    """The selection rule of the module docstring."""
    if abundance > 0.0:
        return True
    t = half_life_days(symbol, a)
    return t is not None and t >= HALF_LIFE_MIN_DAYS


def render() -> str:
    lines = [
        "//! Atomic masses and natural abundances of the nuclides Rungs knows (GENERATED, do not edit).",
        "//!",
        "//! Written by `scripts/gen_masses.py` from the Python package `periodictable` "
        f"{periodictable.__version__},",
        "//! whose isotope masses are the AME 2020 atomic mass evaluation (M. Wang et al.,",
        "//! Chinese Phys. C 45, 030003 (2021), rounded table) and whose abundances are the CIAAW 2021",
        "//! isotopic compositions. Regenerate with `python3 scripts/gen_masses.py`.",
        "//!",
        "//! Nuclides kept: every one with a natural abundance, plus every radionuclide with a",
        f"//! half-life of at least {HALF_LIFE_MIN_DAYS:g} day (half-lives from `radioactivedecay` "
        f"{radioactivedecay.__version__},",
        "//! ICRP 107 / NUBASE 2020 data).",
        "",
        "/// Where the masses come from, for reports.",
        "pub(crate) const SOURCE: &str = concat!(",
        '    "AME 2020 atomic masses (Wang et al., Chinese Phys. C 45, 030003 (2021)) ",',
        f'    "via periodictable {periodictable.__version__}"',
        ");",
        "",
        "/// Elements: atomic number, symbol, English name.",
        "pub(crate) static ELEMENTS: &[(u8, &str, &str)] = &[",
    ]
    for z in ELEMENTS_Z:
        el = periodictable.elements[z]
        lines.append(f'    ({z}, "{el.symbol}", "{el.name}"),')
    lines += [
        "];",
        "",
        "/// Nuclides: atomic number Z, mass number A, atomic mass in u, natural abundance in %",
        "/// (0 for nuclides with no natural abundance listed).",
        "pub(crate) static NUCLIDES: &[(u8, u16, f64, f64)] = &[",
    ]
    count = 0
    for z in ELEMENTS_Z:
        el = periodictable.elements[z]
        for iso in el:
            mass = float(iso.mass)
            ab = float(getattr(iso, "abundance", 0.0) or 0.0)
            if not kept(el.symbol, iso.isotope, ab):
                continue
            mass_lit = repr(mass)
            ab_lit = repr(ab)
            if "." not in mass_lit and "e" not in mass_lit:
                mass_lit += ".0"
            if "." not in ab_lit and "e" not in ab_lit:
                ab_lit += ".0"
            lines.append(f"    ({z}, {iso.isotope}, {mass_lit}, {ab_lit}),")
            count += 1
    lines += ["];", ""]
    return "\n".join(lines)


def main() -> int:
    text = render()
    if "--check" in sys.argv:
        if OUT.read_text() != text:
            print(f"{OUT} is out of date; run scripts/gen_masses.py", file=sys.stderr)
            return 1
        return 0
    OUT.write_text(text)
    print(f"wrote {OUT}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
