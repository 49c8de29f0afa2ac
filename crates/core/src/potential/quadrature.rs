//! Gauss–Legendre quadrature nodes and weights on [−1, 1].
//!
//! Nodes are the roots of P_n found by Newton's method from the classical cosine estimate,
//! P_n and P_n′ by the three-term recurrence; weights 2/((1 − x²) P_n′(x)²) (Abramowitz &
//! Stegun 25.4.29, from memory). Accurate to a few ulp for n up to several hundred.

/// Nodes and weights of the n-point Gauss–Legendre rule (ascending nodes).
pub(crate) fn gauss_legendre(n: usize) -> (Vec<f64>, Vec<f64>) {
    let mut x = vec![0.0; n];
    let mut w = vec![0.0; n];
    let nf = n as f64;
    for i in 0..n.div_ceil(2) {
        let mut z = (std::f64::consts::PI * (i as f64 + 0.75) / (nf + 0.5)).cos();
        let mut dp = 1.0;
        for _ in 0..100 {
            let (p, d) = legendre(n, z);
            dp = d;
            let dz = p / d;
            z -= dz;
            if dz.abs() < 1e-16 {
                break;
            }
        }
        let (_, d) = legendre(n, z);
        if d.is_finite() {
            dp = d;
        }
        x[i] = -z;
        x[n - 1 - i] = z;
        let wi = 2.0 / ((1.0 - z * z) * dp * dp);
        w[i] = wi;
        w[n - 1 - i] = wi;
    }
    (x, w)
}

/// P_n(z) and P_n′(z).
fn legendre(n: usize, z: f64) -> (f64, f64) {
    let (mut p0, mut p1) = (1.0, z);
    if n == 0 {
        return (1.0, 0.0);
    }
    for k in 2..=n {
        let kf = k as f64;
        let p2 = ((2.0 * kf - 1.0) * z * p1 - (kf - 1.0) * p0) / kf;
        p0 = p1;
        p1 = p2;
    }
    let d = n as f64 * (z * p1 - p0) / (z * z - 1.0);
    (p1, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// SOURCE: an n-point Gauss rule integrates polynomials of degree ≤ 2n − 1 exactly
    /// (∫₋₁¹ x^k dx = 2/(k+1) for even k); ∫₋₁¹ eˣ dx = e − 1/e. Tolerance 1e-14.
    #[test]
    fn integrates_polynomials_and_exp() {
        for n in [1usize, 2, 5, 20, 64, 200] {
            let (x, w) = gauss_legendre(n);
            let deg = (2 * n - 1).min(30);
            for k in (0..=deg).step_by(2) {
                let s: f64 = x.iter().zip(&w).map(|(x, w)| w * x.powi(k as i32)).sum();
                assert!(
                    (s - 2.0 / (k as f64 + 1.0)).abs() < 1e-13,
                    "n={n} k={k} {s}"
                );
            }
            if n >= 10 {
                let s: f64 = x.iter().zip(&w).map(|(x, w)| w * x.exp()).sum();
                let e = std::f64::consts::E;
                assert!((s - (e - 1.0 / e)).abs() < 1e-14, "n={n}");
            }
        }
    }
}
