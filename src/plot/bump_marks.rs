//! The marks density.svg puts on the bumps: for each bump of summary.json whose
//! probability exceeds one half, its location interval at the widest credible level as a
//! short horizontal bar at half the posterior mean's height there (under the curve), a
//! tick at the median location, and the probability that the bump exists written to the
//! right of the bar.
//! Drawn as rectangles and text only, so the figure's polygons and lines stay its data.

use std::path::Path;

use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::canvas::{font, plot_err};
use super::style;
use crate::error::Result;

/// One bump to mark.
#[derive(Debug, Clone, PartialEq)]
pub struct BumpMark {
    pub probability: f64,
    pub median: f64,
    pub level: f64,
    pub lower: f64,
    pub upper: f64,
}

/// Bumps above this probability are marked.
pub const MARK_ABOVE: f64 = 0.5;

/// The bumps of RUN/summary.json to mark (none when the file is absent, unreadable or
/// written before bumps were summarised).
pub fn read_bump_marks(summary_json: &Path) -> Vec<BumpMark> {
    let Ok(text) = std::fs::read_to_string(summary_json) else {
        return Vec::new();
    };
    let Ok(v) = serde_json::from_str::<serde_json::Value>(&text) else {
        return Vec::new();
    };
    marks_of(&v)
}

/// The bumps of a parsed summary.json to mark, left to right.
pub fn marks_of(summary: &serde_json::Value) -> Vec<BumpMark> {
    let mut out = Vec::new();
    for b in summary["bumps"].as_array().into_iter().flatten() {
        let p = b["probability"].as_f64().unwrap_or(0.0);
        let loc = &b["location"];
        let widest = loc["intervals"].as_array().and_then(|a| {
            a.iter().filter(|i| i["level"].is_number()).max_by(|x, y| {
                x["level"]
                    .as_f64()
                    .unwrap()
                    .total_cmp(&y["level"].as_f64().unwrap())
            })
        });
        let (Some(median), Some(iv)) = (loc["median"].as_f64(), widest) else {
            continue;
        };
        let (Some(level), Some(lower), Some(upper)) = (
            iv["level"].as_f64(),
            iv["lower"].as_f64(),
            iv["upper"].as_f64(),
        ) else {
            continue;
        };
        if p > MARK_ABOVE {
            out.push(BumpMark {
                probability: p,
                median,
                level,
                lower,
                upper,
            });
        }
    }
    out
}

/// The posterior mean `mean` on `grid` at `x`, by linear interpolation.
fn mean_at(grid: &[f64], mean: &[f64], x: f64) -> f64 {
    let i = grid.partition_point(|&g| g < x).clamp(1, grid.len() - 1);
    let (x0, x1) = (grid[i - 1], grid[i]);
    let t = ((x - x0) / (x1 - x0)).clamp(0.0, 1.0);
    mean[i - 1] + t * (mean[i] - mean[i - 1])
}

/// Draws the marks on the density chart (x from the grid's ends, y from 0 to `ymax`).
pub fn draw_bump_marks<'a, DB: DrawingBackend>(
    chart: &mut ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>,
    marks: &[BumpMark],
    grid: &[f64],
    mean: &[f64],
    ymax: f64,
) -> Result<()> {
    let (x0, x1) = (grid[0], grid[grid.len() - 1]);
    let (px, py) = chart.plotting_area().get_pixel_range();
    let per_px_y = ymax / (py.end - py.start).max(1) as f64;
    let per_px_x = (x1 - x0) / (px.end - px.start).max(1) as f64;
    let ink = style::ACCENT;
    for m in marks {
        let y = 0.5 * mean_at(grid, mean, m.median);
        let (lo, hi) = (m.lower.max(x0), m.upper.min(x1));
        // The bar: 3 px tall, at least 3 px wide so a narrow interval stays visible.
        let half = (0.5 * (hi - lo)).max(1.5 * per_px_x);
        let mid = 0.5 * (lo + hi);
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [
                    (mid - half, y - 1.5 * per_px_y),
                    (mid + half, y + 1.5 * per_px_y),
                ],
                ink.filled(),
            )))
            .map_err(plot_err)?;
        // The tick at the median: 2 px wide, 14 px tall.
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [
                    (m.median - per_px_x, y - 7.0 * per_px_y),
                    (m.median + per_px_x, y + 7.0 * per_px_y),
                ],
                ink.filled(),
            )))
            .map_err(plot_err)?;
        // A light patch behind the label keeps it readable over bands and curve (width:
        // about 0.55 em a character).
        let label = prob_text(m.probability);
        let w = label.chars().count() as f64 * style::NOTE_SIZE as f64 * 0.55 + 6.0;
        let left = mid + half + 3.0 * per_px_x;
        chart
            .draw_series(std::iter::once(Rectangle::new(
                [
                    (left, y - 9.0 * per_px_y),
                    (left + w * per_px_x, y + 9.0 * per_px_y),
                ],
                style::PAPER.mix(0.75).filled(),
            )))
            .map_err(plot_err)?;
        chart
            .draw_series(std::iter::once(Text::new(
                label,
                (mid + half + 6.0 * per_px_x, y),
                font(style::NOTE_SIZE, ink).pos(Pos::new(HPos::Left, VPos::Center)),
            )))
            .map_err(plot_err)?;
    }
    Ok(())
}

/// A probability as the figure writes it: two decimals, "p > 0.99" near certainty.
pub fn prob_text(p: f64) -> String {
    if p > 0.99 {
        "p > 0.99".into()
    } else {
        format!("p = {p:.2}")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn marks_only_bumps_above_one_half_at_the_widest_level() {
        let v = serde_json::json!({"bumps": [
            {"probability": 0.97, "location": {"median": 2.0, "intervals": [
                {"level": 0.5, "lower": 1.9, "upper": 2.1},
                {"level": 0.95, "lower": 1.5, "upper": 2.6}]}},
            {"probability": 0.5, "location": {"median": 5.0, "intervals": [
                {"level": 0.95, "lower": 4.0, "upper": 6.0}]}},
            {"probability": 0.0, "location": null}
        ]});
        let m = marks_of(&v);
        assert_eq!(m.len(), 1);
        assert_eq!((m[0].level, m[0].lower, m[0].upper), (0.95, 1.5, 2.6));
        assert_eq!(prob_text(0.995), "p > 0.99");
        assert_eq!(prob_text(0.874), "p = 0.87");
        assert!((mean_at(&[0.0, 1.0, 2.0], &[0.0, 2.0, 4.0], 1.25) - 2.5).abs() < 1e-12);
    }
}
