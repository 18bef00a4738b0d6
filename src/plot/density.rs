//! density.svg: the credible bands as nested shaded regions (widest lightest), the
//! posterior mean as a line, the data as a histogram scaled to density, a rug of the
//! observations when there are not too many, and optionally a Gaussian kernel estimate
//! at Silverman's bandwidth as a dashed line.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::canvas::{
    bold, font, frame_metadata, plot_err, svg_document, tick_formatter, Area, Frame, HouseMesh,
};
use super::hist::Histogram;
use super::inputs::RunInputs;
use super::kde::{gaussian_kde_of, silverman_bandwidth_of};
use super::style;
use crate::error::Result;
use crate::summary::level_label;

/// What to draw besides bands, mean and histogram.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub struct DensityOptions {
    /// Add the Gaussian kernel estimate at Silverman's bandwidth.
    pub with_kde: bool,
}

/// Renders density.svg for a run.
pub fn density_svg(inp: &RunInputs, opts: DensityOptions) -> Result<String> {
    let b = &inp.bands;
    let (x0, x1) = (b.grid[0], b.grid[b.grid.len() - 1]);
    let hist = Histogram::of_sorted(&inp.observations.sorted());
    let kde = if opts.with_kde {
        let h = silverman_bandwidth_of(&inp.observations);
        Some((h, gaussian_kde_of(&inp.observations, h, &b.grid)))
    } else {
        None
    };
    let order = b.widest_first();
    let mut ymax = b.mean.iter().copied().fold(0.0, f64::max);
    ymax = ymax.max(b.bands[order[0]].upper.iter().copied().fold(0.0, f64::max));
    for (l, r, d) in hist.bars() {
        if r > x0 && l < x1 {
            ymax = ymax.max(d);
        }
    }
    if let Some((_, k)) = &kde {
        ymax = ymax.max(k.iter().copied().fold(0.0, f64::max));
    }
    let ymax = if ymax > 0.0 { ymax * 1.06 } else { 1.0 };
    let not_converged = b.converged == Some(false);
    let marks = super::bump_marks::read_bump_marks(&inp.layout.summary_json());
    let title = format!("Posterior density of {}", inp.prep.config.column);

    let mut frame = None;
    let draw =
        |root: &Area<'_>| -> Result<()> {
            draw_heading(root, &title, inp, not_converged)?;
            let mut legend: Vec<(String, LegendMark)> = Vec::new();
            for (rank, &l) in order.iter().enumerate() {
                legend.push((
                    format!("{}% band", level_label(b.bands[l].level)),
                    LegendMark::Swatch(style::band_fill(rank, order.len())),
                ));
            }
            legend.push(("posterior mean".into(), LegendMark::Line(style::MEAN_LINE)));
            legend.push((
                "data (histogram)".into(),
                LegendMark::Swatch(style::HIST_FILL),
            ));
            if !marks.is_empty() && kde.is_none() {
                legend.push((
                    "bump: location interval, p = P(exists)".into(),
                    LegendMark::Line(style::ACCENT),
                ));
            }
            if let Some((h, _)) = &kde {
                legend.push((
                    format!("kernel estimate, h = {}", short(*h)),
                    LegendMark::Dashed(style::ACCENT),
                ));
            }
            draw_legend(root, &legend, 66)?;

            let body = root.margin(92, 12, 14, 24);
            let mut chart = ChartBuilder::on(&body)
                .x_label_area_size(52)
                .y_label_area_size(78)
                .build_cartesian_2d(x0..x1, 0.0..ymax)
                .map_err(plot_err)?;
            chart
                .configure_mesh()
                .house(style::TICK_SIZE)
                .x_labels(9)
                .y_labels(6)
                .x_label_formatter(&tick_formatter(x1 - x0, 9))
                .y_label_formatter(&tick_formatter(ymax, 6))
                .x_desc(inp.value_label())
                .y_desc(inp.density_label())
                .draw()
                .map_err(plot_err)?;

            // Histogram behind everything, clipped to the grid.
            let bars: Vec<(f64, f64, f64)> = hist
                .bars()
                .filter(|&(l, r, _)| r > x0 && l < x1)
                .map(|(l, r, d)| (l.max(x0), r.min(x1), d))
                .collect();
            chart
                .draw_series(bars.iter().map(|&(l, r, d)| {
                    Rectangle::new([(l, 0.0), (r, d)], style::HIST_FILL.filled())
                }))
                .map_err(plot_err)?;

            // Bands: widest first, so narrower (darker) regions sit on top.
            for (rank, &l) in order.iter().enumerate() {
                let lv = &b.bands[l];
                let mut pts: Vec<(f64, f64)> = b
                    .grid
                    .iter()
                    .copied()
                    .zip(lv.upper.iter().copied())
                    .collect();
                pts.extend(b.grid.iter().copied().zip(lv.lower.iter().copied()).rev());
                chart
                    .draw_series(std::iter::once(Polygon::new(
                        pts,
                        style::band_fill(rank, order.len()).filled(),
                    )))
                    .map_err(plot_err)?;
            }

            // Histogram outline above the bands so the data stay visible through them.
            let mut stair: Vec<(f64, f64)> = Vec::with_capacity(bars.len() * 2 + 2);
            for &(l, r, d) in &bars {
                if stair.is_empty() {
                    stair.push((l, 0.0));
                }
                stair.push((l, d));
                stair.push((r, d));
            }
            if let Some(&(_, r, _)) = bars.last() {
                stair.push((r, 0.0));
            }
            chart
                .draw_series(std::iter::once(PathElement::new(
                    stair,
                    ShapeStyle::from(style::HIST_EDGE).stroke_width(1),
                )))
                .map_err(plot_err)?;

            if let Some((_, k)) = &kde {
                chart
                    .draw_series(DashedLineSeries::new(
                        b.grid.iter().copied().zip(k.iter().copied()),
                        style::DASH.0,
                        style::DASH.1,
                        ShapeStyle::from(style::ACCENT).stroke_width(style::KDE_WIDTH),
                    ))
                    .map_err(plot_err)?;
            }

            chart
                .draw_series(LineSeries::new(
                    b.grid.iter().copied().zip(b.mean.iter().copied()),
                    ShapeStyle::from(style::MEAN_LINE).stroke_width(style::MEAN_WIDTH),
                ))
                .map_err(plot_err)?;

            super::bump_marks::draw_bump_marks(&mut chart, &marks, &b.grid, &b.mean, ymax)?;

            if inp.observations.len() <= style::RUG_MAX_N {
                let (_, py) = chart.plotting_area().get_pixel_range();
                let per_px = ymax / (py.end - py.start).max(1) as f64;
                let top = per_px * style::RUG_HEIGHT as f64;
                let ink = style::INK.mix(style::RUG_ALPHA);
                chart
                    .draw_series(
                        inp.observations
                            .iter()
                            .filter(|&v| v >= x0 && v <= x1)
                            .map(|v| {
                                PathElement::new(
                                    vec![(v, 0.0), (v, top)],
                                    ShapeStyle::from(ink).stroke_width(1),
                                )
                            }),
                    )
                    .map_err(plot_err)?;
            }
            frame = Some(Frame::of(&chart, (x0, x1), (0.0, ymax)));
            Ok(())
        };
    // The frame is measured while drawing; it goes in after the title.
    let svg = svg_document(style::DENSITY_SIZE, &title, None, draw)?;
    Ok(match frame {
        Some(f) => insert_metadata(&svg, &frame_metadata(&f)),
        None => svg,
    })
}

fn insert_metadata(svg: &str, meta: &str) -> String {
    match svg.find("</title>") {
        Some(i) => format!("{}{}{}", &svg[..i + 8], meta, &svg[i + 8..]),
        None => svg.to_string(),
    }
}

/// Short text of a number for a legend (four significant digits).
fn short(v: f64) -> String {
    let s = format!("{v:.4}");
    let p = format!(
        "{:.*}",
        (3 - v.abs().log10().floor() as i32).clamp(0, 8) as usize,
        v
    );
    if p.len() < s.len() {
        p
    } else {
        s
    }
}

/// Title, and a stamp when the run failed its convergence gate.
pub(super) fn draw_heading(
    root: &Area<'_>,
    title: &str,
    inp: &RunInputs,
    not_converged: bool,
) -> Result<()> {
    root.draw(&Text::new(
        title.to_string(),
        (26, 14),
        font(style::TITLE_SIZE, style::INK).pos(top_left()),
    ))
    .map_err(plot_err)?;
    let c = &inp.prep.config;
    let sub = format!(
        "n = {} · {} chains × {} draws · {} kernel, K = {}",
        inp.prep.record.n,
        inp.draws.chains.len(),
        inp.draws.min_len(),
        c.kernel,
        c.components
    );
    root.draw(&Text::new(
        sub,
        (26, 42),
        font(style::NOTE_SIZE, style::INK_SOFT).pos(top_left()),
    ))
    .map_err(plot_err)?;
    if not_converged {
        let (w, _) = root.dim_in_pixel();
        let x = w as i32 - 24;
        root.draw(&Text::new(
            "NOT CONVERGED: do not report".to_string(),
            (x, 16),
            bold(style::LABEL_SIZE, style::ACCENT).pos(Pos::new(HPos::Right, VPos::Top)),
        ))
        .map_err(plot_err)?;
    }
    Ok(())
}

pub(super) fn top_left() -> Pos {
    Pos::new(HPos::Left, VPos::Top)
}

/// How a legend entry is marked.
pub(super) enum LegendMark {
    Swatch(RGBColor),
    Line(RGBColor),
    Dashed(RGBColor),
}

/// A one-row legend at height `y`, left to right, with swatches drawn as rectangles (so
/// the only polygons and polylines of a figure are its data).
pub(super) fn draw_legend(root: &Area<'_>, items: &[(String, LegendMark)], y: i32) -> Result<()> {
    let mut x = 26;
    for (label, mark) in items {
        match mark {
            LegendMark::Swatch(c) => {
                root.draw(&Rectangle::new([(x, y - 6), (x + 22, y + 7)], c.filled()))
                    .map_err(plot_err)?;
                root.draw(&Rectangle::new(
                    [(x, y - 6), (x + 22, y + 7)],
                    ShapeStyle::from(style::GUIDE),
                ))
                .map_err(plot_err)?;
            }
            LegendMark::Line(c) => {
                root.draw(&Rectangle::new([(x, y - 1), (x + 22, y + 2)], c.filled()))
                    .map_err(plot_err)?;
            }
            LegendMark::Dashed(c) => {
                root.draw(&Rectangle::new([(x, y - 1), (x + 9, y + 1)], c.filled()))
                    .map_err(plot_err)?;
                root.draw(&Rectangle::new(
                    [(x + 14, y - 1), (x + 22, y + 1)],
                    c.filled(),
                ))
                .map_err(plot_err)?;
            }
        }
        root.draw(&Text::new(
            label.clone(),
            (x + 28, y),
            font(style::NOTE_SIZE, style::INK).pos(Pos::new(HPos::Left, VPos::Center)),
        ))
        .map_err(plot_err)?;
        // Width estimate: about 0.55 em per character at the note size.
        x +=
            28 + (label.chars().count() as f64 * style::NOTE_SIZE as f64 / 1.24 * 0.54) as i32 + 18;
    }
    Ok(())
}
