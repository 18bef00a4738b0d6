//! The standard normal restricted to an interval (a, b): the log of its probability,
//! accurate far in either tail, and exact draws by rejection (Robert 1995, "Simulation of
//! truncated normal variables", Statistics and Computing 5: uniform proposals for short
//! intervals, the translated-exponential proposal in a tail, plain normal draws for wide
//! intervals near the centre). Used by the interval-censored likelihood of data recorded at
//! a resolution (src/sampler/censored.rs).

use rand::Rng;
use statrs::function::erf::erfc;

use super::normal::{std_normal, LN_SQRT_2PI};

/// Beyond this many standard deviations the upper tail is taken from its asymptotic
/// series: ½ erfc(t/√2) is below 1e-260 there and would soon underflow.
const SERIES_FROM: f64 = 35.0;

/// ln Q(t), Q(t) = P(Z > t) = ½ erfc(t/√2), for any t (−∞ and +∞ included).
pub fn ln_upper_tail(t: f64) -> f64 {
    if t == f64::INFINITY {
        return f64::NEG_INFINITY;
    }
    if t < SERIES_FROM {
        return (0.5 * erfc(t * std::f64::consts::FRAC_1_SQRT_2)).ln();
    }
    ln_upper_tail_series(t)
}

/// Q(t) = φ(t)/t · (1 − 1/t² + 3/t⁴ − 15/t⁶ + …) (Abramowitz & Stegun 26.2.12); at t ≥ 30
/// the omitted terms are below 1e-12 relatively.
fn ln_upper_tail_series(t: f64) -> f64 {
    let t2 = t * t;
    let series = 1.0 - 1.0 / t2 + 3.0 / (t2 * t2) - 15.0 / (t2 * t2 * t2);
    -0.5 * t2 - t.ln() - LN_SQRT_2PI + series.ln()
}

/// ln P(a < Z < b) for a standard normal Z and a < b (either may be infinite), computed
/// from the tail on the interval's side so that intervals far out keep their digits.
pub fn ln_std_normal_interval(a: f64, b: f64) -> f64 {
    debug_assert!(a < b, "empty interval ({a}, {b})");
    if a >= 0.0 {
        // Q(a) − Q(b) = Q(a) (1 − Q(b)/Q(a)).
        let (la, lb) = (ln_upper_tail(a), ln_upper_tail(b));
        la + ln_one_minus_exp(lb - la)
    } else if b <= 0.0 {
        ln_std_normal_interval(-b, -a)
    } else {
        // Both tails outside: 1 − Q(−a) − Q(b), neither term near 1.
        (1.0 - ln_upper_tail(-a).exp() - ln_upper_tail(b).exp()).ln()
    }
}

/// E[Z] and E[Z²] of a standard normal Z given a < Z < b (either may be infinite):
/// E[Z] = (φ(a) − φ(b))/P, E[Z²] = 1 + (a φ(a) − b φ(b))/P with P = P(a < Z < b), a φ(a) = 0
/// at ±∞ (Johnson, Kotz & Balakrishnan 1994, §10.1). Each φ/P is taken from logarithms, so
/// intervals far in a tail keep their digits; the pair is kept consistent (E[Z] in (a, b),
/// E[Z²] ≥ E[Z]²) against the last bits of rounding.
pub fn truncated_std_normal_moments(a: f64, b: f64) -> (f64, f64) {
    let (_, m1, m2) = truncated_std_normal_summary(a, b);
    (m1, m2)
}

/// (ln P(a < Z < b), E[Z | a < Z < b], E[Z² | a < Z < b]) from one evaluation of the
/// interval's probability; see [`truncated_std_normal_moments`].
pub fn truncated_std_normal_summary(a: f64, b: f64) -> (f64, f64, f64) {
    debug_assert!(a < b, "empty interval ({a}, {b})");
    let ln_p = ln_std_normal_interval(a, b);
    let (m1, m2) = truncated_std_normal_moments_given(a, b, ln_p);
    (ln_p, m1, m2)
}

/// [`truncated_std_normal_moments`] when ln P(a < Z < b) is already known (`ln_p`, as
/// [`ln_std_normal_interval`] computes it).
pub fn truncated_std_normal_moments_given(a: f64, b: f64, ln_p: f64) -> (f64, f64) {
    // φ(t)/P and t φ(t)/P, both 0 at an infinite edge.
    let ratio = |t: f64| {
        if t.is_finite() {
            let r = (-0.5 * t * t - LN_SQRT_2PI - ln_p).exp();
            (r, t * r)
        } else {
            (0.0, 0.0)
        }
    };
    let (ra, tra) = ratio(a);
    let (rb, trb) = ratio(b);
    let m1 = (ra - rb).clamp(a, b);
    let m2 = (1.0 + tra - trb).max(m1 * m1);
    (m1, m2)
}

/// ln(1 − e^d) for d ≤ 0 without cancellation (Mächler 2012, "Accurately computing
/// log(1 − exp(−|a|))").
fn ln_one_minus_exp(d: f64) -> f64 {
    if d > -std::f64::consts::LN_2 {
        (-d.exp_m1()).ln()
    } else {
        (-d.exp()).ln_1p()
    }
}

/// One draw of Z ~ N(0, 1) given a < Z < b (a < b, either may be infinite).
pub fn truncated_std_normal<R: Rng + ?Sized>(a: f64, b: f64, rng: &mut R) -> f64 {
    debug_assert!(a < b, "empty interval ({a}, {b})");
    if b <= 0.0 {
        return -upper_side(-b, -a, rng);
    }
    if a >= 0.0 {
        return upper_side(a, b, rng);
    }
    // The interval holds 0: a short one by uniform proposals (acceptance at least about
    // 0.6 for width ≤ 2), a long one by plain normal draws (acceptance above 0.47).
    if b - a <= 2.0 {
        loop {
            let y = a + (b - a) * rng.random::<f64>();
            if rng.random::<f64>() < (-0.5 * y * y).exp() {
                return y;
            }
        }
    }
    loop {
        let y = std_normal(rng);
        if a < y && y < b {
            return y;
        }
    }
}

/// A draw on (a, b) with 0 ≤ a < b.
fn upper_side<R: Rng + ?Sized>(a: f64, b: f64, rng: &mut R) -> f64 {
    let w = b - a;
    if a < 0.5 && w > 0.5 {
        // Near the centre and wide: P(a < Z < b) ≥ P(0.5 < Z < 1) ≈ 0.15.
        loop {
            let y = std_normal(rng);
            if a < y && y < b {
                return y;
            }
        }
    }
    if w <= 1.0 && w * a <= 1.0 {
        // Short: uniform proposal, accepted with φ(y)/φ(a) = exp((a² − y²)/2) ≥ e^{−1.5}.
        loop {
            let y = a + w * rng.random::<f64>();
            if rng.random::<f64>() < (0.5 * (a - y) * (a + y)).exp() {
                return y;
            }
        }
    }
    // In the tail: translated exponential with Robert's optimal rate, then kept below b
    // (P(Z < b | Z > a) ≥ 1 − e^{−1/2} in this branch).
    let lambda = 0.5 * (a + (a * a + 4.0).sqrt());
    loop {
        let u: f64 = 1.0 - rng.random::<f64>(); // in (0, 1]
        let y = a - u.ln() / lambda;
        if y >= b {
            continue;
        }
        let d = y - lambda;
        if rng.random::<f64>() < (-0.5 * d * d).exp() {
            return y;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;
    use statrs::distribution::{ContinuousCDF, Normal};

    /// Kolmogorov–Smirnov distance between draws and the exact truncated CDF
    /// (Φ(y) − Φ(a)) / (Φ(b) − Φ(a)), computed here in log space from the tail.
    fn ks(a: f64, b: f64, n: usize, seed: u64) -> f64 {
        let mut rng = ChaCha8Rng::seed_from_u64(seed);
        let mut y: Vec<f64> = (0..n)
            .map(|_| truncated_std_normal(a, b, &mut rng))
            .collect();
        assert!(y.iter().all(|&v| a < v && v < b), "a draw left ({a}, {b})");
        y.sort_by(f64::total_cmp);
        let total = ln_std_normal_interval(a, b);
        let mut d: f64 = 0.0;
        for (i, &v) in y.iter().enumerate() {
            let f = (ln_std_normal_interval(a, v) - total).exp();
            d = d.max((f - i as f64 / n as f64).abs());
            d = d.max(((i + 1) as f64 / n as f64 - f).abs());
        }
        d
    }

    #[test]
    fn draws_follow_the_truncated_normal_in_every_branch() {
        // Critical value of the KS statistic at level 0.001 is 1.95/√n (Massey 1951 table,
        // from memory); n = 20 000 gives 0.0138. Each case names the branch it exercises.
        let cases = [
            (-0.3, 0.4),              // holds 0, short: uniform
            (-1.0, 3.0),              // holds 0, long: normal draws
            (f64::NEG_INFINITY, 0.7), // a half-line through 0
            (0.2, 2.5),               // near the centre, wide: normal draws
            (0.8, 1.1),               // short: uniform
            (2.0, f64::INFINITY),     // one-sided tail: exponential
            (6.0, 6.5),               // far tail, w·a > 1: exponential
            (30.0, 30.02),            // very far, short: uniform
            (-40.0, -38.0),           // mirrored far tail
        ];
        let crit = 1.95 / (20_000f64).sqrt();
        for (i, &(a, b)) in cases.iter().enumerate() {
            let d = ks(a, b, 20_000, 100 + i as u64);
            assert!(d < crit, "({a}, {b}): KS distance {d} above {crit}");
        }
    }

    #[test]
    fn a_wrong_truncation_is_detected_by_the_same_check() {
        // Draws from (0.8, 1.1) judged against (0.8, 1.3): the KS check must fail, or the
        // test above could not tell a sampler from a wrong one.
        let mut rng = ChaCha8Rng::seed_from_u64(5);
        let n = 20_000;
        let mut y: Vec<f64> = (0..n)
            .map(|_| truncated_std_normal(0.8, 1.1, &mut rng))
            .collect();
        y.sort_by(f64::total_cmp);
        let total = ln_std_normal_interval(0.8, 1.3);
        let d = y
            .iter()
            .enumerate()
            .map(|(i, &v)| {
                ((ln_std_normal_interval(0.8, v) - total).exp() - i as f64 / n as f64).abs()
            })
            .fold(0.0, f64::max);
        assert!(d > 0.1, "KS distance {d}");
    }

    #[test]
    fn interval_probabilities_match_statrs_and_keep_digits_in_the_tails() {
        // statrs' Normal CDF is the reference where the difference of CDFs loses nothing.
        let n = Normal::new(0.0, 1.0).unwrap();
        for &(a, b) in &[
            (-1.0, 1.0),
            (-3.0, -2.5),
            (0.1, 0.2),
            (1.0, 4.0),
            (-0.5, 8.0),
        ] {
            let want = (n.cdf(b) - n.cdf(a)).ln();
            let got = ln_std_normal_interval(a, b);
            assert!(
                (got - want).abs() < 1e-12 * want.abs().max(1.0),
                "({a},{b}) {got} vs {want}"
            );
        }
        // ln Q(t) against CPython 3.11's math.erfc (C libm), ln(½ erfc(t/√2)) printed at
        // full precision: t = 10 by erfc here, t = 36 and 37.5 by the series.
        for &(t, want) in &[
            (10.0, -53.23128515051246),
            (36.0, -652.5032275937983),
            (37.5, -707.668989317507),
        ] {
            let got = ln_std_normal_interval(t, f64::INFINITY);
            assert!(
                (got - want).abs() < 1e-11 * want.abs(),
                "t = {t}: {got} vs {want}"
            );
        }
        // Where the series takes over it agrees with erfc; and symmetry.
        for t in [30.0, SERIES_FROM] {
            let by_erfc = (0.5 * erfc(t / 2f64.sqrt())).ln();
            let by_series = ln_upper_tail_series(t);
            assert!(
                (by_erfc - by_series).abs() < 1e-11 * by_erfc.abs(),
                "{by_erfc} vs {by_series}"
            );
        }
        assert_eq!(
            ln_std_normal_interval(-3.0, -2.0),
            ln_std_normal_interval(2.0, 3.0)
        );
        // A narrow cell far in a tail is still finite and close to width · density.
        let (a, b): (f64, f64) = (50.0, 50.001);
        let approx = (b - a).ln() - 0.5 * a * a - LN_SQRT_2PI;
        assert!((ln_std_normal_interval(a, b) - approx).abs() < 0.03);
    }

    /// ∫_a^b g(z) φ(z) dz / P(a < Z < b) by composite Simpson's rule on 20 000 panels with
    /// statrs' normal density: the moments written out and integrated directly.
    fn integrated_moment(a: f64, b: f64, g: impl Fn(f64) -> f64) -> f64 {
        let n = Normal::new(0.0, 1.0).unwrap();
        let f = |z: f64| g(z) * statrs::distribution::Continuous::pdf(&n, z);
        let m = 20_000;
        let h = (b - a) / m as f64;
        let mut acc = f(a) + f(b);
        for i in 1..m {
            acc += f(a + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
        }
        acc * h / 3.0 / (n.cdf(b) - n.cdf(a))
    }

    #[test]
    fn moments_match_direct_integration() {
        // Infinite edges are integrated over ±12 sd, where the omitted mass is below 1e-32.
        for &(a, b) in &[
            (-0.3, 0.5),
            (0.2, 3.0),
            (-4.0, -2.5),
            (1.5, 1.6),
            (-1.0, f64::INFINITY),
            (f64::NEG_INFINITY, 0.7),
            (4.0, 6.0),
        ] {
            let (m1, m2) = truncated_std_normal_moments(a, b);
            let (lo, hi) = (a.max(-12.0), b.min(12.0));
            let e1 = integrated_moment(lo, hi, |z| z);
            let e2 = integrated_moment(lo, hi, |z| z * z);
            assert!((m1 - e1).abs() < 1e-9, "E[Z] on ({a}, {b}): {m1} vs {e1}");
            assert!((m2 - e2).abs() < 1e-9, "E[Z²] on ({a}, {b}): {m2} vs {e2}");
        }
    }

    #[test]
    fn moments_far_in_a_tail_keep_their_digits() {
        // Beyond 38 sd φ underflows, yet a narrow cell's mean must stay near its midpoint
        // and its variance near width²/12 (the uniform limit; common practice, no source).
        for &(a, w) in &[(40.0, 0.01), (-60.0, 0.02), (8.0, 0.001)] {
            let b = a + w;
            let (m1, m2) = truncated_std_normal_moments(a, b);
            let var = m2 - m1 * m1;
            assert!(m1 > a && m1 < b, "mean {m1} outside ({a}, {b})");
            // The density falls by e^{−a w} across the cell, pulling the mean below the
            // midpoint by about a w²/12.
            let mid = a + 0.5 * w;
            assert!(
                (m1 - mid).abs() < a.abs() * w * w / 6.0 + 1e-9,
                "mean {m1} vs {mid}"
            );
            assert!(
                var >= 0.0 && var < w * w / 12.0 * 1.5 + 1e-9,
                "variance {var}"
            );
        }
        // A half-line far out: E[Z | Z > t] ≈ t + 1/t (Mills' ratio, A&S 26.2.12).
        let (m1, _) = truncated_std_normal_moments(50.0, f64::INFINITY);
        assert!((m1 - (50.0 + 1.0 / 50.0)).abs() < 1e-4, "{m1}");
    }
}
