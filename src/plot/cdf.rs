//! cdf.svg: the posterior of the distribution function, from RUN/cdf.csv — the pointwise
//! credible bands as nested shaded regions (widest lightest), the posterior mean as a line,
//! and the empirical distribution function of the data as a thin step line on top, so a reader can
//! read off P(X ≤ x) with its uncertainty and see where the fit departs from the sample.

use std::path::Path;

use plotters::prelude::*;

use super::canvas::{
    frame_metadata, plot_err, svg_document, tick_formatter, Area, Frame, HouseMesh,
};
use super::density::{draw_heading, draw_legend, LegendMark};
use super::inputs::RunInputs;
use super::observations::SortedObservations;
use super::style;
use crate::error::{Error, Result};
use crate::summary::level_label;

/// The columns of cdf.csv the figure draws.
#[derive(Debug, Clone, PartialEq)]
pub struct StoredCdf {
    pub x: Vec<f64>,
    pub mean: Vec<f64>,
    /// (level, lower, upper), in the file's order.
    pub bands: Vec<(f64, Vec<f64>, Vec<f64>)>,
}

impl StoredCdf {
    /// Reads cdf.csv with the `levels` of the run (columns lower_<L>, upper_<L>).
    pub fn read(path: &Path, levels: &[f64]) -> Result<StoredCdf> {
        let text = std::fs::read_to_string(path).map_err(|e| Error::io(path, e))?;
        let bad = |what: String| Error::input(format!("{}: {what}", path.display()));
        let mut lines = text.lines();
        let head: Vec<&str> = lines.next().unwrap_or("").split(',').collect();
        let col = |name: &str| {
            head.iter()
                .position(|h| *h == name)
                .ok_or_else(|| bad(format!("no column {name}")))
        };
        let mut cols = vec![col("x")?, col("mean")?];
        for &l in levels {
            let lab = level_label(l);
            cols.push(col(&format!("lower_{lab}"))?);
            cols.push(col(&format!("upper_{lab}"))?);
        }
        let mut values: Vec<Vec<f64>> = vec![Vec::new(); cols.len()];
        for (i, line) in lines.enumerate() {
            let cells: Vec<&str> = line.split(',').collect();
            for (v, &c) in values.iter_mut().zip(&cols) {
                let x: f64 = cells
                    .get(c)
                    .and_then(|s| s.parse().ok())
                    .filter(|x: &f64| x.is_finite())
                    .ok_or_else(|| bad(format!("line {}: unreadable value", i + 2)))?;
                v.push(x);
            }
        }
        if values[0].len() < 2 {
            return Err(bad("fewer than 2 grid points".into()));
        }
        let mut it = values.into_iter();
        let x = it.next().unwrap_or_default();
        let mean = it.next().unwrap_or_default();
        let bands = levels
            .iter()
            .map(|&l| {
                (
                    l,
                    it.next().unwrap_or_default(),
                    it.next().unwrap_or_default(),
                )
            })
            .collect();
        Ok(StoredCdf { x, mean, bands })
    }
}

/// The empirical CDF of the sorted sample as a step line clipped to [x0, x1]: a vertical
/// step at each observation (as many steps on a value as it has observations). Values
/// recorded at a resolution (`one_step_per_value`) get one vertical step per distinct
/// value, the same line with as many points as cells rather than observations.
fn ecdf_steps(
    obs: &SortedObservations,
    one_step_per_value: bool,
    (x0, x1): (f64, f64),
) -> Vec<(f64, f64)> {
    let n = obs.len().max(1) as f64;
    let below: u64 = obs.runs().filter(|e| e.0 < x0).map(|e| e.1).sum();
    let mut steps = vec![(x0, below as f64 / n)];
    let mut start = 0usize;
    for (v, c) in obs.runs() {
        let c = c as usize;
        if v >= x0 && v <= x1 {
            if one_step_per_value {
                steps.push((v, start as f64 / n));
                steps.push((v, (start + c) as f64 / n));
            } else {
                for i in start..start + c {
                    steps.push((v, i as f64 / n));
                    steps.push((v, (i + 1) as f64 / n));
                }
            }
        }
        start += c;
    }
    let last = steps[steps.len() - 1].1;
    steps.push((x1, last));
    steps
}

/// Renders cdf.svg for a run whose cdf.csv is `cdf`.
pub fn cdf_svg(inp: &RunInputs, cdf: &StoredCdf) -> Result<String> {
    let (x0, x1) = (cdf.x[0], cdf.x[cdf.x.len() - 1]);
    let title = format!(
        "Posterior distribution function of {}",
        inp.prep.config.column
    );
    let not_converged = inp.bands.converged == Some(false);
    let mut order: Vec<usize> = (0..cdf.bands.len()).collect();
    order.sort_by(|&a, &b| cdf.bands[b].0.total_cmp(&cdf.bands[a].0));
    let obs = inp.observations.sorted();
    let mut frame = None;
    let draw = |root: &Area<'_>| -> Result<()> {
        draw_heading(root, &title, inp, not_converged)?;
        let mut legend: Vec<(String, LegendMark)> = order
            .iter()
            .enumerate()
            .map(|(rank, &l)| {
                (
                    format!("{}% band", level_label(cdf.bands[l].0)),
                    LegendMark::Swatch(style::band_fill(rank, order.len())),
                )
            })
            .collect();
        legend.push(("posterior mean".into(), LegendMark::Line(style::MEAN_LINE)));
        legend.push((
            "data (empirical CDF)".into(),
            LegendMark::Line(style::ACCENT),
        ));
        draw_legend(root, &legend, 66)?;
        let body = root.margin(92, 12, 14, 24);
        let mut chart = ChartBuilder::on(&body)
            .x_label_area_size(52)
            .y_label_area_size(78)
            .build_cartesian_2d(x0..x1, 0.0..1.0)
            .map_err(plot_err)?;
        chart
            .configure_mesh()
            .house(style::TICK_SIZE)
            .x_labels(9)
            .y_labels(6)
            .x_label_formatter(&tick_formatter(x1 - x0, 9))
            .y_label_formatter(&tick_formatter(1.0, 6))
            .x_desc(inp.value_label())
            .y_desc("P(X ≤ x)")
            .draw()
            .map_err(plot_err)?;
        for (rank, &l) in order.iter().enumerate() {
            let (_, lo, hi) = &cdf.bands[l];
            let mut pts: Vec<(f64, f64)> = cdf.x.iter().copied().zip(hi.iter().copied()).collect();
            pts.extend(cdf.x.iter().copied().zip(lo.iter().copied()).rev());
            chart
                .draw_series(std::iter::once(Polygon::new(
                    pts,
                    style::band_fill(rank, order.len()).filled(),
                )))
                .map_err(plot_err)?;
        }
        chart
            .draw_series(LineSeries::new(
                cdf.x.iter().copied().zip(cdf.mean.iter().copied()),
                ShapeStyle::from(style::MEAN_LINE).stroke_width(style::MEAN_WIDTH),
            ))
            .map_err(plot_err)?;
        // The empirical CDF as a step line, clipped to the grid.
        let steps = ecdf_steps(&obs, inp.observations.tabulated(), (x0, x1));
        chart
            .draw_series(std::iter::once(PathElement::new(
                steps,
                ShapeStyle::from(style::ACCENT).stroke_width(1),
            )))
            .map_err(plot_err)?;
        frame = Some(Frame::of(&chart, (x0, x1), (0.0, 1.0)));
        Ok(())
    };
    let svg = svg_document(style::DENSITY_SIZE, &title, None, draw)?;
    // The data-to-pixel map, measured while drawing, goes in after the title (as in
    // density.svg).
    Ok(match (frame, svg.find("</title>")) {
        (Some(f), Some(i)) => format!("{}{}{}", &svg[..i + 8], frame_metadata(&f), &svg[i + 8..]),
        _ => svg,
    })
}

/// cdf.svg for the run, or `None` when it has no readable cdf.csv (runs summarised
/// before the file existed).
pub fn cdf_figure(inp: &RunInputs) -> Result<Option<String>> {
    let path = inp.layout.cdf_csv();
    if !path.exists() {
        return Ok(None);
    }
    let cdf = StoredCdf::read(&path, &inp.bands.levels)?;
    cdf_svg(inp, &cdf).map(Some)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::plot::observations::Observations;

    #[test]
    fn the_ecdf_line_is_the_same_with_one_step_per_value() {
        let obs = Observations::new(
            vec![3.0, 1.0, 2.0, 5.0, 0.5],
            Some(vec![2, 3, 1, 4, 2]),
            false,
        );
        let (x0, x1) = (0.8, 4.0);
        // Two points per observation, as the figure was drawn from the expanded sample.
        let mut x: Vec<f64> = obs.iter().collect();
        x.sort_by(f64::total_cmp);
        let n = x.len() as f64;
        let below = x.partition_point(|&v| v < x0);
        let mut old = vec![(x0, below as f64 / n)];
        for (i, &v) in x.iter().enumerate().filter(|&(_, &v)| v >= x0 && v <= x1) {
            old.push((v, i as f64 / n));
            old.push((v, (i + 1) as f64 / n));
        }
        old.push((x1, old[old.len() - 1].1));
        let sorted = obs.sorted();
        assert_eq!(ecdf_steps(&sorted, false, (x0, x1)), old);
        // One step per value: the same points with the repeats inside a vertical run
        // left out, so the same line.
        let one = ecdf_steps(&sorted, true, (x0, x1));
        assert_eq!(one.len(), 2 + 2 * 3);
        let mut dedup = old.clone();
        dedup.dedup();
        let inner: Vec<(f64, f64)> = dedup
            .iter()
            .enumerate()
            .filter(|&(i, p)| {
                i == 0 || i + 1 == dedup.len() || dedup[i - 1].0 != p.0 || dedup[i + 1].0 != p.0
            })
            .map(|(_, &p)| p)
            .collect();
        assert_eq!(one, inner);
    }
}
