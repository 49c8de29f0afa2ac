//! Vibrational spacings ΔG_{v+½} = G(v+1) − G(v) and their correlations.
//!
//! Spacings derived from levels carry the levels' covariance: with D the differencing matrix,
//! Cov(ΔG) = D Σ Dᵀ, so adjacent spacings that share a level are anticorrelated,
//! Cov(ΔG_{v−½}, ΔG_{v+½}) = −σ²(G_v) for independent levels (domain.md §1.6). The reverse
//! direction, levels rebuilt from a contiguous run of spacings by cumulative sums, is the
//! [`LevelView`] that the near-dissociation fit and the observed sum use.
//!
//! Convention (stated in every report): the spacing with lower level v is plotted at the
//! abscissa v + ½ of a vibrational-number axis.

// Index loops mirror the matrix algebra in these numerical kernels.
#![allow(clippy::needless_range_loop)]

use nalgebra::DMatrix;

use crate::dunham::{DataKind, FitData};

/// Spacings between consecutive levels, with their covariance.
#[derive(Debug, Clone, PartialEq)]
pub struct DerivedSpacings {
    /// Lower level v of each spacing.
    pub v_lower: Vec<f64>,
    /// ΔG_{v+½}, cm⁻¹.
    pub values: Vec<f64>,
    /// Covariance of the spacings, cm⁻² (D Σ Dᵀ).
    pub cov: DMatrix<f64>,
}

/// Spacings of every pair of consecutive levels (v, v+1) present in the data, with the full
/// covariance D Σ Dᵀ. `v` must be ascending.
pub fn spacings_from_levels(v: &[f64], e: &[f64], cov: &DMatrix<f64>) -> DerivedSpacings {
    let pairs: Vec<usize> = (0..v.len().saturating_sub(1))
        .filter(|&i| v[i + 1] - v[i] == 1.0)
        .collect();
    let m = pairs.len();
    let n = v.len();
    let mut d = DMatrix::zeros(m, n);
    for (r, &i) in pairs.iter().enumerate() {
        d[(r, i)] = -1.0;
        d[(r, i + 1)] = 1.0;
    }
    DerivedSpacings {
        v_lower: pairs.iter().map(|&i| v[i]).collect(),
        values: pairs.iter().map(|&i| e[i + 1] - e[i]).collect(),
        cov: &d * cov * d.transpose(),
    }
}

/// The levels behind the data, as linear functions of the data vector y.
///
/// For level input this is the identity; for a contiguous run of spacings the levels are the
/// cumulative sums from the lowest level, whose energy is set to 0.
#[derive(Debug, Clone)]
pub struct LevelView {
    /// Vibrational quantum numbers, ascending.
    pub v: Vec<f64>,
    /// Level energies, cm⁻¹.
    pub e: Vec<f64>,
    /// E = map · y (levels × data).
    pub map: DMatrix<f64>,
}

impl LevelView {
    /// Build the level view of fit data; `None` for spacings with a gap (no telescoping across it).
    pub fn of(data: &FitData) -> Option<Self> {
        let n = data.len();
        match data.kind {
            DataKind::Levels => Some(Self {
                v: data.v.clone(),
                e: data.y.clone(),
                map: DMatrix::identity(n, n),
            }),
            DataKind::Spacings => {
                if data.v.windows(2).any(|w| w[1] - w[0] != 1.0) {
                    return None;
                }
                let v0 = *data.v.first()?;
                let mut map = DMatrix::zeros(n + 1, n);
                for r in 1..=n {
                    for c in 0..r {
                        map[(r, c)] = 1.0;
                    }
                }
                let y = nalgebra::DVector::from_column_slice(&data.y);
                let e = &map * y;
                Some(Self {
                    v: (0..=n).map(|k| v0 + k as f64).collect(),
                    e: e.iter().copied().collect(),
                    map,
                })
            }
        }
    }

    /// Covariance of a subset of levels: M_s Σ M_sᵀ.
    pub fn cov_of(&self, rows: &[usize], data_cov: &DMatrix<f64>) -> DMatrix<f64> {
        let m = self.map.select_rows(rows);
        &m * data_cov * m.transpose()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: domain.md §1.6 — adjacent spacings of independent levels are anticorrelated with
    /// Cov(ΔG_{v−½}, ΔG_{v+½}) = −σ²(G_v); Var(ΔG_{v+½}) = σ²_v + σ²_{v+1}. Exact.
    #[test]
    fn adjacent_spacings_anticorrelated() {
        let v = [0.0, 1.0, 2.0, 4.0, 5.0];
        let e = [0.0, 10.0, 19.0, 35.0, 42.0];
        let s = [0.1, 0.2, 0.3, 0.4, 0.5];
        let cov = DMatrix::from_diagonal(&nalgebra::DVector::from_iterator(
            5,
            s.iter().map(|x| x * x),
        ));
        let d = spacings_from_levels(&v, &e, &cov);
        assert_eq!(d.v_lower, vec![0.0, 1.0, 4.0]);
        assert_eq!(d.values, vec![10.0, 9.0, 7.0]);
        assert!((d.cov[(0, 1)] + 0.04).abs() < 1e-15);
        assert!((d.cov[(0, 0)] - 0.05).abs() < 1e-15);
        assert_eq!(d.cov[(1, 2)], 0.0);
    }
}
