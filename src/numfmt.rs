//! Number formatting for every file mixband writes: shortest text that reads back to the
//! same `f64` bit for bit, so a store can be re-read, resumed or merged without drift.

/// Shortest round-trip decimal text of `v`; plain notation for moderate magnitudes,
/// exponent notation outside [1e-3, 1e15). Non-finite values are a caller bug.
pub fn fmt_f64(v: f64) -> String {
    debug_assert!(v.is_finite(), "non-finite value reached a file");
    let a = v.abs();
    if a == 0.0 || (1e-3..1e15).contains(&a) {
        format!("{v}")
    } else {
        format!("{v:e}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn round_trips_exactly() {
        let vals = [
            0.1,
            1.0 / 3.0,
            -2.5e-300,
            f64::MAX,
            5e-324,
            123456.789,
            1e16,
            1e16 - 2.0, // the largest double below 1e16
            0.00123,
            8.589414949426111e-5,
            -0.0,
        ];
        for v in vals {
            let s = fmt_f64(v);
            let back: f64 = s.parse().unwrap();
            assert_eq!(back.to_bits(), v.to_bits(), "{v} -> {s}");
        }
        assert_eq!(fmt_f64(1e-300), "1e-300");
        assert_eq!(fmt_f64(0.5), "0.5");
        assert_eq!(fmt_f64(8.5e-5), "8.5e-5");
    }
}
