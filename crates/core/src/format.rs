//! Numbers for people: a value with its uncertainty, rounded the way results are quoted.
//!
//! The uncertainty keeps two significant digits and the value is rounded to the same decimal
//! place (common practice in spectroscopy, no source); `1234.5678 ± 0.0123` reads
//! `1234.568 ± 0.012`. Used by the text report, the page's tables and the CSV exports, so every
//! output quotes a number the same way.

/// Value and σ rounded together, as two strings; without σ the value gets `fallback_digits`
/// significant digits. Non-finite input gives `"—"`.
pub fn value_sigma(
    value: f64,
    sigma: Option<f64>,
    fallback_digits: usize,
) -> (String, Option<String>) {
    if !value.is_finite() {
        return ("—".into(), None);
    }
    match sigma.filter(|s| s.is_finite() && *s > 0.0) {
        Some(s) => {
            // Decimal place of the second significant digit of σ.
            let exp = s.log10().floor() as i32;
            let decimals = 1 - exp;
            if decimals >= 0 {
                let d = decimals as usize;
                (format!("{value:.d$}"), Some(format!("{s:.d$}")))
            } else {
                // σ ≥ 100: round both to tens, hundreds, … and print as integers.
                let q = 10f64.powi(-decimals);
                (
                    format!("{:.0}", (value / q).round() * q),
                    Some(format!("{:.0}", (s / q).round() * q)),
                )
            }
        }
        None => (significant(value, fallback_digits.max(1)), None),
    }
}

/// `value` with `digits` significant digits, in plain notation for 1e-4 ≤ |value| < 1e9.
pub fn significant(value: f64, digits: usize) -> String {
    if !value.is_finite() {
        return "—".into();
    }
    if value == 0.0 {
        return "0".into();
    }
    let exp = value.abs().log10().floor() as i32;
    if !(-4..9).contains(&exp) {
        return format!("{:.*e}", digits.saturating_sub(1), value);
    }
    let decimals = digits as i32 - 1 - exp;
    if decimals >= 0 {
        let d = decimals as usize;
        format!("{value:.d$}")
    } else {
        let q = 10f64.powi(-decimals);
        format!("{:.0}", (value / q).round() * q)
    }
}

/// `value ± sigma` in one string (see [`value_sigma`]).
pub fn pm(value: f64, sigma: Option<f64>, fallback_digits: usize) -> String {
    match value_sigma(value, sigma, fallback_digits) {
        (v, Some(s)) => format!("{v} ± {s}"),
        (v, None) => v,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Rounding rule (common practice, no source): two significant digits of σ.
    #[test]
    fn rounds_to_two_digits_of_sigma() {
        assert_eq!(pm(1234.5678, Some(0.0123), 6), "1234.568 ± 0.012");
        assert_eq!(pm(4392.244, Some(1.937), 6), "4392.2 ± 1.9");
        assert_eq!(pm(4392.244, Some(16.535), 6), "4392 ± 17");
        assert_eq!(pm(123456.0, Some(1234.0), 6), "123500 ± 1200");
        assert_eq!(pm(0.5, None, 3), "0.500");
        assert_eq!(pm(f64::NAN, Some(1.0), 3), "—");
        assert_eq!(significant(6.8206536e6, 4), "6821000");
        assert_eq!(significant(2.069e98, 4), "2.069e98");
    }
}
