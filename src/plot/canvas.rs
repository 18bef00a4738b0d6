//! Shared plumbing of every figure: an SVG document drawn into a string, error mapping,
//! tick formatting, and the machine-readable frame written into each plot so a reader
//! (or a test) can map pixels back to data.

use std::fmt::Debug;

use plotters::coord::Shift;
use plotters::prelude::*;

use super::style;
use crate::error::{Error, Result};

pub type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;

/// Maps a plotters error to an internal error.
pub fn plot_err<E: Debug>(e: E) -> Error {
    Error::internal(format!("drawing a figure failed: {e:?}"))
}

/// Draws a figure of `size` pixels on the paper background and returns the SVG text, with
/// a `<title>` and, when given, a `<metadata>` block inserted after the root tag.
pub fn svg_document(
    size: (u32, u32),
    title: &str,
    metadata: Option<String>,
    draw: impl FnOnce(&Area<'_>) -> Result<()>,
) -> Result<String> {
    let mut text = String::new();
    {
        let root = SVGBackend::with_string(&mut text, size).into_drawing_area();
        root.fill(&style::PAPER).map_err(plot_err)?;
        draw(&root)?;
        root.present().map_err(plot_err)?;
    }
    let mut head = format!("<title>{}</title>", xml_escape(title));
    if let Some(m) = metadata {
        head.push_str(&m);
    }
    Ok(insert_after_root(&text, &head))
}

fn insert_after_root(svg: &str, extra: &str) -> String {
    match svg
        .find("<svg")
        .and_then(|i| svg[i..].find('>').map(|j| i + j + 1))
    {
        Some(at) => format!("{}\n{}{}", &svg[..at], extra, &svg[at..]),
        None => svg.to_string(),
    }
}

/// Escapes text for XML content and attribute values.
pub fn xml_escape(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for ch in s.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            c => out.push(c),
        }
    }
    out
}

/// The data-to-pixel map of one plotting area: data points (x0, y0) and (x1, y1) land on
/// pixels (px0, py0) and (px1, py1), linearly in between.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Frame {
    pub x: [f64; 2],
    pub y: [f64; 2],
    pub px: [i32; 2],
    pub py: [i32; 2],
}

impl Frame {
    /// The frame of a chart, measured by plotters' own coordinate map.
    pub fn of<DB: DrawingBackend>(
        chart: &ChartContext<
            '_,
            DB,
            Cartesian2d<
                plotters::coord::types::RangedCoordf64,
                plotters::coord::types::RangedCoordf64,
            >,
        >,
        x: (f64, f64),
        y: (f64, f64),
    ) -> Frame {
        let a = chart.backend_coord(&(x.0, y.0));
        let b = chart.backend_coord(&(x.1, y.1));
        Frame {
            x: [x.0, x.1],
            y: [y.0, y.1],
            px: [a.0, b.0],
            py: [a.1, b.1],
        }
    }

    /// Pixel position of a data point, as a real number.
    pub fn to_pixel(&self, x: f64, y: f64) -> (f64, f64) {
        let fx = (x - self.x[0]) / (self.x[1] - self.x[0]);
        let fy = (y - self.y[0]) / (self.y[1] - self.y[0]);
        (
            self.px[0] as f64 + fx * (self.px[1] - self.px[0]) as f64,
            self.py[0] as f64 + fy * (self.py[1] - self.py[0]) as f64,
        )
    }
}

/// `<metadata>` element carrying the frame as JSON, with id `mixband-frame`.
pub fn frame_metadata(frame: &Frame) -> String {
    let json = serde_json::to_string(frame).unwrap_or_default();
    format!(
        "<metadata id=\"mixband-frame\">{}</metadata>",
        xml_escape(&json)
    )
}

/// A tick label formatter for an axis spanning `span` with about `ticks` labels: as few
/// decimals as the spacing needs, exponent notation for very large or small magnitudes.
pub fn tick_formatter(span: f64, ticks: usize) -> impl Fn(&f64) -> String {
    let step = (span / ticks.max(1) as f64).abs();
    let decimals = if step > 0.0 {
        (-step.log10().floor()).max(0.0) as usize + 1
    } else {
        2
    };
    let big = span.abs() >= 1e6 || (span.abs() < 1e-4 && span != 0.0);
    move |v: &f64| {
        if big {
            format!("{v:.2e}")
        } else {
            let s = format!("{v:.decimals$}");
            trim_zeros(&s)
        }
    }
}

fn trim_zeros(s: &str) -> String {
    if !s.contains('.') {
        return if s == "-0" {
            "0".to_string()
        } else {
            s.to_string()
        };
    }
    let t = s.trim_end_matches('0').trim_end_matches('.');
    if t == "-0" || t.is_empty() {
        "0".to_string()
    } else {
        t.to_string()
    }
}

/// A font of the house style.
pub fn font(size: u32, colour: RGBColor) -> TextStyle<'static> {
    (style::FONT, size).into_font().color(&colour)
}

/// The house axes of a chart: no vertical grid lines, light horizontal guides, the axis
/// line, tick labels at `tick_size` and axis titles in the house fonts. Chainable, so a
/// figure adds only its own ticks, formatters and titles.
pub trait HouseMesh {
    fn house(&mut self, tick_size: u32) -> &mut Self;
}

impl<
        X: plotters::coord::ranged1d::Ranged,
        Y: plotters::coord::ranged1d::Ranged,
        DB: DrawingBackend,
    > HouseMesh for plotters::chart::MeshStyle<'_, '_, X, Y, DB>
{
    fn house(&mut self, tick_size: u32) -> &mut Self {
        self.disable_x_mesh()
            .bold_line_style(style::GUIDE)
            .light_line_style(TRANSPARENT)
            .axis_style(ShapeStyle::from(style::INK).stroke_width(style::AXIS_WIDTH))
            .label_style(font(tick_size, style::INK_SOFT))
            .axis_desc_style(font(style::LABEL_SIZE, style::INK))
    }
}

/// A bold font of the house style.
pub fn bold(size: u32, colour: RGBColor) -> TextStyle<'static> {
    (style::FONT, size, FontStyle::Bold)
        .into_font()
        .color(&colour)
}

/// Padded y range of values (a constant series gets a symmetric pad).
pub fn padded_range(lo: f64, hi: f64, frac: f64) -> (f64, f64) {
    if hi > lo {
        let p = (hi - lo) * frac;
        (lo - p, hi + p)
    } else {
        let p = if lo.abs() > 0.0 { lo.abs() * 0.05 } else { 1.0 };
        (lo - p, hi + p)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_drop_needless_zeros() {
        let f = tick_formatter(0.5, 5);
        assert_eq!(f(&0.1), "0.1");
        assert_eq!(f(&0.25), "0.25");
        let g = tick_formatter(40.0, 8);
        assert_eq!(g(&60.0), "60");
        assert_eq!(g(&62.5), "62.5");
    }
}
