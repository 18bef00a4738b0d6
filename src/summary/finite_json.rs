//! How summary.json writes a number that may not fit a 64-bit float: a finite value as a
//! JSON number, anything else (an overflow to ±∞, or NaN from ∞ − ∞ further on) as the
//! string [`NOT_FINITE`], never as `null`. Features of the original scale can overflow
//! where the fitted scale does not: under `transform = "log"` a component with a large σ
//! has a log-normal mean e^(μ+σ²/2) beyond 1.8e308, and such a mean, its sd, a quantile
//! e^q, and the posterior summaries of those over draws are then written in words.

use serde::Serializer;

/// The words written for a value that is not a finite 64-bit float.
pub const NOT_FINITE: &str = "not finite";

/// `serialize_with` helper: finite `v` as a number, else [`NOT_FINITE`].
pub fn number_or_words<S: Serializer>(v: &f64, s: S) -> Result<S::Ok, S::Error> {
    if v.is_finite() {
        s.serialize_f64(*v)
    } else {
        s.serialize_str(NOT_FINITE)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[derive(serde::Serialize)]
    struct One(#[serde(serialize_with = "number_or_words")] f64);

    #[test]
    fn finite_is_a_number_and_the_rest_words() {
        let j = |v: f64| serde_json::to_string(&One(v)).unwrap();
        assert_eq!(j(1.5), "1.5");
        assert_eq!(j(f64::MAX), "1.7976931348623157e+308");
        assert_eq!(j(f64::INFINITY), "\"not finite\"");
        assert_eq!(j(f64::NEG_INFINITY), "\"not finite\"");
        assert_eq!(j(f64::NAN), "\"not finite\"");
    }
}
