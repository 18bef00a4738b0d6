//! How the values were recorded, as report.html states it: the resolution in force (a row
//! of the run's metadata) and, when the values lie on a lattice they are not treated as
//! recorded to, or are heaped on a coarser step, a note under the verdict naming it and the
//! `[data] resolution` key.

use std::fmt::Write as _;

use super::encode::html_escape;
use crate::data::Recording;

/// The metadata row: the values treated as exact, or as recorded to the resolution.
pub fn treatment(rec: Option<&Recording>, resolution: Option<f64>) -> String {
    match rec {
        Some(r) => r.treatment(),
        None => Recording {
            resolution,
            n: 0,
            distinct: 0,
            lattice: None,
            heaping: None,
        }
        .treatment(),
    }
}

/// Appends the note, when there is something to say.
pub fn recording_note(out: &mut String, rec: Option<&Recording>) {
    let Some(r) = rec else { return };
    let notes = r.notes();
    if notes.is_empty() {
        return;
    }
    let items: String = notes
        .iter()
        .map(|n| format!("<li>{}.</li>", with_code(&capitalised(n))))
        .collect();
    let _ = writeln!(
        out,
        "<div class=\"banner unknown\" id=\"recording-note\"><strong>HOW THE VALUES WERE RECORDED</strong> · {}.<ul>{items}</ul></div>",
        html_escape(&capitalised(&r.treatment()))
    );
}

/// `text` escaped, with its `quoted` spans (config keys) set as code.
fn with_code(text: &str) -> String {
    text.split('`')
        .enumerate()
        .map(|(i, part)| {
            if i % 2 == 1 {
                format!("<code>{}</code>", html_escape(part))
            } else {
                html_escape(part)
            }
        })
        .collect()
}

fn capitalised(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}
