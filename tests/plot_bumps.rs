//! The bump marks of density.svg and the CDF figure: each bump of summary.json with
//! probability above one half has a bar spanning its location interval at the widest
//! level and a tick at its median, placed through the plot's own frame, and its
//! probability written beside it; cdf.svg's mean line is cdf.csv's mean. Source: issue 15
//! (what the figure must show); the pixel mapping is the figure's frame metadata.

mod plot_support;

use mixband::plot::canvas::Frame;
use mixband::plot::style;
use plot_support::plotrun::{make_run, read_bands_csv, scratch};

fn attr(n: &roxmltree::Node, a: &str) -> f64 {
    n.attribute(a).unwrap().parse().unwrap()
}

#[test]
fn density_marks_the_likely_bumps_and_cdf_svg_draws_cdf_csv() {
    let dir = scratch("plot-bumps");
    let run = make_run(&dir, 300, &[]);
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(run.join("summary.json")).unwrap()).unwrap();
    let likely: Vec<&serde_json::Value> = summary["bumps"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|b| b["probability"].as_f64().unwrap() > 0.5)
        .collect();
    // The sample is bimodal (1/3 near 30, 2/3 near 36): both bumps are likely.
    assert_eq!(likely.len(), 2, "{}", summary["bumps"]);

    let text = std::fs::read_to_string(run.join("plots/density.svg")).unwrap();
    let doc = roxmltree::Document::parse(&text).unwrap();
    let frame: Frame = serde_json::from_str(
        doc.descendants()
            .find(|n| n.attribute("id") == Some("mixband-frame"))
            .and_then(|n| n.text())
            .unwrap(),
    )
    .unwrap();
    let accent = style::hex(style::ACCENT);
    let rects: Vec<roxmltree::Node> = doc
        .descendants()
        .filter(|n| n.has_tag_name("rect") && n.attribute("fill") == Some(accent.as_str()))
        .collect();
    let labels: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| n.text().map(|t| t.trim().to_string()))
        .filter(|t| t.starts_with("p "))
        .collect();
    assert_eq!(labels.len(), likely.len(), "{labels:?}");
    for b in likely {
        let loc = &b["location"];
        let widest = loc["intervals"].as_array().unwrap().last().unwrap();
        assert_eq!(widest["level"].as_f64(), Some(0.99));
        let (lo, _) = frame.to_pixel(widest["lower"].as_f64().unwrap(), 0.0);
        let (hi, _) = frame.to_pixel(widest["upper"].as_f64().unwrap(), 0.0);
        let (med, _) = frame.to_pixel(loc["median"].as_f64().unwrap(), 0.0);
        // The bar: a 3 px tall rectangle from the interval's lower to upper end.
        let bar = rects.iter().any(|r| {
            attr(r, "height") <= 4.0
                && (attr(r, "x") - lo).abs() <= 1.5
                && (attr(r, "x") + attr(r, "width") - hi).abs() <= 1.5
        });
        assert!(bar, "no bar from {lo} to {hi} px");
        // The tick: a narrow tall rectangle centred on the median.
        let tick = rects.iter().any(|r| {
            attr(r, "height") >= 10.0 && (attr(r, "x") + 0.5 * attr(r, "width") - med).abs() <= 1.5
        });
        assert!(tick, "no tick at {med} px");
        let p = b["probability"].as_f64().unwrap();
        let want = mixband::plot::bump_marks::prob_text(p);
        assert!(labels.contains(&want), "{want} not in {labels:?}");
    }

    // cdf.svg: its one mean line has cdf.csv's mean at every grid point.
    let text = std::fs::read_to_string(run.join("plots/cdf.svg")).unwrap();
    let doc = roxmltree::Document::parse(&text).unwrap();
    assert!(!text.contains("NaN"));
    let mean_colour = style::hex(style::MEAN_LINE);
    let lines: Vec<roxmltree::Node> = doc
        .descendants()
        .filter(|n| {
            n.has_tag_name("polyline") && n.attribute("stroke") == Some(mean_colour.as_str())
        })
        .collect();
    assert_eq!(lines.len(), 1);
    let (head, cols) = read_bands_csv(&run.join("cdf.csv"));
    let col = |name: &str| &cols[head.iter().position(|h| h == name).unwrap()];
    let pts: Vec<(f64, f64)> = lines[0]
        .attribute("points")
        .unwrap()
        .split_whitespace()
        .map(|p| {
            let (x, y) = p.split_once(',').unwrap();
            (x.parse().unwrap(), y.parse().unwrap())
        })
        .collect();
    assert_eq!(pts.len(), col("x").len());
    let cdf_frame: Frame = serde_json::from_str(
        doc.descendants()
            .find(|n| n.attribute("id") == Some("mixband-frame"))
            .and_then(|n| n.text())
            .expect("cdf.svg has frame metadata"),
    )
    .unwrap();
    for (i, &(px, py)) in pts.iter().enumerate() {
        let (ex, ey) = cdf_frame.to_pixel(col("x")[i], col("mean")[i]);
        assert!(
            (px - ex).abs() <= 1.0 && (py - ey).abs() <= 1.0,
            "point {i}"
        );
    }
}
