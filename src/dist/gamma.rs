//! Gamma draws by Marsaglia & Tsang (2000), "A simple method for generating gamma
//! variables", returned as logarithms so that shapes far below 1 cannot underflow to zero.

use rand::Rng;

use super::normal::std_normal;

/// Uniform on (0, 1]: never zero, so its logarithm is finite.
fn open_unit<R: Rng + ?Sized>(rng: &mut R) -> f64 {
    1.0 - rng.random::<f64>()
}

/// Logarithm of a Gamma(`shape`, rate 1) draw. `shape` must be positive and finite.
///
/// For shape ≥ 1 Marsaglia–Tsang squeeze/rejection; for shape < 1 the boost
/// G(a) = G(a + 1)·U^{1/a} (same paper, §6), applied as log G(a + 1) + ln(U)/a.
pub fn log_gamma<R: Rng + ?Sized>(shape: f64, rng: &mut R) -> f64 {
    debug_assert!(shape > 0.0 && shape.is_finite(), "gamma shape {shape}");
    if shape < 1.0 {
        let boosted = log_gamma(shape + 1.0, rng);
        return boosted + open_unit(rng).ln() / shape;
    }
    let d = shape - 1.0 / 3.0;
    let c = 1.0 / (9.0 * d).sqrt();
    loop {
        let x = std_normal(rng);
        let t = 1.0 + c * x;
        if t <= 0.0 {
            continue;
        }
        let v = t * t * t;
        let u = open_unit(rng);
        let x2 = x * x;
        if u < 1.0 - 0.0331 * x2 * x2 || u.ln() < 0.5 * x2 + d * (1.0 - v + v.ln()) {
            return d.ln() + v.ln();
        }
    }
}

/// Gamma(`shape`, `rate`) draw on the linear scale (use when the result cannot be tiny).
pub fn gamma_rate<R: Rng + ?Sized>(shape: f64, rate: f64, rng: &mut R) -> f64 {
    (log_gamma(shape, rng) - rate.ln()).exp()
}

/// Inverse-Gamma(`shape`, `scale`) draw: `scale / G` with G ~ Gamma(shape, 1), computed as
/// exp(ln scale − ln G) so that a tiny G gives a large finite value rather than infinity
/// wherever the result is representable.
pub fn inv_gamma<R: Rng + ?Sized>(shape: f64, scale: f64, rng: &mut R) -> f64 {
    (scale.ln() - log_gamma(shape, rng)).exp()
}
