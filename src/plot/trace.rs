//! trace.svg: the per-chain traces of the label-invariant scalar quantities, one panel
//! each, chains overlaid in their own colours.

use plotters::prelude::*;

use super::canvas::{
    bold, font, padded_range, plot_err, svg_document, tick_formatter, Area, HouseMesh,
};
use super::density::{draw_heading, draw_legend, LegendMark};
use super::inputs::RunInputs;
use super::quantities::{scalar_quantities, Quantity};
use super::style;
use crate::error::Result;

/// Renders trace.svg for a run.
pub fn trace_svg(inp: &RunInputs) -> Result<String> {
    let qs = scalar_quantities(&inp.draws, inp.is_location_kernel());
    let head = 92;
    let size = (
        style::TRACE_PANEL.0,
        head + style::TRACE_PANEL.1 * qs.len() as u32 + 8,
    );
    let title = "Traces of the chains".to_string();
    svg_document(size, &title, None, |root: &Area<'_>| {
        draw_heading(root, &title, inp, inp.bands.converged == Some(false))?;
        let legend: Vec<(String, LegendMark)> = inp
            .draws
            .chains
            .iter()
            .enumerate()
            .map(|(i, c)| {
                (
                    format!("chain {}", c.chain),
                    LegendMark::Line(style::chain_colour(i)),
                )
            })
            .collect();
        draw_legend(root, &legend, 66)?;
        let longest = inp.draws.chains.iter().map(|c| c.len()).max().unwrap_or(0);
        if longest > style::TRACE_MAX_POINTS {
            let step = longest.div_ceil(style::TRACE_MAX_POINTS);
            let (w, _) = root.dim_in_pixel();
            root.draw(&Text::new(
                format!("every {step}th draw drawn"),
                (w as i32 - 24, 66),
                font(style::NOTE_SIZE, style::INK_SOFT).pos(
                    plotters::style::text_anchor::Pos::new(
                        plotters::style::text_anchor::HPos::Right,
                        plotters::style::text_anchor::VPos::Center,
                    ),
                ),
            ))
            .map_err(plot_err)?;
        }
        let body = root.margin(head as i32 - 4, 8, 14, 24);
        let panels = body.split_evenly((qs.len(), 1));
        let last = qs.len().saturating_sub(1);
        for (i, (q, panel)) in qs.iter().zip(panels.iter()).enumerate() {
            draw_panel(panel, q, i == last)?;
        }
        Ok(())
    })
}

/// Every `step`-th index so that at most `max` points are drawn (the last one always).
pub(super) fn thin_indices(len: usize, max: usize) -> Vec<usize> {
    if len <= max {
        return (0..len).collect();
    }
    let step = len.div_ceil(max);
    let mut v: Vec<usize> = (0..len).step_by(step).collect();
    if v.last() != Some(&(len - 1)) {
        v.push(len - 1);
    }
    v
}

fn draw_panel(area: &Area<'_>, q: &Quantity, bottom: bool) -> Result<()> {
    let len = q.chains.iter().map(Vec::len).max().unwrap_or(0).max(2);
    let lo = q
        .chains
        .iter()
        .flatten()
        .copied()
        .fold(f64::INFINITY, f64::min);
    let hi = q
        .chains
        .iter()
        .flatten()
        .copied()
        .fold(f64::NEG_INFINITY, f64::max);
    let (y0, y1) = padded_range(lo, hi, 0.06);
    let x1 = len as f64;
    let mut chart = ChartBuilder::on(area)
        .x_label_area_size(if bottom { 50 } else { 30 })
        .y_label_area_size(78)
        .margin_top(26)
        .margin_right(22)
        .build_cartesian_2d(1.0..x1, y0..y1)
        .map_err(plot_err)?;
    let fy = tick_formatter(y1 - y0, 4);
    let mut mesh = chart.configure_mesh();
    mesh.house(style::TICK_SIZE - 1)
        .x_labels(8)
        .y_labels(4)
        .x_label_formatter(&|v| format!("{}", v.round() as i64))
        .y_label_formatter(&fy);
    if bottom {
        mesh.x_desc("kept draw");
    }
    mesh.draw().map_err(plot_err)?;
    for (i, c) in q.chains.iter().enumerate() {
        let idx = thin_indices(c.len(), style::TRACE_MAX_POINTS);
        chart
            .draw_series(LineSeries::new(
                idx.iter().map(|&d| ((d + 1) as f64, c[d])),
                ShapeStyle::from(style::chain_colour(i).mix(0.85)).stroke_width(style::TRACE_WIDTH),
            ))
            .map_err(plot_err)?;
    }
    let (_, py) = chart.plotting_area().get_pixel_range();
    let note = if q.is_constant() {
        format!("{} (constant)", q.label)
    } else {
        q.label.to_string()
    };
    area.draw(&Text::new(
        note,
        (92, py.start - area.get_base_pixel().1 - 22),
        bold(style::NOTE_SIZE, style::INK).pos(super::density::top_left()),
    ))
    .map_err(plot_err)?;
    Ok(())
}

#[cfg(test)]
mod tests {
    #[test]
    fn thinning_keeps_ends_and_bound() {
        let v = super::thin_indices(10_000, 1500);
        assert_eq!(v[0], 0);
        assert_eq!(*v.last().unwrap(), 9_999);
        assert!(v.len() <= 1501);
        assert_eq!(super::thin_indices(5, 10), vec![0, 1, 2, 3, 4]);
    }
}
