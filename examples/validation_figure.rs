//! The benchmark figure of docs/validation.md: Marron & Wand (1992) density #6 (bimodal),
//! one simulated sample of n = 500 (seed 1992), fitted with the validation settings
//! (defaults with Dirichlet δ = 0.1, 2 chains × 1000 + 1000 sweeps). Draws the true density,
//! the posterior mean, the pointwise 95% band and the Gaussian kernel estimate at
//! Silverman's bandwidth, as a hand-written SVG (no plotting dependency).
//!
//!     cargo run --release --example validation_figure [-- OUT.svg]
//!
//! Default output: docs/img/validation-bimodal.svg. Also prints the ISE of both estimates
//! and the band's pointwise coverage for the caption.

#[path = "../tests/validation_support/mod.rs"]
mod validation_support;

use std::fmt::Write;

use mixband::sampler::ChainPlan;
use validation_support::marron_wand::{marron_wand, sample, true_density};
use validation_support::{fit_with_defaults, ise, kde, linspace, silverman_bandwidth};

const W: f64 = 820.0;
const H: f64 = 500.0;
const L: f64 = 70.0;
const R: f64 = 20.0;
const T: f64 = 40.0;
const B: f64 = 60.0;

struct Axes {
    x0: f64,
    x1: f64,
    y1: f64,
}

impl Axes {
    fn px(&self, x: f64) -> f64 {
        L + (x - self.x0) / (self.x1 - self.x0) * (W - L - R)
    }
    fn py(&self, y: f64) -> f64 {
        H - B - y / self.y1 * (H - T - B)
    }
    fn path(&self, xs: &[f64], ys: &[f64]) -> String {
        let mut s = String::new();
        for (i, (x, y)) in xs.iter().zip(ys).enumerate() {
            let _ = write!(
                s,
                "{}{:.2},{:.2} ",
                if i == 0 { "M" } else { "L" },
                self.px(*x),
                self.py(*y)
            );
        }
        s
    }
}

fn main() {
    let out = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "docs/img/validation-bimodal.svg".into());
    let comps = marron_wand("6_bimodal");
    let x = sample(&comps, 500, 1992);
    let grid = linspace(-3.5, 3.5, 701);
    let truth: Vec<f64> = grid.iter().map(|&v| true_density(&comps, v)).collect();
    let post = fit_with_defaults(
        &x,
        "",
        1992,
        2,
        ChainPlan {
            warmup: 1000,
            draws: 1000,
            thin: 1,
        },
        &grid,
    );
    let mean = post.mean();
    let (lo, hi) = post.band(0.95);
    let h = silverman_bandwidth(&x);
    let k = kde(&x, h, &grid);
    let cover = (0..grid.len())
        .filter(|&i| lo[i] <= truth[i] && truth[i] <= hi[i])
        .count() as f64
        / grid.len() as f64;
    println!(
        "ISE posterior mean {:.5}, ISE KDE (h = {h:.4}) {:.5}, 95% band pointwise coverage {cover:.3}",
        ise(&grid, &mean, &truth),
        ise(&grid, &k, &truth)
    );

    let ax = Axes {
        x0: -3.5,
        x1: 3.5,
        y1: 0.4,
    };
    let mut s = String::new();
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{W}" height="{H}" viewBox="0 0 {W} {H}" font-family="sans-serif" font-size="13">"#
    );
    let _ = writeln!(s, r#"<rect width="{W}" height="{H}" fill="white"/>"#);
    let _ = writeln!(
        s,
        r#"<text x="{}" y="24" text-anchor="middle" font-size="15">Marron &amp; Wand density #6 (bimodal), n = 500: posterior mean, 95% pointwise band and Silverman KDE</text>"#,
        W / 2.0
    );
    // Band polygon.
    let mut band = ax.path(&grid, &hi);
    for i in (0..grid.len()).rev() {
        let _ = write!(band, "L{:.2},{:.2} ", ax.px(grid[i]), ax.py(lo[i]));
    }
    let _ = writeln!(
        s,
        r##"<path d="{band}Z" fill="#9ecae1" fill-opacity="0.6" stroke="none"/>"##
    );
    // Axes and ticks.
    let (bx, by) = (ax.py(0.0), ax.px(-3.5));
    let _ = writeln!(
        s,
        r#"<line x1="{L}" y1="{bx}" x2="{}" y2="{bx}" stroke="black"/>"#,
        W - R
    );
    let _ = writeln!(
        s,
        r#"<line x1="{by}" y1="{T}" x2="{by}" y2="{bx}" stroke="black"/>"#
    );
    for t in -3..=3 {
        let p = ax.px(t as f64);
        let _ = writeln!(
            s,
            r#"<line x1="{p}" y1="{bx}" x2="{p}" y2="{}" stroke="black"/><text x="{p}" y="{}" text-anchor="middle">{t}</text>"#,
            bx + 5.0,
            bx + 20.0
        );
    }
    for i in 0..=4 {
        let v = 0.1 * i as f64;
        let p = ax.py(v);
        let _ = writeln!(
            s,
            r#"<line x1="{}" y1="{p}" x2="{by}" y2="{p}" stroke="black"/><text x="{}" y="{}" text-anchor="end">{v:.1}</text>"#,
            by - 5.0,
            by - 8.0,
            p + 4.0
        );
    }
    let _ = writeln!(
        s,
        r#"<text x="{}" y="{}" text-anchor="middle">x</text>"#,
        (L + W - R) / 2.0,
        H - 18.0
    );
    let _ = writeln!(
        s,
        r#"<text x="18" y="{}" text-anchor="middle" transform="rotate(-90 18 {})">density</text>"#,
        (T + H - B) / 2.0,
        (T + H - B) / 2.0
    );
    // Curves.
    let curves = [
        (&truth, "black", "2.2", "", "true density"),
        (&mean, "#08519c", "2.2", "", "posterior mean"),
        (
            &k,
            "#d95f02",
            "1.8",
            r#" stroke-dasharray="7,4""#,
            "KDE, Silverman bandwidth",
        ),
    ];
    for (ys, col, wdt, dash, _) in &curves {
        let _ = writeln!(
            s,
            r#"<path d="{}" fill="none" stroke="{col}" stroke-width="{wdt}"{dash}/>"#,
            ax.path(&grid, ys)
        );
    }
    // Rug of the first 200 observations.
    for v in x.iter().take(200) {
        let p = ax.px(*v);
        let _ = writeln!(
            s,
            r##"<line x1="{p:.2}" y1="{bx}" x2="{p:.2}" y2="{}" stroke="#555" stroke-width="0.5"/>"##,
            bx - 6.0
        );
    }
    // Legend.
    let (lx, mut ly) = (L + 15.0, T + 20.0);
    let _ = writeln!(
        s,
        r##"<rect x="{lx}" y="{}" width="26" height="12" fill="#9ecae1" fill-opacity="0.6"/><text x="{}" y="{}">95% pointwise credible band</text>"##,
        ly - 10.0,
        lx + 34.0,
        ly
    );
    for (_, col, wdt, dash, label) in &curves {
        ly += 20.0;
        let _ = writeln!(
            s,
            r#"<line x1="{lx}" y1="{}" x2="{}" y2="{}" stroke="{col}" stroke-width="{wdt}"{dash}/><text x="{}" y="{}">{label}</text>"#,
            ly - 4.0,
            lx + 26.0,
            ly - 4.0,
            lx + 34.0,
            ly
        );
    }
    s.push_str("</svg>\n");
    if let Some(dir) = std::path::Path::new(&out).parent() {
        std::fs::create_dir_all(dir).expect("create output folder");
    }
    std::fs::write(&out, s).expect("write SVG");
    println!("wrote {out}");
}
