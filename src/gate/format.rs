//! Number formatting for the diagnostics table and the failure sentences (the JSON keeps
//! full precision). An unbounded R-hat (`RHAT_UNBOUNDED`) reads "unbounded".

use crate::diagnostics::RHAT_UNBOUNDED;

/// R-hat with four decimals, "unbounded" for [`RHAT_UNBOUNDED`], "n/a" when missing.
pub fn fmt_rhat(v: Option<f64>) -> String {
    match v {
        None => "n/a".into(),
        Some(r) if r >= RHAT_UNBOUNDED => "unbounded".into(),
        Some(r) => format!("{r:.4}"),
    }
}

/// ESS rounded to a whole number of draws, "n/a" when missing.
pub fn fmt_ess(v: Option<f64>) -> String {
    match v {
        None => "n/a".into(),
        Some(e) => format!("{e:.0}"),
    }
}

/// Three significant digits: plain for moderate magnitudes, exponent form otherwise.
pub fn fmt_sig(v: Option<f64>) -> String {
    match v {
        None => "n/a".into(),
        Some(0.0) => "0".into(),
        Some(x) if (1e-3..1e5).contains(&x.abs()) => {
            let digits = (2 - x.abs().log10().floor() as i32).max(0) as usize;
            format!("{x:.digits$}")
        }
        Some(x) => format!("{x:.2e}"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formats() {
        assert_eq!(fmt_rhat(Some(RHAT_UNBOUNDED)), "unbounded");
        assert_eq!(fmt_rhat(Some(1.00456)), "1.0046");
        assert_eq!(fmt_rhat(None), "n/a");
        assert_eq!(fmt_ess(Some(399.6)), "400");
        assert_eq!(fmt_sig(Some(0.012345)), "0.0123");
        assert_eq!(fmt_sig(Some(123.45)), "123");
        assert_eq!(fmt_sig(Some(1.5e-7)), "1.50e-7");
        assert_eq!(fmt_sig(Some(0.0)), "0");
    }
}
