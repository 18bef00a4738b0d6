//! The bumps of one draw's density: its modes on the grid (the rule of
//! [`super::modes`]: interior local maxima whose prominence is at least 1% of the draw's
//! highest grid value), each located more finely than the grid, and the lowest point
//! between each pair of neighbouring modes.
//!
//! A mode found at grid point i (or on the plateau i..=j) lies between grid points i − 1
//! and j + 1, where the curve is lower; its location is refined there by golden-section
//! search on the draw's density itself (Kiefer 1953; common practice, no source), to
//! about 1e-9 of the grid step. Its height is the density there, and its prominence the
//! height above the base the grid rule found (the higher of the lowest points met walking
//! left and right until higher ground). The lowest point between two neighbouring modes
//! is the grid minimum between them, refined the same way. Per draw this keeps five
//! numbers a bump, never the curve.

use super::modes::peaks;

/// Golden-section iterations: the bracket (two grid steps) shrinks by 0.618 each, so 45
/// leave about 1e-9 of it.
const GOLDEN_STEPS: usize = 45;

/// One bump of one draw. `dip_location` and `dip_height` describe the lowest point between
/// this bump and the previous bump of the same draw; for a draw's first bump they repeat
/// its own location and height.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DrawBump {
    pub location: f64,
    pub height: f64,
    pub prominence: f64,
    pub dip_location: f64,
    pub dip_height: f64,
}

/// The bumps of a draw whose density on `grid` is `curve` (evenly spaced, as from
/// [`super::linspace`]); `density` evaluates the same density anywhere on the grid's span.
pub fn draw_bumps(curve: &[f64], grid: &[f64], density: impl Fn(f64) -> f64) -> Vec<DrawBump> {
    let found = peaks(curve);
    let mut out: Vec<DrawBump> = Vec::with_capacity(found.len());
    for (k, p) in found.iter().enumerate() {
        let (a, b) = (p.first, p.last);
        let (location, height) = refine(grid[a - 1], grid[b + 1], (grid[a], curve[a]), |x| {
            density(x)
        });
        let base = curve[a] - p.prominence;
        let (dip_location, dip_height) = if k == 0 {
            (location, height)
        } else {
            let prev = found[k - 1].last;
            // The first lowest grid point strictly between the two plateaus.
            let mut j = prev + 1;
            for i in prev + 1..a {
                if curve[i] < curve[j] {
                    j = i;
                }
            }
            let (x, negf) = refine(grid[j - 1], grid[j + 1], (grid[j], -curve[j]), |x| {
                -density(x)
            });
            (x, -negf)
        };
        out.push(DrawBump {
            location,
            height,
            prominence: (height - base).max(0.0),
            dip_location,
            dip_height: dip_height.max(0.0),
        });
    }
    out
}

/// The highest point of `f` found by golden-section search on [lo, hi], never lower than
/// the starting point `start` = (x, f(x)).
fn refine(mut lo: f64, mut hi: f64, start: (f64, f64), f: impl Fn(f64) -> f64) -> (f64, f64) {
    const R: f64 = 0.618_033_988_749_894_9; // (√5 − 1) / 2
    let mut best = start;
    let mut c = hi - R * (hi - lo);
    let mut d = lo + R * (hi - lo);
    let (mut fc, mut fd) = (f(c), f(d));
    for _ in 0..GOLDEN_STEPS {
        if fc >= fd {
            hi = d;
            d = c;
            fd = fc;
            c = hi - R * (hi - lo);
            fc = f(c);
        } else {
            lo = c;
            c = d;
            fc = fd;
            d = lo + R * (hi - lo);
            fd = f(d);
        }
    }
    for (x, v) in [(c, fc), (d, fd)] {
        if v > best.1 {
            best = (x, v);
        }
    }
    best
}

#[cfg(test)]
mod tests {
    use super::*;
    use statrs::distribution::{Continuous, Normal};

    fn mix(x: f64) -> f64 {
        0.6 * Normal::new(0.0, 1.0).unwrap().pdf(x) + 0.4 * Normal::new(4.0, 0.7).unwrap().pdf(x)
    }

    #[test]
    fn a_single_normal_peaks_at_its_mean_between_grid_points() {
        // N(0.123, 1) has its mode at 0.123 and height 1/√(2π) (the normal density; common
        // practice, no source); the grid has no point there.
        let n = Normal::new(0.123, 1.0).unwrap();
        let g = crate::summary::linspace(-5.0, 5.0, 41);
        let curve: Vec<f64> = g.iter().map(|&x| n.pdf(x)).collect();
        let b = draw_bumps(&curve, &g, |x| n.pdf(x));
        assert_eq!(b.len(), 1);
        assert!((b[0].location - 0.123).abs() < 1e-6, "{}", b[0].location);
        let top = 1.0 / (2.0 * std::f64::consts::PI).sqrt();
        assert!((b[0].height - top).abs() < 1e-12);
        // Its base is the lower grid end: prominence is the height minus the larger of the
        // two ends' values.
        assert!((b[0].prominence - (top - curve[0].max(curve[40]))).abs() < 1e-12);
    }

    #[test]
    fn two_bumps_and_their_dip_match_root_finding_on_the_derivative() {
        // The modes and the antimode of 0.6 N(0,1) + 0.4 N(4, 0.7²) are the zeros of its
        // derivative; found here independently by bisection on a finite difference of
        // statrs' pdf (common practice, no source).
        let g = crate::summary::linspace(-4.0, 8.0, 61);
        let curve: Vec<f64> = g.iter().map(|&x| mix(x)).collect();
        let b = draw_bumps(&curve, &g, mix);
        assert_eq!(b.len(), 2);
        let slope = |x: f64| (mix(x + 1e-7) - mix(x - 1e-7)) / 2e-7;
        let root = |mut lo: f64, mut hi: f64| {
            for _ in 0..200 {
                let m = 0.5 * (lo + hi);
                if (slope(m) > 0.0) == (slope(lo) > 0.0) {
                    lo = m
                } else {
                    hi = m
                }
            }
            0.5 * (lo + hi)
        };
        let (m1, anti, m2) = (root(-1.0, 1.0), root(1.5, 3.5), root(3.5, 4.5));
        assert!((b[0].location - m1).abs() < 1e-6, "{} {m1}", b[0].location);
        assert!((b[1].location - m2).abs() < 1e-6, "{} {m2}", b[1].location);
        assert!((b[1].dip_location - anti).abs() < 1e-6);
        assert!((b[1].dip_height - mix(anti)).abs() < 1e-12);
        assert_eq!(b[0].dip_location, b[0].location);
    }
}
