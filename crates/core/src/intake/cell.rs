//! Reading one table cell as a number, as numbers appear in papers, spreadsheets and old tables.
//!
//! Accepted: `1234.5`, `-0.5`, `+3`, `1.2e3`, Fortran exponents `1.2D3`, the Unicode minus `−`,
//! digit groups separated by thin or no-break spaces (`36 118.07`), a decimal comma where the
//! delimiter is not a comma (`1234,5`), and a value with its uncertainty: `1234.567(12)`
//! (concise notation: σ = 0.012), `1234.5(1.2)` (σ = 1.2), `1234.5 ± 0.3`, `1234.5 +/- 0.3`.
//! A lone dash, `n/a`, `na`, `?` or an empty cell means "no value".

/// Why a cell is not a number.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum NumError {
    /// Empty, or a placeholder for "no value".
    Missing,
    /// Text that is not a number.
    NotANumber,
    /// NaN or infinity.
    NotFinite,
}

/// A number read from a cell, with the uncertainty written inside the cell, if any.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Number {
    pub value: f64,
    pub inline_sigma: Option<f64>,
    /// True when a decimal comma was read as a decimal point.
    pub decimal_comma: bool,
}

const PLACEHOLDERS: [&str; 9] = ["-", "—", "–", "−", "n/a", "na", "?", "...", "…"];

/// Characters trimmed around cells in addition to ASCII whitespace.
pub(crate) fn is_cell_space(c: char) -> bool {
    c.is_whitespace() || matches!(c, '\u{feff}' | '\u{200b}')
}

/// Parses a cell. `decimal_comma` allows `1234,5` (only when the delimiter is not a comma).
pub(crate) fn parse_number(cell: &str, decimal_comma: bool) -> Result<Number, NumError> {
    let t = cell.trim_matches(is_cell_space);
    if let Ok(v) = t.parse::<f64>() {
        return finite(Number {
            value: v,
            inline_sigma: None,
            decimal_comma: false,
        });
    }
    if t.is_empty() || PLACEHOLDERS.iter().any(|p| t.eq_ignore_ascii_case(p)) {
        return Err(NumError::Missing);
    }
    // value ± sigma
    for sep in ["±", "+/-", "+-"] {
        if let Some((a, b)) = t.split_once(sep) {
            let v = plain(a, decimal_comma)?;
            let s = plain(b, decimal_comma)?;
            return finite(Number {
                value: v.0,
                inline_sigma: Some(s.0),
                decimal_comma: v.1 || s.1,
            });
        }
    }
    // concise notation: mantissa(unc)[exponent]
    if let (Some(open), Some(close)) = (t.find('('), t.rfind(')'))
        && open < close
    {
        let mantissa = &t[..open];
        let inner = t[open + 1..close].trim();
        let exponent_text = t[close + 1..].trim();
        let (m, comma) = plain(mantissa, decimal_comma)?;
        let exponent: i32 = if exponent_text.is_empty() {
            0
        } else {
            let e = exponent_text.trim_start_matches(['e', 'E', 'd', 'D']);
            if e.len() == exponent_text.len() {
                return Err(NumError::NotANumber);
            }
            e.parse().map_err(|_| NumError::NotANumber)?
        };
        let scale = 10f64.powi(exponent);
        let sigma = if inner.contains(['.', ',']) {
            plain(inner, decimal_comma)?.0
        } else {
            if inner.is_empty() || !inner.chars().all(|c| c.is_ascii_digit()) {
                return Err(NumError::NotANumber);
            }
            let digits: f64 = inner.parse().map_err(|_| NumError::NotANumber)?;
            let m_clean = mantissa.trim().replace(',', ".");
            let mant = m_clean.split(['e', 'E']).next().unwrap_or("");
            let decimals = mant.split_once('.').map_or(0, |(_, frac)| frac.len());
            digits / 10f64.powi(decimals as i32)
        };
        return finite(Number {
            value: m * scale,
            inline_sigma: Some(sigma * scale),
            decimal_comma: comma,
        });
    }
    let (v, comma) = plain(t, decimal_comma)?;
    finite(Number {
        value: v,
        inline_sigma: None,
        decimal_comma: comma,
    })
}

fn finite(n: Number) -> Result<Number, NumError> {
    if n.value.is_finite() && n.inline_sigma.is_none_or(f64::is_finite) {
        Ok(n)
    } else {
        Err(NumError::NotFinite)
    }
}

/// A single number without uncertainty; returns the value and whether a decimal comma was read.
fn plain(text: &str, decimal_comma: bool) -> Result<(f64, bool), NumError> {
    let t = text.trim_matches(is_cell_space);
    if t.is_empty() {
        return Err(NumError::NotANumber);
    }
    if let Ok(v) = t.parse::<f64>() {
        return Ok((v, false));
    }
    let mut s: String = t
        .chars()
        .filter(|c| !matches!(c, '\u{2009}' | '\u{202f}' | '\u{a0}' | ' ' | '\u{2008}'))
        .map(|c| if matches!(c, '−' | '–') { '-' } else { c })
        .collect();
    let mut comma = false;
    if decimal_comma && s.matches(',').count() == 1 && !s.contains('.') {
        s = s.replace(',', ".");
        comma = true;
    }
    if let Ok(v) = s.parse::<f64>() {
        return Ok((v, comma));
    }
    // Fortran exponent: 1.23D+04
    if s.contains(['d', 'D']) && s.starts_with(|c: char| c.is_ascii_digit() || "+-.".contains(c)) {
        let e = s.replace(['d', 'D'], "e");
        if let Ok(v) = e.parse::<f64>() {
            return Ok((v, comma));
        }
    }
    Err(NumError::NotANumber)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn val(s: &str) -> (f64, Option<f64>) {
        let n = parse_number(s, true).unwrap_or_else(|e| panic!("{s}: {e:?}"));
        (n.value, n.inline_sigma)
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1.0)
    }

    /// SOURCE: concise uncertainty notation, e.g. 1234.567(12) = 1234.567 ± 0.012 [common
    /// practice, no source]; exact arithmetic on the written digits.
    #[test]
    fn forms() {
        assert_eq!(val("1234.5"), (1234.5, None));
        assert_eq!(val(" −0.5 "), (-0.5, None));
        assert_eq!(val("1.5D3"), (1500.0, None));
        assert_eq!(val("1234,5"), (1234.5, None));
        assert_eq!(val("36\u{2009}118.07"), (36118.07, None));
        let (v, s) = val("1234.567(12)");
        assert!(close(v, 1234.567) && close(s.expect("s"), 0.012));
        let (v, s) = val("1234.5(1.2)");
        assert!(close(v, 1234.5) && close(s.expect("s"), 1.2));
        let (v, s) = val("1.2345(12)e3");
        assert!(close(v, 1234.5) && close(s.expect("s"), 1.2));
        let (v, s) = val("1234.5 ± 0.3");
        assert!(close(v, 1234.5) && close(s.expect("s"), 0.3));
        let (v, s) = val("1234.5+/-0.3");
        assert!(close(v, 1234.5) && close(s.expect("s"), 0.3));
        let (v, s) = val("17(2)");
        assert!(close(v, 17.0) && close(s.expect("s"), 2.0));
    }

    #[test]
    fn refusals() {
        assert_eq!(parse_number("", true), Err(NumError::Missing));
        assert_eq!(parse_number("—", true), Err(NumError::Missing));
        assert_eq!(parse_number("n/a", true), Err(NumError::Missing));
        assert_eq!(parse_number("abc", true), Err(NumError::NotANumber));
        assert_eq!(parse_number("1234.5a", true), Err(NumError::NotANumber));
        assert_eq!(parse_number("1,234.5", true), Err(NumError::NotANumber));
        assert_eq!(parse_number("1234,5", false), Err(NumError::NotANumber));
        assert_eq!(parse_number("NaN", true), Err(NumError::NotFinite));
        assert_eq!(parse_number("-inf", true), Err(NumError::NotFinite));
        assert_eq!(parse_number("1(x)", true), Err(NumError::NotANumber));
        assert_eq!(parse_number("1(2)x", true), Err(NumError::NotANumber));
        assert_eq!(parse_number("1e999", true), Err(NumError::NotFinite));
    }
}
