//! grid-diagnostics.svg: R-hat and bulk effective sample size of the density at each
//! grid point, with the gate thresholds drawn and failing stretches of the axis shaded,
//! so a user sees where on the axis the posterior is hard to sample.

use plotters::prelude::*;

use super::canvas::{bold, plot_err, svg_document, tick_formatter, Area, HouseMesh};
use super::density::{draw_heading, draw_legend, top_left, LegendMark};
use super::inputs::RunInputs;
use super::style;
use crate::error::Result;

/// Diagnostics of the density along the grid, with the thresholds of the run's gate.
#[derive(Debug, Clone, PartialEq)]
pub struct GridDiagnostics {
    pub x: Vec<f64>,
    pub rhat: Vec<f64>,
    pub ess_bulk: Vec<f64>,
    pub max_rhat: f64,
    pub min_ess: f64,
}

/// R-hat values above this are drawn at this height (and said so).
const RHAT_CAP: f64 = 2.0;

/// Renders grid-diagnostics.svg.
pub fn grid_diagnostics_svg(inp: &RunInputs, g: &GridDiagnostics) -> Result<String> {
    let title = "Convergence of the density along the grid".to_string();
    let size = style::GRID_DIAG_SIZE;
    svg_document(size, &title, None, |root: &Area<'_>| {
        draw_heading(root, &title, inp, inp.bands.converged == Some(false))?;
        draw_legend(
            root,
            &[
                (
                    "value at the grid point".into(),
                    LegendMark::Line(style::MEAN_LINE),
                ),
                ("gate threshold".into(), LegendMark::Dashed(style::ACCENT)),
                (
                    "fails the threshold".into(),
                    LegendMark::Swatch(style::ALERT_FILL),
                ),
            ],
            66,
        )?;
        let body = root.margin(88, 12, 10, 24);
        let panels = body.split_evenly((2, 1));
        let rhat: Vec<f64> = g
            .rhat
            .iter()
            .map(|&r| {
                if r.is_finite() {
                    r.min(RHAT_CAP)
                } else {
                    RHAT_CAP
                }
            })
            .collect();
        let capped = g.rhat.iter().any(|&r| r.is_nan() || r > RHAT_CAP);
        let rmax = rhat.iter().copied().fold(g.max_rhat, f64::max);
        let rmin = rhat.iter().copied().fold(1.0, f64::min);
        let pad = ((rmax - rmin) * 0.1).max(0.002);
        let rfail: Vec<bool> = g
            .rhat
            .iter()
            .map(|&r| r.is_nan() || r > g.max_rhat)
            .collect();
        let label = if capped {
            format!("R-hat (values above {RHAT_CAP} drawn at {RHAT_CAP})")
        } else {
            "R-hat".into()
        };
        panel(
            &panels[0],
            inp,
            &g.x,
            &rhat,
            (rmin - pad, rmax + pad),
            g.max_rhat,
            &rfail,
            &label,
            false,
        )?;
        let emax = g.ess_bulk.iter().copied().fold(g.min_ess, f64::max) * 1.1;
        let efail: Vec<bool> = g
            .ess_bulk
            .iter()
            .map(|&e| e.is_nan() || e < g.min_ess)
            .collect();
        panel(
            &panels[1],
            inp,
            &g.x,
            &g.ess_bulk,
            (0.0, emax),
            g.min_ess,
            &efail,
            "bulk effective sample size",
            true,
        )?;
        Ok(())
    })
}

#[allow(clippy::too_many_arguments)]
fn panel(
    area: &Area<'_>,
    inp: &RunInputs,
    x: &[f64],
    y: &[f64],
    yr: (f64, f64),
    threshold: f64,
    fail: &[bool],
    label: &str,
    bottom: bool,
) -> Result<()> {
    let (x0, x1) = (x[0], x[x.len() - 1]);
    let mut chart = ChartBuilder::on(area)
        .margin_top(22)
        .x_label_area_size(if bottom { 52 } else { 26 })
        .y_label_area_size(78)
        .build_cartesian_2d(x0..x1, yr.0..yr.1)
        .map_err(plot_err)?;
    let fx = tick_formatter(x1 - x0, 9);
    let fy = tick_formatter(yr.1 - yr.0, 5);
    let mut mesh = chart.configure_mesh();
    mesh.house(style::TICK_SIZE - 1)
        .x_labels(9)
        .y_labels(5)
        .x_label_formatter(&fx)
        .y_label_formatter(&fy);
    if bottom {
        mesh.x_desc(inp.value_label());
    }
    mesh.draw().map_err(plot_err)?;
    // Shade each failing grid point's share of the axis (half-way to its neighbours).
    let half = |i: usize| -> (f64, f64) {
        let l = if i == 0 {
            x[0]
        } else {
            0.5 * (x[i - 1] + x[i])
        };
        let r = if i + 1 == x.len() {
            x[i]
        } else {
            0.5 * (x[i] + x[i + 1])
        };
        (l, r)
    };
    chart
        .draw_series(fail.iter().enumerate().filter(|(_, &f)| f).map(|(i, _)| {
            let (l, r) = half(i);
            Rectangle::new([(l, yr.0), (r, yr.1)], style::ALERT_FILL.filled())
        }))
        .map_err(plot_err)?;
    chart
        .draw_series(DashedLineSeries::new(
            [(x0, threshold), (x1, threshold)],
            style::DASH.0,
            style::DASH.1,
            ShapeStyle::from(style::ACCENT).stroke_width(2),
        ))
        .map_err(plot_err)?;
    chart
        .draw_series(LineSeries::new(
            x.iter().copied().zip(y.iter().copied()),
            ShapeStyle::from(style::MEAN_LINE).stroke_width(2),
        ))
        .map_err(plot_err)?;
    let (_, py) = chart.plotting_area().get_pixel_range();
    let base = area.get_base_pixel().1;
    let nfail = fail.iter().filter(|&&f| f).count();
    let text = format!(
        "{label} · threshold {} · {} of {} grid points fail",
        tick_formatter(threshold.abs().max(1e-9) * 10.0, 100)(&threshold),
        nfail,
        x.len()
    );
    area.draw(&Text::new(
        text,
        (86, py.start - base - 20),
        bold(style::NOTE_SIZE, style::INK).pos(top_left()),
    ))
    .map_err(plot_err)?;
    Ok(())
}
