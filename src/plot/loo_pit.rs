//! loo-pit.svg: the ECDF of the LOO-PIT values minus the uniform CDF, z ↦ F̂(z) − z, with
//! the simultaneous band for uniformity of Säilynoja, Bürkner & Vehtari (2022) shaded
//! (the "ECDF difference" display of that paper). A calibrated model keeps the line inside
//! the band; a line that dips then rises (an S) means predictive distributions that are too
//! narrow, the reverse too wide, and a line wholly above or below a location shift.

use plotters::prelude::*;

use super::canvas::{bold, font, plot_err, svg_document, tick_formatter, Area, HouseMesh};
use super::style;
use crate::check::PitReport;
use crate::error::Result;

/// Figure size in pixels.
pub const LOO_PIT_SIZE: (u32, u32) = (960, 440);

/// Renders loo-pit.svg from the LOO-PIT part of checks.json.
pub fn loo_pit_svg(l: &PitReport) -> Result<String> {
    let title = "LOO-PIT: ECDF of the PIT values minus the uniform CDF".to_string();
    let b = &l.band;
    let z = &b.z;
    let diff: Vec<f64> = l.ecdf.iter().zip(z).map(|(f, p)| f - p).collect();
    let lo: Vec<f64> = b.lower.iter().zip(z).map(|(f, p)| f - p).collect();
    let hi: Vec<f64> = b.upper.iter().zip(z).map(|(f, p)| f - p).collect();
    let top = diff
        .iter()
        .chain(&hi)
        .chain(lo.iter())
        .fold(0.0f64, |m, v| m.max(v.abs()))
        .max(1e-3)
        * 1.15;
    svg_document(LOO_PIT_SIZE, &title, None, |root: &Area<'_>| {
        root.draw(&Text::new(
            title.clone(),
            (24, 14),
            bold(style::TITLE_SIZE, style::INK),
        ))
        .map_err(plot_err)?;
        let note = format!(
            "{} observations, {} draws · {}% simultaneous band (simulation, {} uniform samples) · {} · {:.1}% of k̂ > 0.7",
            b.n,
            l.draws_used,
            (b.level * 100.0).round(),
            b.simulations,
            if l.within_band {
                "inside the band"
            } else {
                "LEAVES the band"
            },
            100.0 * l.share_k_above_0_7
        );
        root.draw(&Text::new(
            note,
            (24, 44),
            font(
                style::NOTE_SIZE,
                if l.within_band {
                    style::INK_SOFT
                } else {
                    style::ACCENT
                },
            ),
        ))
        .map_err(plot_err)?;
        let body = root.margin(70, 12, 10, 24);
        let mut chart = ChartBuilder::on(&body)
            .x_label_area_size(52)
            .y_label_area_size(78)
            .build_cartesian_2d(0.0..1.0, -top..top)
            .map_err(plot_err)?;
        let fy = tick_formatter(2.0 * top, 6);
        let fx = tick_formatter(1.0, 6);
        chart
            .configure_mesh()
            .house(style::TICK_SIZE - 1)
            .x_labels(6)
            .y_labels(6)
            .x_label_formatter(&fx)
            .y_label_formatter(&fy)
            .x_desc("PIT value z")
            .y_desc("ECDF(z) − z")
            .draw()
            .map_err(plot_err)?;
        let poly: Vec<(f64, f64)> = z
            .iter()
            .copied()
            .zip(hi.iter().copied())
            .chain(z.iter().copied().zip(lo.iter().copied()).rev())
            .collect();
        chart
            .draw_series(std::iter::once(Polygon::new(
                poly,
                style::band_fill(0, 1).filled(),
            )))
            .map_err(plot_err)?;
        chart
            .draw_series(LineSeries::new(
                [(0.0, 0.0), (1.0, 0.0)],
                ShapeStyle::from(style::INK_SOFT).stroke_width(1),
            ))
            .map_err(plot_err)?;
        chart
            .draw_series(LineSeries::new(
                z.iter().copied().zip(diff.iter().copied()),
                ShapeStyle::from(style::MEAN_LINE).stroke_width(style::MEAN_WIDTH),
            ))
            .map_err(plot_err)?;
        // Points where the ECDF leaves the band.
        chart
            .draw_series(
                z.iter()
                    .zip(&l.ecdf)
                    .enumerate()
                    .filter(|(i, (_, f))| **f < b.lower[*i] - 1e-12 || **f > b.upper[*i] + 1e-12)
                    .map(|(i, (&p, _))| Circle::new((p, diff[i]), 4, style::ACCENT.filled())),
            )
            .map_err(plot_err)?;
        Ok(())
    })
}
