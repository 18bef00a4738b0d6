//! How many draws a failing run is projected to need, for the gate's advice and for
//! growing a run (src/run/grow.rs). For chains that mix, bulk and tail ESS grow in
//! proportion to the draws and R-hat² − 1 shrinks in inverse proportion (the between-chain
//! variance of the chain means falls as one over the draws); common practice, no source.

/// Extra draws beyond the projection, for the noise in the figures it starts from.
pub const MARGIN: f64 = 1.2;

/// How many times the draws must grow for an ESS of `ess` to reach `min_ess` (at least
/// one; an ESS below one counts as one).
pub fn ess_factor(ess: f64, min_ess: f64) -> f64 {
    (min_ess / ess.max(1.0)).max(1.0)
}

/// How many times the draws must grow for an R-hat of `rhat` to fall to `limit`.
pub fn rhat_factor(rhat: f64, limit: f64) -> f64 {
    ((rhat * rhat - 1.0) / (limit * limit - 1.0)).max(1.0)
}

/// `draws` grown `factor` times with the [`MARGIN`], rounded up to a hundred.
pub fn projected_draws(draws: usize, factor: f64) -> usize {
    ((draws as f64 * factor * MARGIN / 100.0).ceil() * 100.0).min(1e12) as usize
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn factors_and_rounding() {
        assert_eq!(ess_factor(200.0, 400.0), 2.0);
        assert_eq!(ess_factor(800.0, 400.0), 1.0);
        assert_eq!(ess_factor(0.0, 400.0), 400.0);
        // (1.02² − 1)/(1.01² − 1) = 0.0404/0.0201.
        assert!((rhat_factor(1.02, 1.01) - 0.0404 / 0.0201).abs() < 1e-12);
        // 3000 × 2 × 1.2 = 7200; 1000 × 400/142 × 1.2 = 3380.3 → 3400.
        assert_eq!(projected_draws(3000, 2.0), 7200);
        assert_eq!(projected_draws(1000, 400.0 / 142.0), 3400);
    }
}
