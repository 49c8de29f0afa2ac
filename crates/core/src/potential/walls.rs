//! Extensions of a tabulated potential beyond its first and last points.
//!
//! The solver needs V(r) from deep inside the repulsive wall to far out in the long-range
//! region; tabulated curves (user tables, RKR turning points) stop short of both. Each
//! extension is matched to the spline at the end point — value and slope always, curvature
//! where the form allows — so that V stays smooth enough for the solver.
//!
//! Inner wall: A + B e^{−C (r − r₁)} matched to value, slope and curvature (common practice,
//! domain notes §1.10); when the end is not convex, value and slope with A = the well bottom.
//!
//! Outer wall, as chosen by [`OuterWall`]: a long-range tail D − C_n/rⁿ − C_{n+2}/r^{n+2} towards
//! a known limit D; an exponential (Morse-like) approach L − B e^{−β (r − r_N)}; or, when the
//! curve shows no sign of levelling off, its quadratic continuation (no dissociation limit).

use serde::{Deserialize, Serialize};

use crate::{Error, Result};

/// How to continue a tabulated curve beyond its outermost point.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum OuterWall {
    /// Exponential approach to a limit estimated from the end's slope and curvature when the
    /// curve is levelling off there (V′ > 0, V″ < 0); otherwise the quadratic continuation.
    #[default]
    Automatic,
    /// Long-range tail V = D − C_n/rⁿ − C_{n+2}/r^{n+2} towards the limit D. With `c_n` given
    /// only C_{n+2} is matched (to the end value); without it, both are matched to the end value
    /// and slope.
    LongRange {
        /// Dissociation limit D on the curve's energy scale, cm⁻¹.
        limit_cm1: f64,
        /// Long-range power n (3 … 10 for neutral diatomics).
        n: u32,
        /// C_n in cm⁻¹ Åⁿ, when known.
        c_n: Option<f64>,
    },
    /// Morse-like V = L − B e^{−β (r − r_N)}: with `limit_cm1` given, β is matched to the end
    /// slope; otherwise L and β come from the end slope and curvature.
    Exponential {
        /// Dissociation limit L on the curve's energy scale, cm⁻¹, when known.
        limit_cm1: Option<f64>,
    },
}

/// The fitted extension of one wall, reported so a user can see what was assumed.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case", tag = "kind")]
pub enum WallFit {
    /// V = A + B e^{−C (r − r₀)}.
    Exponential {
        /// A, cm⁻¹ (the limit of an outer exponential wall).
        a_cm1: f64,
        /// B, cm⁻¹.
        b_cm1: f64,
        /// C, 1/Å (positive: decays outwards).
        c_per_angstrom: f64,
        /// Matching point r₀, Å.
        r0_angstrom: f64,
    },
    /// V = D − C_n/rⁿ − C_{n+2}/r^{n+2}.
    InversePower {
        /// Limit D, cm⁻¹.
        limit_cm1: f64,
        /// Power n.
        n: u32,
        /// C_n, cm⁻¹ Åⁿ.
        c_n: f64,
        /// C_{n+2}, cm⁻¹ Å^{n+2}.
        c_n2: f64,
    },
    /// V = V₀ + V′₀ (r − r₀) + ½ V″₀ (r − r₀)² (no dissociation limit).
    Quadratic {
        /// Matching point r₀, Å.
        r0_angstrom: f64,
        /// V₀, cm⁻¹.
        v0_cm1: f64,
        /// V′₀, cm⁻¹/Å.
        d1: f64,
        /// V″₀, cm⁻¹/Å².
        d2: f64,
    },
}

impl WallFit {
    /// Value and first derivative at r.
    pub fn eval(&self, r: f64) -> (f64, f64) {
        match *self {
            WallFit::Exponential {
                a_cm1,
                b_cm1,
                c_per_angstrom,
                r0_angstrom,
            } => {
                let e = b_cm1 * (-c_per_angstrom * (r - r0_angstrom)).exp();
                (a_cm1 + e, -c_per_angstrom * e)
            }
            WallFit::InversePower {
                limit_cm1,
                n,
                c_n,
                c_n2,
            } => {
                let p = r.powi(-(n as i32));
                let q = p / (r * r);
                (
                    limit_cm1 - c_n * p - c_n2 * q,
                    (n as f64 * c_n * p + (n as f64 + 2.0) * c_n2 * q) / r,
                )
            }
            WallFit::Quadratic {
                r0_angstrom,
                v0_cm1,
                d1,
                d2,
            } => {
                let x = r - r0_angstrom;
                (v0_cm1 + d1 * x + 0.5 * d2 * x * x, d1 + d2 * x)
            }
        }
    }

    /// The limit V(r → ∞) of an outer extension, `None` if it rises without bound.
    pub fn limit_cm1(&self) -> Option<f64> {
        match *self {
            WallFit::Exponential { a_cm1, .. } => Some(a_cm1),
            WallFit::InversePower { limit_cm1, .. } => Some(limit_cm1),
            WallFit::Quadratic { .. } => None,
        }
    }
}

/// Inner extension matched at (r₀, V, V′, V″); `bottom` is the well-bottom energy.
pub(crate) fn fit_inner(r0: f64, v: f64, d1: f64, d2: f64, bottom: f64) -> Result<WallFit> {
    if d1.is_nan() || d1 >= 0.0 {
        return Err(Error::numerical(
            "inner wall",
            format!(
                "the curve is not repulsive at its innermost point r = {r0} Å (slope {d1:.4e} \
                 cm⁻¹/Å); give points further inside the wall"
            ),
        ));
    }
    if d2 > 0.0 {
        let c = -d2 / d1;
        let b = d2 / (c * c);
        return Ok(WallFit::Exponential {
            a_cm1: v - b,
            b_cm1: b,
            c_per_angstrom: c,
            r0_angstrom: r0,
        });
    }
    let b = v - bottom;
    if b <= 0.0 {
        return Err(Error::numerical(
            "inner wall",
            "innermost point lies at the well bottom",
        ));
    }
    Ok(WallFit::Exponential {
        a_cm1: bottom,
        b_cm1: b,
        c_per_angstrom: -d1 / b,
        r0_angstrom: r0,
    })
}

/// Outer extension matched at (r_N, V, V′, V″).
pub(crate) fn fit_outer(choice: OuterWall, r0: f64, v: f64, d1: f64, d2: f64) -> Result<WallFit> {
    match choice {
        OuterWall::LongRange { limit_cm1, n, c_n } => {
            if !(1..=20).contains(&n) {
                return Err(Error::parameter(
                    "n",
                    format!("long-range power must be 1…20, got {n}"),
                ));
            }
            let delta = limit_cm1 - v;
            if delta.is_nan() || delta <= 0.0 {
                return Err(Error::parameter(
                    "limit",
                    format!(
                        "the limit {limit_cm1} cm⁻¹ must lie above the outermost point \
                         ({v} cm⁻¹ at r = {r0} Å)"
                    ),
                ));
            }
            let nf = n as f64;
            let (x, y) = match c_n {
                Some(c) => {
                    let x = c * r0.powi(-(n as i32));
                    (x, delta - x)
                }
                None => {
                    let x = ((nf + 2.0) * delta - r0 * d1) / 2.0;
                    (x, delta - x)
                }
            };
            Ok(WallFit::InversePower {
                limit_cm1,
                n,
                c_n: x * r0.powi(n as i32),
                c_n2: y * r0.powi(n as i32 + 2),
            })
        }
        OuterWall::Exponential {
            limit_cm1: Some(limit),
        } => {
            let delta = limit - v;
            if !(delta > 0.0 && d1 > 0.0) {
                return Err(Error::parameter(
                    "limit",
                    format!(
                        "an exponential approach to {limit} cm⁻¹ needs the curve to rise towards \
                         it at the outermost point (V = {v}, V′ = {d1:.4e} at r = {r0} Å)"
                    ),
                ));
            }
            Ok(WallFit::Exponential {
                a_cm1: limit,
                b_cm1: -delta,
                c_per_angstrom: d1 / delta,
                r0_angstrom: r0,
            })
        }
        OuterWall::Exponential { limit_cm1: None } | OuterWall::Automatic => {
            if d1 > 0.0 && d2 < 0.0 {
                let c = -d2 / d1;
                let b = d2 / (c * c);
                Ok(WallFit::Exponential {
                    a_cm1: v - b,
                    b_cm1: b,
                    c_per_angstrom: c,
                    r0_angstrom: r0,
                })
            } else if matches!(choice, OuterWall::Automatic) && d1 > 0.0 && d2 >= 0.0 {
                Ok(WallFit::Quadratic {
                    r0_angstrom: r0,
                    v0_cm1: v,
                    d1,
                    d2,
                })
            } else {
                Err(Error::numerical(
                    "outer wall",
                    format!(
                        "the curve does not level off at its outermost point r = {r0} Å \
                         (V′ = {d1:.4e}, V″ = {d2:.4e}); give the dissociation limit"
                    ),
                ))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: construction (value, slope and curvature of A + B e^{−C(r−r₀)} at r₀ are
    /// A + B, −BC, BC²); checked against the matched data. Tolerance 1e-9 relative.
    #[test]
    fn inner_exponential_matches_three_conditions() {
        let fit = fit_inner(2.0, 1000.0, -5000.0, 40_000.0, 0.0).unwrap();
        let (v, d1) = fit.eval(2.0);
        assert!((v - 1000.0).abs() < 1e-9 && (d1 + 5000.0).abs() < 1e-9);
        let h = 1e-4;
        let d2 = (fit.eval(2.0 + h).0 - 2.0 * v + fit.eval(2.0 - h).0) / (h * h);
        assert!((d2 - 40_000.0).abs() / 40_000.0 < 1e-5);
    }

    /// SOURCE: construction (D − C_n/rⁿ − C_{n+2}/r^{n+2} with value and slope matched).
    /// A pure C6 tail is recovered: C_8 = 0 (exactness of the two-term match). Tolerance 1e-9.
    #[test]
    fn long_range_tail_recovers_a_pure_c6() {
        let (c6, r0, d): (f64, f64, f64) = (4.0e6, 12.0, 0.0);
        let v = d - c6 / r0.powi(6);
        let d1 = 6.0 * c6 / r0.powi(7);
        let fit = fit_outer(
            OuterWall::LongRange {
                limit_cm1: d,
                n: 6,
                c_n: None,
            },
            r0,
            v,
            d1,
            0.0,
        )
        .unwrap();
        match fit {
            WallFit::InversePower { c_n, c_n2, .. } => {
                assert!((c_n - c6).abs() / c6 < 1e-9, "{c_n}");
                assert!(c_n2.abs() < 1e-9 * c6 * r0 * r0, "{c_n2}");
            }
            other => panic!("{other:?}"),
        }
    }

    /// Unusable ends are errors (common practice, no source).
    #[test]
    fn unusable_ends_are_errors() {
        assert!(fit_inner(2.0, 10.0, 5.0, 1.0, 0.0).is_err());
        assert!(
            fit_outer(
                OuterWall::Exponential { limit_cm1: None },
                5.0,
                10.0,
                1.0,
                1.0
            )
            .is_err()
        );
        assert!(
            fit_outer(
                OuterWall::LongRange {
                    limit_cm1: 5.0,
                    n: 6,
                    c_n: None
                },
                5.0,
                10.0,
                1.0,
                -1.0
            )
            .is_err()
        );
    }
}
