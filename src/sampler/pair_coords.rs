//! Coordinates of a pair of components that separate what the data fix from what they
//! barely see: the pair's total weight, mean and variance (w, μ, σ²) and three shares
//! (u1, u2, u3) in (0, 1) (Richardson & Green 1997, "On Bayesian analysis of mixtures
//! with an unknown number of components", JRSS B 59:731–792, §3.2, their split move's
//! map). Component 1 is the one with the lower mean.
//!
//! w1 = u1 w, w2 = (1 − u1) w,
//! μ1 = μ − u2 σ √(w2/w1), μ2 = μ + u2 σ √(w1/w2),
//! σ1² = u3 (1 − u2²) σ² w/w1, σ2² = (1 − u3)(1 − u2²) σ² w/w2,
//!
//! which keeps w1 + w2 = w, w1 μ1 + w2 μ2 = w μ and w1(μ1² + σ1²) + w2(μ2² + σ2²) =
//! w(μ² + σ²). Its Jacobian is
//! |∂(w1, μ1, σ1², w2, μ2, σ2²)/∂(w, μ, σ², u1, u2, u3)| =
//! w |μ1 − μ2| σ1² σ2² / (u2 (1 − u2²) u3 (1 − u3) σ²)
//! (Richardson & Green 1997, §3.2; checked against finite differences in the tests).
//!
//! The shares are carried on the logit scale, t = ln(u/(1 − u)), as logarithms so that a
//! component with a weight of 1e-300 keeps its digits.

use crate::dist::log_add_exp;

/// One component: ln w, μ, σ².
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Component {
    pub log_w: f64,
    pub mu: f64,
    pub var: f64,
}

/// A pair's totals: ln w, μ, σ² of the two components taken together.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Totals {
    pub log_w: f64,
    pub mu: f64,
    pub var: f64,
}

/// ln(1 + e^x) without overflow.
fn softplus(x: f64) -> f64 {
    if x > 0.0 {
        x + (-x).exp().ln_1p()
    } else {
        x.exp().ln_1p()
    }
}

/// ln u and ln(1 − u) of u = 1/(1 + e^{−t}).
pub fn ln_shares(t: f64) -> (f64, f64) {
    (-softplus(-t), -softplus(t))
}

/// The totals and logit shares (t1, t2, t3) of a pair with `lower.mu < upper.mu`; `None`
/// when a share is 0 or 1 to the last bit (equal means, a weight or variance that
/// underflowed), where the pair has no coordinates of this kind.
pub fn to_coords(lower: Component, upper: Component) -> Option<(Totals, [f64; 3])> {
    let log_w = log_add_exp(lower.log_w, upper.log_w);
    // Shares of the weight, from logarithms: p1 = w1/w, p2 = w2/w.
    let (lp1, lp2) = (lower.log_w - log_w, upper.log_w - log_w);
    let (p1, p2) = (lp1.exp(), lp2.exp());
    let mu = p1 * lower.mu + p2 * upper.mu;
    let within = p1 * lower.var + p2 * upper.var;
    let gap = upper.mu - lower.mu;
    // σ² = Σ p σ² + p1 p2 (μ1 − μ2)², no cancellation.
    let between = (lp1 + lp2).exp() * gap * gap;
    let var = within + between;
    // u2² = p1 p2 (μ1 − μ2)² / σ², 1 − u2² = Σ p σ² / σ²; u3 = p1 σ1² / Σ p σ².
    let u2 = (between / var).sqrt();
    let t1 = lp1 - lp2;
    // t2 = ln u2 − ln(1 − u2), with ln(1 − u2) = ln(1 − u2²) − ln(1 + u2) near u2 = 1.
    let ln_1m_u2 = if u2 < 0.5 {
        (-u2).ln_1p()
    } else {
        (within / var).ln() - u2.ln_1p()
    };
    let t2 = u2.ln() - ln_1m_u2;
    let t3 = (lp1 + lower.var.ln()) - (lp2 + upper.var.ln());
    let coords = [t1, t2, t3];
    if gap.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater)
        || coords.iter().any(|t| !t.is_finite())
        || !var.is_finite()
    {
        return None;
    }
    Some((Totals { log_w, mu, var }, coords))
}

/// The pair (lower, upper) at logit shares `t` with totals `tot`, and the logarithm of the
/// Jacobian of the map from (w, μ, σ², u1, u2, u3), plus that of u ↦ t, so that
/// `ln π(pair) + ln_jacobian` is the log density of t given the totals.
pub fn from_coords(tot: Totals, t: [f64; 3]) -> (Component, Component, f64) {
    let (lu1, l1mu1) = ln_shares(t[0]);
    let (lu2, l1mu2) = ln_shares(t[1]);
    let (lu3, l1mu3) = ln_shares(t[2]);
    let u2 = lu2.exp();
    // ln(1 − u2²) = ln(1 − u2) + ln(1 + u2).
    let l1mu2sq = l1mu2 + u2.ln_1p();
    let sd = tot.var.sqrt();
    let ratio_12 = 0.5 * (l1mu1 - lu1); // ln √(w2/w1)
    let lower = Component {
        log_w: tot.log_w + lu1,
        mu: tot.mu - u2 * sd * ratio_12.exp(),
        var: (lu3 + l1mu2sq - lu1).exp() * tot.var,
    };
    let upper = Component {
        log_w: tot.log_w + l1mu1,
        mu: tot.mu + u2 * sd * (-ratio_12).exp(),
        var: (l1mu3 + l1mu2sq - l1mu1).exp() * tot.var,
    };
    // ln |J| = ln w + ln|μ1 − μ2| + ln σ1² + ln σ2² − ln u2 − ln(1 − u2²) − ln u3
    //          − ln(1 − u3) − ln σ², and du/dt = u(1 − u) for each share.
    let ln_j = tot.log_w + (upper.mu - lower.mu).abs().ln() + lower.var.ln() + upper.var.ln()
        - lu2
        - l1mu2sq
        - lu3
        - l1mu3
        - tot.var.ln()
        + (lu1 + l1mu1)
        + (lu2 + l1mu2)
        + (lu3 + l1mu3);
    (lower, upper, ln_j)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol * (1.0 + a.abs().max(b.abs()))
    }

    /// Coordinates and back give the pair again, and the totals are the pair's weight,
    /// mean and second moment (the identities of the map; common practice, no source).
    #[test]
    fn round_trip_keeps_the_pair_and_its_moments() {
        let cases = [
            (
                Component {
                    log_w: 0.3f64.ln(),
                    mu: -1.0,
                    var: 0.4,
                },
                Component {
                    log_w: 0.2f64.ln(),
                    mu: 0.5,
                    var: 1.3,
                },
            ),
            (
                Component {
                    log_w: -700.0,
                    mu: -3.0,
                    var: 2.0,
                },
                Component {
                    log_w: 0.9f64.ln(),
                    mu: 0.1,
                    var: 0.05,
                },
            ),
            (
                Component {
                    log_w: 0.45f64.ln(),
                    mu: 0.0,
                    var: 1.0,
                },
                Component {
                    log_w: 0.05f64.ln(),
                    mu: 1e-6,
                    var: 1.0,
                },
            ),
        ];
        for (a, b) in cases {
            let (tot, t) = to_coords(a, b).expect("coordinates");
            let (a2, b2, _) = from_coords(tot, t);
            for (x, y) in [(a, a2), (b, b2)] {
                assert!(close(x.log_w, y.log_w, 1e-9), "{x:?} {y:?}");
                assert!(close(x.mu, y.mu, 1e-8), "{x:?} {y:?}");
                assert!(close(x.var, y.var, 1e-8), "{x:?} {y:?}");
            }
            let (p1, p2) = ((a.log_w - tot.log_w).exp(), (b.log_w - tot.log_w).exp());
            assert!(close(p1 + p2, 1.0, 1e-12));
            assert!(close(p1 * a.mu + p2 * b.mu, tot.mu, 1e-12));
            let m2 = p1 * (a.mu * a.mu + a.var) + p2 * (b.mu * b.mu + b.var);
            assert!(close(m2, tot.mu * tot.mu + tot.var, 1e-12));
        }
    }

    /// Equal means have no coordinates of this kind.
    #[test]
    fn equal_means_have_no_coordinates() {
        let a = Component {
            log_w: -1.0,
            mu: 0.2,
            var: 1.0,
        };
        assert!(to_coords(a, a).is_none());
    }

    /// The map's Jacobian determinant against central finite differences of the map from
    /// (w, μ, σ², u1, u2, u3) to (w1, μ1, σ1², w2, μ2, σ2²) (Richardson & Green 1997, §3.2,
    /// from memory; the finite differences are the check).
    #[test]
    fn jacobian_matches_finite_differences() {
        let map = |p: [f64; 6]| -> [f64; 6] {
            let (w, mu, var) = (p[0], p[1], p[2]);
            let logit = |u: f64| (u / (1.0 - u)).ln();
            let tot = Totals {
                log_w: w.ln(),
                mu,
                var,
            };
            let (a, b, _) = from_coords(tot, [logit(p[3]), logit(p[4]), logit(p[5])]);
            [a.log_w.exp(), a.mu, a.var, b.log_w.exp(), b.mu, b.var]
        };
        for p in [
            [0.6f64, 0.3, 1.2, 0.3, 0.4, 0.7],
            [0.2, -1.0, 0.5, 0.8, 0.1, 0.2],
            [0.9, 2.0, 3.0, 0.5, 0.9, 0.5],
        ] {
            let mut jac = [[0.0f64; 6]; 6];
            for c in 0..6 {
                let h = 1e-6 * p[c].abs().max(1e-3);
                let (mut up, mut dn) = (p, p);
                up[c] += h;
                dn[c] -= h;
                let (fu, fd) = (map(up), map(dn));
                for r in 0..6 {
                    jac[r][c] = (fu[r] - fd[r]) / (2.0 * h);
                }
            }
            let numeric = det6(jac).abs();
            let (w, var, u1, u2, u3) = (p[0], p[2], p[3], p[4], p[5]);
            let logit = |u: f64| (u / (1.0 - u)).ln();
            let tot = Totals {
                log_w: w.ln(),
                mu: p[1],
                var,
            };
            let (a, b, ln_j) = from_coords(tot, [logit(u1), logit(u2), logit(u3)]);
            let formula = w * (a.mu - b.mu).abs() * a.var * b.var
                / (u2 * (1.0 - u2 * u2) * u3 * (1.0 - u3) * var);
            assert!(close(numeric, formula, 1e-5), "{numeric} against {formula}");
            // ln_jacobian adds ln(u(1 − u)) for each share's logit.
            let dudt: f64 = [u1, u2, u3].iter().map(|u| (u * (1.0 - u)).ln()).sum();
            assert!(close(ln_j, formula.ln() + dudt, 1e-9));
        }
    }

    /// Determinant by Gaussian elimination with partial pivoting.
    fn det6(mut m: [[f64; 6]; 6]) -> f64 {
        let mut det = 1.0;
        for c in 0..6 {
            let p = (c..6)
                .max_by(|&i, &j| m[i][c].abs().total_cmp(&m[j][c].abs()))
                .expect("rows");
            if p != c {
                m.swap(p, c);
                det = -det;
            }
            det *= m[c][c];
            let pivot = m[c];
            for row in m.iter_mut().skip(c + 1) {
                let f = row[c] / pivot[c];
                for (x, p) in row.iter_mut().zip(pivot).skip(c) {
                    *x -= f * p;
                }
            }
        }
        det
    }
}
