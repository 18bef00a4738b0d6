//! ranks.svg: rank plots (Vehtari, Gelman, Simpson, Carpenter & Bürkner 2021, section
//! 4.3): the draws of all chains are ranked together and each chain's ranks are shown as
//! a histogram. When the chains mix, every histogram is close to uniform; the shaded
//! strip is where 99% of bin counts fall under uniformity (normal approximation to the
//! binomial count, common practice, no source). Ties (the occupied count is discrete) are
//! broken in a fixed pseudo-random order, so a discrete quantity that mixes also gives
//! uniform bars, and the figure is the same on every call (common practice, no source).

use plotters::prelude::*;

use super::canvas::{bold, font, plot_err, svg_document, Area};
use super::density::{draw_heading, top_left};
use super::inputs::RunInputs;
use super::quantities::{scalar_quantities, tie_broken_ranks, Quantity};
use super::style;
use crate::error::Result;

/// Bin counts of each chain's ranks: `counts[chain][bin]`, for `bins` equal bins over
/// 1..=S where S is the pooled number of draws.
pub fn rank_counts(chains: &[Vec<f64>], bins: usize) -> Vec<Vec<usize>> {
    let len = chains.iter().map(Vec::len).min().unwrap_or(0);
    let pooled: Vec<f64> = chains
        .iter()
        .flat_map(|c| c[..len].iter().copied())
        .collect();
    let ranks = tie_broken_ranks(&pooled);
    let total = pooled.len() as f64;
    chains
        .iter()
        .enumerate()
        .map(|(c, _)| {
            let mut counts = vec![0usize; bins];
            for r in &ranks[c * len..(c + 1) * len] {
                // Rank r in [1, S] goes to bin floor((r − 1) / S · bins).
                let b = (((r - 1.0) / total) * bins as f64).floor() as usize;
                counts[b.min(bins - 1)] += 1;
            }
            counts
        })
        .collect()
}

/// Number of rank bins for chains of `len` draws: 20, fewer for short chains.
pub fn bins_for(len: usize) -> usize {
    (len / 10).clamp(4, 20)
}

/// Renders ranks.svg for a run.
pub fn ranks_svg(inp: &RunInputs) -> Result<String> {
    let qs = scalar_quantities(&inp.draws, inp.is_location_kernel());
    let chains = inp.draws.chains.len();
    let head = 92;
    let label_w = 150;
    let (cw, ch) = style::RANK_CELL;
    let width = (label_w + cw * chains as u32 + 24).max(640);
    let size = (width, head + ch * qs.len() as u32 + 30);
    let title = "Rank plots by chain".to_string();
    svg_document(size, &title, None, |root: &Area<'_>| {
        draw_heading(root, &title, inp, inp.bands.converged == Some(false))?;
        root.draw(&Text::new(
            "Pooled draws ranked together; each bar counts one chain's ranks. Uniform bars = the chains agree; shaded strip = 99% range under uniformity.".to_string(),
            (26, 64),
            font(style::NOTE_SIZE - 1, style::INK_SOFT).pos(top_left()),
        ))
        .map_err(plot_err)?;
        // plotters' margin order is (top, bottom, left, right).
        let body = root.margin(head as i32, 24, label_w as i32, 14);
        let rows = body.split_evenly((qs.len(), 1));
        for (q, row) in qs.iter().zip(rows.iter()) {
            let y = row.get_base_pixel().1 + ch as i32 / 2;
            root.draw(&Text::new(
                q.label.to_string(),
                (24, y),
                bold(style::NOTE_SIZE, style::INK).pos(plotters::style::text_anchor::Pos::new(
                    plotters::style::text_anchor::HPos::Left,
                    plotters::style::text_anchor::VPos::Center,
                )),
            ))
            .map_err(plot_err)?;
            draw_row(row, q, inp)?;
        }
        Ok(())
    })
}

fn ch_half(row: &Area<'_>) -> i32 {
    row.dim_in_pixel().1 as i32 / 2 - 8
}

fn draw_row(row: &Area<'_>, q: &Quantity, inp: &RunInputs) -> Result<()> {
    let cells = row.split_evenly((1, q.chains.len()));
    if q.is_constant() {
        row.draw(&Text::new(
            "constant in every draw: no ranks to compare".to_string(),
            (10, ch_half(row)),
            font(style::NOTE_SIZE, style::INK_SOFT).pos(top_left()),
        ))
        .map_err(plot_err)?;
        return Ok(());
    }
    let len = q.chains.iter().map(Vec::len).min().unwrap_or(0);
    let bins = bins_for(len);
    let counts = rank_counts(&q.chains, bins);
    let expect = len as f64 / bins as f64;
    let p = 1.0 / bins as f64;
    let sd = (len as f64 * p * (1.0 - p)).sqrt();
    let (lo99, hi99) = ((expect - 2.576 * sd).max(0.0), expect + 2.576 * sd);
    let top = counts.iter().flatten().copied().max().unwrap_or(1) as f64;
    let ymax = top.max(hi99) * 1.08;
    for (c, (cell, cnt)) in cells.iter().zip(counts.iter()).enumerate() {
        let mut chart = ChartBuilder::on(cell)
            .margin(6)
            .x_label_area_size(18)
            .y_label_area_size(if c == 0 { 36 } else { 8 })
            .caption(
                format!("chain {}", inp.draws.chains[c].chain),
                font(style::NOTE_SIZE - 1, style::INK_SOFT),
            )
            .build_cartesian_2d(0.0..bins as f64, 0.0..ymax)
            .map_err(plot_err)?;
        let mut mesh = chart.configure_mesh();
        mesh.disable_x_mesh()
            .disable_y_mesh()
            .axis_style(ShapeStyle::from(style::INK).stroke_width(style::AXIS_WIDTH))
            .x_labels(0)
            .y_labels(if c == 0 { 3 } else { 0 })
            .y_label_formatter(&|v| format!("{}", v.round() as i64))
            .label_style(font(style::TICK_SIZE - 3, style::INK_SOFT));
        mesh.draw().map_err(plot_err)?;
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [(0.0, lo99), (bins as f64, hi99)],
                style::mix(style::PAPER, style::GUIDE, 1.0).filled(),
            )))
            .map_err(plot_err)?;
        let colour = style::chain_colour(c);
        chart
            .draw_series(cnt.iter().enumerate().map(|(b, &n)| {
                Rectangle::new(
                    [(b as f64 + 0.08, 0.0), (b as f64 + 0.92, n as f64)],
                    colour.mix(0.8).filled(),
                )
            }))
            .map_err(plot_err)?;
        chart
            .draw_series(DashedLineSeries::new(
                [(0.0, expect), (bins as f64, expect)],
                5,
                4,
                ShapeStyle::from(style::INK_SOFT).stroke_width(1),
            ))
            .map_err(plot_err)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ties_are_spread_evenly_over_their_ranks() {
        // Two chains with the same two values half the time each: every bin of rank counts
        // must hold about the same number of draws in each chain.
        let a: Vec<f64> = (0..400).map(|i| (i % 2) as f64).collect();
        let b = a.clone();
        let c = rank_counts(&[a, b], 4);
        for chain in &c {
            for &n in chain {
                assert!((70..=130).contains(&n), "{c:?}");
            }
        }
    }

    #[test]
    fn counts_cover_every_draw_once_and_separate_shifted_chains() {
        // Chain 0 holds the 100 smallest values, chain 1 the 100 largest.
        let a: Vec<f64> = (0..100).map(|i| i as f64).collect();
        let b: Vec<f64> = (100..200).map(|i| i as f64).collect();
        let c = rank_counts(&[a, b], 10);
        assert_eq!(c[0].iter().sum::<usize>(), 100);
        assert_eq!(c[1].iter().sum::<usize>(), 100);
        assert_eq!(&c[0][..5], &[20, 20, 20, 20, 20]);
        assert_eq!(&c[0][5..], &[0, 0, 0, 0, 0]);
        assert_eq!(&c[1][5..], &[20, 20, 20, 20, 20]);
    }
}
