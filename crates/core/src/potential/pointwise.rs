//! A potential curve given point by point, e.g. from a quantum-chemistry calculation.
//!
//! The points are interpolated by a not-a-knot cubic spline ([`CubicSpline`]) and both walls are
//! extended beyond the table (see [`walls`](super::walls)). A small reader for a two-column
//! (r, V) text table is included; it is deliberately minimal (the general table intake lives
//! elsewhere): one optional header line, `#` comments, comma, semicolon, tab or blank
//! separators, and a choice of units for each column.

use serde::{Deserialize, Serialize};

use super::spline::CubicSpline;
use super::walls::{OuterWall, WallFit, fit_inner, fit_outer};
use super::{Potential, WellMinimum};
use crate::constants::{
    AVOGADRO_PER_MOL, BOHR_ANGSTROM, ELEMENTARY_CHARGE_C, HARTREE_CM1, PLANCK_J_S,
    SPEED_OF_LIGHT_M_S,
};
use crate::sorting::sort_by;
use crate::{Error, Result};

/// Unit of the distance column of a pointwise table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum LengthUnit {
    /// Ångström.
    #[default]
    Angstrom,
    /// Bohr radius a₀ (CODATA 2022).
    Bohr,
}

impl LengthUnit {
    /// Factor converting this unit to Å.
    pub fn to_angstrom(self) -> f64 {
        match self {
            LengthUnit::Angstrom => 1.0,
            LengthUnit::Bohr => BOHR_ANGSTROM,
        }
    }
}

/// Unit of the energy column of a pointwise table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum EnergyUnit {
    /// Wavenumber, cm⁻¹.
    #[default]
    Cm1,
    /// Hartree E_h (CODATA 2022).
    Hartree,
    /// Electronvolt.
    Ev,
    /// kJ/mol.
    KjPerMol,
}

impl EnergyUnit {
    /// Factor converting this unit to cm⁻¹.
    pub fn to_cm1(self) -> f64 {
        let hc_cm = PLANCK_J_S * SPEED_OF_LIGHT_M_S * 100.0; // J per cm⁻¹
        match self {
            EnergyUnit::Cm1 => 1.0,
            EnergyUnit::Hartree => HARTREE_CM1,
            EnergyUnit::Ev => ELEMENTARY_CHARGE_C / hc_cm,
            EnergyUnit::KjPerMol => 1000.0 / (AVOGADRO_PER_MOL * hc_cm),
        }
    }
}

/// Read a two-column (r, V) table from text; returns (r in Å, V in cm⁻¹) in file order.
///
/// Blank lines and lines starting with `#` are skipped; the first remaining line may be a
/// header (recognised by a non-numeric first field). Columns are separated by commas,
/// semicolons, tabs or runs of blanks (whichever the first data line uses). Exactly two
/// columns per row.
pub fn parse_two_column(
    text: &str,
    r_unit: LengthUnit,
    v_unit: EnergyUnit,
) -> Result<Vec<(f64, f64)>> {
    // The limits of any table (bytes and lines), checked before anything of it is kept.
    crate::intake::check_table_size(text)?;
    let first_data = text
        .lines()
        .map(str::trim)
        .find(|l| !l.is_empty() && !l.starts_with('#'));
    let Some(first) = first_data else {
        return Err(Error::TooFewPoints {
            what: "a pointwise potential".into(),
            have: 0,
            need: 4,
        });
    };
    let delimiter = [b',', b';', b'\t']
        .into_iter()
        .find(|&d| first.as_bytes().contains(&d));
    // Blank-separated text is rewritten with commas, line for line, so row numbers survive.
    let normalised;
    let (source, delim) = match delimiter {
        Some(d) => (text, d),
        None => {
            normalised = text
                .lines()
                .map(|l| {
                    if l.trim_start().starts_with('#') {
                        l.to_string()
                    } else {
                        l.split_whitespace().collect::<Vec<_>>().join(",")
                    }
                })
                .collect::<Vec<_>>()
                .join("\n");
            (normalised.as_str(), b',')
        }
    };
    let mut reader = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .comment(Some(b'#'))
        .trim(csv::Trim::All)
        .delimiter(delim)
        .from_reader(source.as_bytes());
    let (fr, fv) = (r_unit.to_angstrom(), v_unit.to_cm1());
    let mut out = Vec::new();
    let mut seen_row = false;
    for record in reader.records() {
        let record = record.map_err(|e| Error::Parse {
            line: e.position().map_or(0, |p| p.line() as usize),
            message: e.to_string(),
        })?;
        let line = record.position().map_or(0, |p| p.line() as usize);
        if record.iter().all(str::is_empty) {
            continue;
        }
        let is_header = !seen_row && record.get(0).is_some_and(|f| f.parse::<f64>().is_err());
        seen_row = true;
        if is_header {
            continue;
        }
        if record.len() != 2 {
            return Err(Error::Parse {
                line,
                message: format!("expected two columns (r, V), found {}", record.len()),
            });
        }
        let cell = |i: usize, name: &str| -> Result<f64> {
            let s = record.get(i).unwrap_or("");
            match s.parse::<f64>() {
                Ok(x) if x.is_finite() => Ok(x),
                _ => Err(Error::Cell {
                    row: line,
                    column: name.into(),
                    message: format!("'{s}' is not a finite number"),
                }),
            }
        };
        let r = cell(0, "r")?;
        let v = cell(1, "V")?;
        if r <= 0.0 {
            return Err(Error::Cell {
                row: line,
                column: "r".into(),
                message: "distance must be positive".into(),
            });
        }
        out.push((r * fr, v * fv));
    }
    if out.len() < 4 {
        return Err(Error::TooFewPoints {
            what: "a pointwise potential".into(),
            have: out.len(),
            need: 4,
        });
    }
    Ok(out)
}

/// A potential interpolated through points (r Å, V cm⁻¹) with both walls extended.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PointwisePotential {
    spline: CubicSpline,
    inner: WallFit,
    outer: WallFit,
    minimum: WellMinimum,
}

impl PointwisePotential {
    /// Interpolate the points (any order; at least 4, distinct r > 0) and extend the walls.
    /// The well bottom must lie strictly inside the table.
    pub fn new(points: &[(f64, f64)], outer: OuterWall) -> Result<Self> {
        let mut pts: Vec<(f64, f64)> = points.to_vec();
        if let Some(i) = pts
            .iter()
            .position(|p| !(p.0.is_finite() && p.1.is_finite() && p.0 > 0.0))
        {
            return Err(Error::Cell {
                row: i + 1,
                column: "r".into(),
                message: "point is not finite or has r ≤ 0".into(),
            });
        }
        sort_by(&mut pts, |a, b| a.0.total_cmp(&b.0));
        if let Some(w) = pts.windows(2).find(|w| w[0].0 == w[1].0) {
            return Err(Error::parameter(
                "r",
                format!("distance {} Å appears twice", w[0].0),
            ));
        }
        let x: Vec<f64> = pts.iter().map(|p| p.0).collect();
        let y: Vec<f64> = pts.iter().map(|p| p.1).collect();
        let spline = CubicSpline::new(&x, &y)?;
        let n = x.len();
        let imin = (0..n).min_by(|&a, &b| y[a].total_cmp(&y[b])).unwrap_or(0);
        if imin == 0 || imin == n - 1 {
            return Err(Error::numerical(
                "pointwise potential",
                "the lowest point is at an end of the table: no well minimum inside it",
            ));
        }
        let minimum = refine_minimum(&spline, x[imin - 1], x[imin + 1]);
        let (v0, d10, d20) = spline.eval(x[0]);
        let inner = fit_inner(x[0], v0, d10, d20, minimum.energy_cm1)?;
        let (vn, d1n, d2n) = spline.eval(x[n - 1]);
        let outer = fit_outer(outer, x[n - 1], vn, d1n, d2n)?;
        Ok(Self {
            spline,
            inner,
            outer,
            minimum,
        })
    }

    /// The table points (sorted by r).
    pub fn points(&self) -> impl Iterator<Item = (f64, f64)> + '_ {
        self.spline
            .x()
            .iter()
            .copied()
            .zip(self.spline.y().iter().copied())
    }

    /// Range of r covered by the table, Å.
    pub fn table_range_angstrom(&self) -> (f64, f64) {
        let x = self.spline.x();
        (x[0], x[x.len() - 1])
    }

    /// The inner-wall extension used below the table.
    pub fn inner_wall(&self) -> WallFit {
        self.inner
    }

    /// The outer-wall extension used beyond the table.
    pub fn outer_wall(&self) -> WallFit {
        self.outer
    }
}

/// Minimum of the spline in [a, b] by golden-section search.
fn refine_minimum(s: &CubicSpline, mut a: f64, mut b: f64) -> WellMinimum {
    let g = 0.5 * (5f64.sqrt() - 1.0);
    let mut c = b - g * (b - a);
    let mut d = a + g * (b - a);
    let (mut fc, mut fd) = (s.value(c), s.value(d));
    for _ in 0..200 {
        if (b - a) <= 1e-13 * (a.abs() + b.abs()) {
            break;
        }
        if fc < fd {
            b = d;
            d = c;
            fd = fc;
            c = b - g * (b - a);
            fc = s.value(c);
        } else {
            a = c;
            c = d;
            fc = fd;
            d = a + g * (b - a);
            fd = s.value(d);
        }
    }
    let r = 0.5 * (a + b);
    WellMinimum {
        r_angstrom: r,
        energy_cm1: s.value(r),
    }
}

impl Potential for PointwisePotential {
    fn energy_cm1(&self, r: f64) -> f64 {
        let (lo, hi) = self.table_range_angstrom();
        if r < lo {
            self.inner.eval(r).0
        } else if r > hi {
            self.outer.eval(r).0
        } else {
            self.spline.value(r)
        }
    }

    fn derivative_cm1_per_angstrom(&self, r: f64) -> f64 {
        let (lo, hi) = self.table_range_angstrom();
        if r < lo {
            self.inner.eval(r).1
        } else if r > hi {
            self.outer.eval(r).1
        } else {
            self.spline.eval(r).1
        }
    }

    fn minimum(&self) -> WellMinimum {
        self.minimum
    }

    fn asymptote_cm1(&self) -> Option<f64> {
        self.outer.limit_cm1()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::potential::Morse;

    /// SOURCE: unit factors from CODATA 2022 (domain.md §1.12: 1 eV = 8 065.543 937 cm⁻¹,
    /// E_h = 219 474.631 363 14 cm⁻¹, a₀ = 0.529 177 210 544 Å, 1 kJ/mol = 83.593 472 29 cm⁻¹).
    /// Tolerance 1e-9 relative.
    #[test]
    fn parses_blank_separated_with_header_comments_and_units() {
        let text = "# SYNTHETIC test table\nr/bohr  V/hartree\n\n1.0 0.5\n2.0   -0.1\n# mid\n3.0 \
                    -0.05\n4.0 0.0\n";
        let pts = parse_two_column(text, LengthUnit::Bohr, EnergyUnit::Hartree).unwrap();
        assert_eq!(pts.len(), 4);
        assert!((pts[1].0 - 2.0 * 0.529_177_210_544).abs() < 1e-12);
        assert!((pts[1].1 + 0.1 * 219_474.631_363_14).abs() < 1e-7);
        assert!((EnergyUnit::Ev.to_cm1() - 8_065.543_937_349).abs() / 8065.5 < 1e-9);
        assert!((EnergyUnit::KjPerMol.to_cm1() - 83.593_472_29).abs() / 83.59 < 1e-9);
    }

    /// Bad cells name their row and column (common practice, no source).
    #[test]
    fn reports_bad_cells_and_shapes() {
        let err = parse_two_column(
            "r,V\n1,2\n2,x\n3,4\n4,5\n",
            LengthUnit::Angstrom,
            EnergyUnit::Cm1,
        )
        .unwrap_err();
        assert!(
            matches!(err, Error::Cell { row: 3, ref column, .. } if column == "V"),
            "{err}"
        );
        let err =
            parse_two_column("1;2;3\n2;3;4\n", LengthUnit::Angstrom, EnergyUnit::Cm1).unwrap_err();
        assert!(matches!(err, Error::Parse { line: 1, .. }), "{err}");
        assert!(parse_two_column("1,2\n2,3\n", LengthUnit::Angstrom, EnergyUnit::Cm1).is_err());
    }

    /// SOURCE: closed-form Morse curve (domain.md §1.8) sampled every 0.02 Å; the spline must
    /// return it to 0.01 cm⁻¹ + 1e-5·V (cubic-spline error ~h⁴|V⁗|/384 with V⁗ ≈ (2a)⁴V on the
    /// wall, larger in the end intervals; common practice, no source) and find r_e to 1e-6 Å.
    #[test]
    fn interpolates_a_sampled_morse_curve() {
        let m = Morse::from_constants(1000.0, 10.0, 10.0, 2.0).unwrap();
        let pts: Vec<(f64, f64)> = (0..300)
            .map(|i| 1.5 + 0.02 * i as f64)
            .map(|r| (r, m.energy_cm1(r)))
            .collect();
        let p = PointwisePotential::new(&pts, OuterWall::Automatic).unwrap();
        assert!(
            (p.minimum().r_angstrom - 2.0).abs() < 1e-6,
            "{:?}",
            p.minimum()
        );
        for i in 0..1000 {
            let r = 1.5 + 0.005 * i as f64;
            let exact = m.energy_cm1(r);
            let err = (p.energy_cm1(r) - exact).abs();
            assert!(err < 0.01 + 1e-5 * exact, "{r}: {err}");
        }
        assert!(p.energy_cm1(1.3) > p.energy_cm1(1.5));
        let lim = p.asymptote_cm1().unwrap();
        assert!((lim - 25_000.0).abs() < 1.0, "{lim}");
    }
}
