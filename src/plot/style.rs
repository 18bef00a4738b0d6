//! The one place where mixband's visual style is decided: palette, line weights, fonts and
//! figure sizes. Every figure and the HTML report take their look from here.
//!
//! The look, chosen for mixband: warm paper background, slate ink, no chart box and no
//! vertical grid, faint horizontal guides only; the density's credible bands are opaque
//! tints of one sea-green, darker towards the centre, so nested levels read as depth
//! rather than as separate series; the posterior mean is a heavy dark-slate line on top;
//! the data appear as a warm sand histogram with a brown outline; the comparison kernel
//! estimate is a brick-red dashed line; chains get a set of earthy, mutually distinct hues.

use plotters::style::RGBColor;

/// Figure background.
pub const PAPER: RGBColor = RGBColor(0xFB, 0xFA, 0xF6);
/// Text, axes, the rug.
pub const INK: RGBColor = RGBColor(0x27, 0x30, 0x3A);
/// Tick labels and secondary text.
pub const INK_SOFT: RGBColor = RGBColor(0x5D, 0x66, 0x70);
/// Horizontal guide lines.
pub const GUIDE: RGBColor = RGBColor(0xE7, 0xE3, 0xDA);
/// Hue of the credible bands; each level is a tint of it towards [`PAPER`].
pub const BAND_HUE: RGBColor = RGBColor(0x2F, 0x7D, 0x6D);
/// The posterior mean density.
pub const MEAN_LINE: RGBColor = RGBColor(0x16, 0x2E, 0x36);
/// Histogram fill and outline.
pub const HIST_FILL: RGBColor = RGBColor(0xEE, 0xE4, 0xD0);
pub const HIST_EDGE: RGBColor = RGBColor(0xA8, 0x8F, 0x68);
/// The comparison kernel density estimate, and gate thresholds.
pub const ACCENT: RGBColor = RGBColor(0xB3, 0x47, 0x2D);
/// Where a diagnostic fails its threshold.
pub const ALERT_FILL: RGBColor = RGBColor(0xF4, 0xD9, 0xCF);

/// Chain colours, in chain order (repeated past eight chains).
pub const CHAINS: [RGBColor; 8] = [
    RGBColor(0x2E, 0x68, 0x8C), // harbour blue
    RGBColor(0xC2, 0x6A, 0x2C), // clay orange
    RGBColor(0x5A, 0x8A, 0x3A), // moss
    RGBColor(0x86, 0x4E, 0x92), // heather
    RGBColor(0xB0, 0x8D, 0x1E), // mustard
    RGBColor(0x3C, 0x93, 0x93), // lagoon
    RGBColor(0xA8, 0x3E, 0x5A), // raspberry
    RGBColor(0x5B, 0x5B, 0x63), // graphite
];

/// Font stack written into every SVG text element (no font files are embedded).
pub const FONT: &str = "DejaVu Sans, Verdana, Arial, sans-serif";
/// Font sizes in plotters units (the SVG backend writes size / 1.24 as CSS pixels).
pub const TITLE_SIZE: u32 = 21;
pub const LABEL_SIZE: u32 = 17;
pub const TICK_SIZE: u32 = 15;
pub const NOTE_SIZE: u32 = 14;

/// Line weights in pixels.
pub const MEAN_WIDTH: u32 = 3;
pub const KDE_WIDTH: u32 = 2;
pub const TRACE_WIDTH: u32 = 1;
pub const AXIS_WIDTH: u32 = 1;
/// Dash and gap of the kernel estimate, in pixels.
pub const DASH: (u32, u32) = (9, 6);
/// Height of a rug tick, in pixels.
pub const RUG_HEIGHT: i32 = 9;
/// Opacity of a rug tick (ticks pile up where data are dense).
pub const RUG_ALPHA: f64 = 0.45;

/// Figure sizes in pixels (width, height).
pub const DENSITY_SIZE: (u32, u32) = (960, 560);
pub const TRACE_PANEL: (u32, u32) = (960, 190);
pub const RANK_CELL: (u32, u32) = (230, 150);
pub const GRID_DIAG_SIZE: (u32, u32) = (960, 520);

/// The rug is drawn when the sample has at most this many observations.
pub const RUG_MAX_N: usize = 2000;
/// At most this many points of a trace are drawn per chain (evenly thinned beyond).
pub const TRACE_MAX_POINTS: usize = 1500;

/// Fill of credible level `i` of `count` levels sorted from widest (i = 0) to narrowest:
/// the widest is the lightest tint, the narrowest the strongest.
pub fn band_fill(i: usize, count: usize) -> RGBColor {
    let (lo, hi) = (0.22, 0.62);
    let t = if count <= 1 {
        0.45
    } else {
        lo + (hi - lo) * i as f64 / (count - 1) as f64
    };
    mix(PAPER, BAND_HUE, t)
}

/// The colour of chain number `i` (0-based position in the run).
pub fn chain_colour(i: usize) -> RGBColor {
    CHAINS[i % CHAINS.len()]
}

/// `a` moved a fraction `t` of the way towards `b`.
pub fn mix(a: RGBColor, b: RGBColor, t: f64) -> RGBColor {
    let m = |x: u8, y: u8| {
        (x as f64 + (y as f64 - x as f64) * t)
            .round()
            .clamp(0.0, 255.0) as u8
    };
    RGBColor(m(a.0, b.0), m(a.1, b.1), m(a.2, b.2))
}

/// `#rrggbb` text of a colour, as the SVG backend writes it (upper-case hex).
pub fn hex(c: RGBColor) -> String {
    format!("#{:02X}{:02X}{:02X}", c.0, c.1, c.2)
}

/// CSS of the HTML report, built from the same palette.
pub fn report_css() -> String {
    format!(
        r#"
:root {{ --paper: {paper}; --ink: {ink}; --soft: {soft}; --guide: {guide}; --band: {band}; --accent: {accent}; --alert: {alert}; }}
body {{ background: var(--paper); color: var(--ink); font-family: {font}; margin: 0; line-height: 1.45; }}
main {{ max-width: 1000px; margin: 0 auto; padding: 24px 28px 60px; }}
h1 {{ font-size: 26px; margin: 8px 0 4px; letter-spacing: 0.01em; }}
h2 {{ font-size: 19px; margin: 34px 0 10px; border-bottom: 2px solid var(--guide); padding-bottom: 4px; }}
p, li {{ font-size: 15px; }}
.sub {{ color: var(--soft); margin: 0 0 16px; }}
.banner {{ padding: 14px 18px; border-left: 8px solid; margin: 16px 0; font-size: 16px; }}
.banner.ok {{ border-color: var(--band); background: {band_tint}; }}
.banner.fail {{ border-color: var(--accent); background: var(--alert); }}
.banner.unknown {{ border-color: var(--soft); background: var(--guide); }}
.banner strong {{ font-size: 19px; letter-spacing: 0.04em; }}
table {{ border-collapse: collapse; font-size: 14px; margin: 8px 0; }}
th, td {{ padding: 4px 12px; text-align: right; border-bottom: 1px solid var(--guide); }}
th:first-child, td:first-child {{ text-align: left; }}
th {{ color: var(--soft); font-weight: 600; }}
td.bad {{ color: var(--accent); font-weight: 700; }}
dl.meta {{ display: grid; grid-template-columns: max-content 1fr; gap: 3px 18px; font-size: 14px; }}
dl.meta dt {{ color: var(--soft); }}
dl.meta dd {{ margin: 0; overflow-wrap: anywhere; }}
figure {{ margin: 12px 0; }}
figure svg {{ width: 100%; height: auto; display: block; }}
figcaption {{ color: var(--soft); font-size: 13px; margin-top: 4px; }}
pre {{ background: #fff; border: 1px solid var(--guide); padding: 10px; font-size: 12px; overflow-x: auto; }}
a.download {{ display: inline-block; padding: 6px 12px; border: 1px solid var(--band); color: var(--ink); text-decoration: none; background: #fff; }}
.caution {{ border: 1px dashed var(--soft); padding: 10px 14px; font-size: 14px; }}
"#,
        paper = hex(PAPER),
        ink = hex(INK),
        soft = hex(INK_SOFT),
        guide = hex(GUIDE),
        band = hex(BAND_HUE),
        band_tint = hex(mix(PAPER, BAND_HUE, 0.12)),
        accent = hex(ACCENT),
        alert = hex(ALERT_FILL),
        font = FONT,
    )
}
