//! The figures written by `sample` and `mixband plot`: well-formed SVG (parsed with
//! roxmltree), one shaded region per credible level, and a mean path whose points are the
//! posterior mean of bands.csv mapped through the plot's own frame.

mod plot_support;

use mixband::plot::canvas::Frame;
use mixband::plot::style;
use plot_support::plotrun::{make_run, read_bands_csv, scratch};

fn points(attr: &str) -> Vec<(f64, f64)> {
    attr.split_whitespace()
        .map(|p| {
            let (x, y) = p.split_once(',').unwrap();
            (x.parse().unwrap(), y.parse().unwrap())
        })
        .collect()
}

fn column<'a>(head: &[String], cols: &'a [Vec<f64>], name: &str) -> &'a [f64] {
    &cols[head
        .iter()
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("no column {name}"))]
}

#[test]
fn figures_are_well_formed_and_the_density_matches_bands_csv() {
    let dir = scratch("plots");
    let run = make_run(&dir, 150, &[]);
    // `sample` writes the figures by default; `plot` redraws them with the kernel estimate.
    for f in [
        "density.svg",
        "trace.svg",
        "ranks.svg",
        "grid-diagnostics.svg",
    ] {
        assert!(
            run.join("plots").join(f).exists(),
            "sample did not write {f}"
        );
    }
    let code = mixband::cli::main_with_args(
        ["mixband", "plot", run.to_str().unwrap(), "--with-kde"].map(Into::into),
    );
    assert_eq!(code, 0);

    for f in [
        "density.svg",
        "trace.svg",
        "ranks.svg",
        "grid-diagnostics.svg",
    ] {
        let text = std::fs::read_to_string(run.join("plots").join(f)).unwrap();
        let doc = roxmltree::Document::parse(&text)
            .unwrap_or_else(|e| panic!("{f} is not well-formed XML: {e}"));
        assert_eq!(doc.root_element().tag_name().name(), "svg");
        assert!(!text.contains("NaN"), "{f} contains NaN");
    }

    let text = std::fs::read_to_string(run.join("plots/density.svg")).unwrap();
    let doc = roxmltree::Document::parse(&text).unwrap();
    let frame: Frame = serde_json::from_str(
        doc.descendants()
            .find(|n| n.attribute("id") == Some("mixband-frame"))
            .and_then(|n| n.text())
            .expect("density.svg has no frame metadata"),
    )
    .unwrap();
    let (head, cols) = read_bands_csv(&run.join("bands.csv"));
    let x = column(&head, &cols, "x");
    let mean = column(&head, &cols, "mean");

    // One shaded polygon per level, widest lightest: levels 0.99, 0.9, 0.5 in that order.
    let labels = ["99", "90", "50"];
    let polys: Vec<roxmltree::Node> = doc
        .descendants()
        .filter(|n| n.has_tag_name("polygon"))
        .collect();
    for (i, lab) in labels.iter().enumerate() {
        let fill = style::hex(style::band_fill(i, labels.len()));
        let matching: Vec<&roxmltree::Node> = polys
            .iter()
            .filter(|n| n.attribute("fill") == Some(fill.as_str()))
            .collect();
        assert_eq!(
            matching.len(),
            1,
            "level {lab}%: {} regions of colour {fill}",
            matching.len()
        );
        // Its outline runs along the upper bound, then back along the lower bound.
        let pts = points(matching[0].attribute("points").unwrap());
        assert_eq!(pts.len(), 2 * x.len());
        let upper = column(&head, &cols, &format!("upper_{lab}"));
        let lower = column(&head, &cols, &format!("lower_{lab}"));
        for g in 0..x.len() {
            let (ux, uy) = frame.to_pixel(x[g], upper[g]);
            let (lx, ly) = frame.to_pixel(x[g], lower[g]);
            let (pu, pl) = (pts[g], pts[2 * x.len() - 1 - g]);
            assert!(
                (pu.0 - ux).abs() <= 1.0 && (pu.1 - uy).abs() <= 1.0,
                "{lab}% upper at {g}"
            );
            assert!(
                (pl.0 - lx).abs() <= 1.0 && (pl.1 - ly).abs() <= 1.0,
                "{lab}% lower at {g}"
            );
        }
    }
    // Lighter means closer to the paper colour: the sum of RGB grows from narrow to wide.
    let lightness = |i: usize| {
        let c = style::band_fill(i, 3);
        c.0 as u32 + c.1 as u32 + c.2 as u32
    };
    assert!(lightness(0) > lightness(1) && lightness(1) > lightness(2));

    // Exactly one mean path, and its points are bands.csv's mean.
    let mean_colour = style::hex(style::MEAN_LINE);
    let paths: Vec<roxmltree::Node> = doc
        .descendants()
        .filter(|n| {
            n.has_tag_name("polyline") && n.attribute("stroke") == Some(mean_colour.as_str())
        })
        .collect();
    assert_eq!(paths.len(), 1);
    let pts = points(paths[0].attribute("points").unwrap());
    assert_eq!(pts.len(), x.len());
    for g in 0..x.len() {
        let (px, py) = frame.to_pixel(x[g], mean[g]);
        assert!(
            (pts[g].0 - px).abs() <= 1.0 && (pts[g].1 - py).abs() <= 1.0,
            "mean at grid point {g}: {:?} vs ({px}, {py})",
            pts[g]
        );
    }
    // A different curve does not match: the path is not, say, the median shifted by one pixel.
    let median = column(&head, &cols, "median");
    let off = (0..x.len())
        .filter(|&g| (pts[g].1 - frame.to_pixel(x[g], median[g]).1).abs() > 1.0)
        .count();
    assert!(
        off > 0 || mean == median,
        "mean path is indistinguishable from the median"
    );

    // The kernel estimate (asked for) is drawn dashed in the accent colour; the axis label names the units.
    let accent = style::hex(style::ACCENT);
    assert!(
        doc.descendants()
            .filter(|n| n.attribute("stroke") == Some(accent.as_str()))
            .count()
            > 5
    );
    assert!(text.contains("length (cm)"));
    assert!(text.contains("density (per cm)"));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn plotting_a_folder_that_is_not_a_run_fails_cleanly() {
    let dir = scratch("plots-bad");
    std::fs::create_dir_all(&dir).unwrap();
    let code =
        mixband::cli::main_with_args(["mixband", "plot", dir.to_str().unwrap()].map(Into::into));
    assert_eq!(code, 2);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn kernel_estimate_matches_scipy_at_silvermans_bandwidth() {
    // Fixture from tests/reference/kde_silverman.py: Silverman (1986) eq. 3.31 computed
    // with numpy, density from scipy.stats.gaussian_kde (versions in the fixture).
    let text = include_str!("reference/fixtures/kde_silverman.json");
    let fx: serde_json::Value = serde_json::from_str(text).unwrap();
    let cases = fx["cases"].as_object().unwrap();
    assert_eq!(cases.len(), 2);
    let vec = |v: &serde_json::Value| -> Vec<f64> {
        v.as_array()
            .unwrap()
            .iter()
            .map(|a| a.as_f64().unwrap())
            .collect()
    };
    for (name, c) in cases {
        let x = vec(&c["x"]);
        let h = mixband::plot::kde::silverman_bandwidth(&x);
        let want_h = c["bandwidth"].as_f64().unwrap();
        assert!(
            (h - want_h).abs() <= 1e-12 * want_h,
            "{name}: bandwidth {h} vs {want_h}"
        );
        let grid = vec(&c["grid"]);
        let want = vec(&c["density"]);
        let got = mixband::plot::kde::gaussian_kde(&x, h, &grid);
        for (g, (a, b)) in got.iter().zip(&want).enumerate() {
            assert!(
                (a - b).abs() <= 1e-10 * b.max(1e-3),
                "{name}: density at grid point {g}: {a} vs {b}"
            );
        }
    }
}
