//! report.html: one well-formed, self-contained page (parsed with roxmltree) holding the
//! figures, the metadata, the verdict banner taken from diagnostics.json, the bands CSV as
//! an embedded download identical to RUN/bands.csv, and the caution.

mod plot_support;

use plot_support::plotrun::{make_run, scratch};

/// Standard base64 decoding (RFC 4648 section 4), written here independently of the
/// encoder under test.
fn b64_decode(s: &str) -> Vec<u8> {
    let val = |c: u8| -> u32 {
        match c {
            b'A'..=b'Z' => (c - b'A') as u32,
            b'a'..=b'z' => (c - b'a' + 26) as u32,
            b'0'..=b'9' => (c - b'0' + 52) as u32,
            b'+' => 62,
            b'/' => 63,
            _ => panic!("bad base64 byte {c}"),
        }
    };
    let mut out = Vec::new();
    for chunk in s.as_bytes().chunks(4) {
        let pad = chunk.iter().filter(|&&c| c == b'=').count();
        let mut n = 0u32;
        for &c in chunk {
            n = n << 6 | if c == b'=' { 0 } else { val(c) };
        }
        let bytes = [(n >> 16) as u8, (n >> 8) as u8, n as u8];
        out.extend_from_slice(&bytes[..3 - pad]);
    }
    out
}

/// Parses the page as XML; the HTML doctype is a DTD to roxmltree, so allow it.
fn parse(html: &str) -> Result<roxmltree::Document<'_>, roxmltree::Error> {
    let opt = roxmltree::ParsingOptions {
        allow_dtd: true,
        ..Default::default()
    };
    roxmltree::Document::parse_with_options(html, opt)
}

fn report(run: &std::path::Path) -> String {
    let code =
        mixband::cli::main_with_args(["mixband", "report", run.to_str().unwrap()].map(Into::into));
    assert_eq!(code, 0);
    std::fs::read_to_string(run.join("report.html")).unwrap()
}

#[test]
fn report_is_self_contained_well_formed_and_carries_the_bands() {
    let dir = scratch("report");
    let run = make_run(&dir, 120, &[]);
    assert!(
        run.join("report.html").exists(),
        "sample did not write the report"
    );
    let html = report(&run);
    let doc = parse(&html).unwrap_or_else(|e| panic!("report.html is not well-formed: {e}"));

    // Nothing is fetched: every link or source is inline data or an anchor.
    for n in doc.descendants() {
        for a in ["src", "href"] {
            if let Some(v) = n.attribute(a) {
                assert!(
                    v.starts_with("data:") || v.starts_with('#'),
                    "external reference {a}=\"{v}\""
                );
            }
        }
        assert!(
            !n.has_tag_name("script"),
            "the report must not need scripts"
        );
    }
    assert!(
        !html.contains("@import") && !html.contains("url("),
        "CSS must not load anything"
    );

    // The density, CDF, trace, rank, grid and LOO-PIT (model check) figures are inline.
    let svgs = doc.descendants().filter(|n| n.has_tag_name("svg")).count();
    assert_eq!(svgs, 6);

    // The bump table has one row per bump of summary.json.
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(run.join("summary.json")).unwrap()).unwrap();
    let table = doc
        .descendants()
        .find(|n| n.attribute("id") == Some("bumps"))
        .expect("a bump table");
    let rows = table.descendants().filter(|n| n.has_tag_name("tr")).count();
    assert_eq!(rows, 1 + summary["bumps"].as_array().unwrap().len());

    // The download is RUN/bands.csv byte for byte.
    let link = doc
        .descendants()
        .find(|n| n.attribute("id") == Some("bands-download"))
        .unwrap();
    assert_eq!(link.attribute("download"), Some("bands.csv"));
    let href = link.attribute("href").unwrap();
    let b64 = href.strip_prefix("data:text/csv;base64,").unwrap();
    assert_eq!(
        b64_decode(b64),
        std::fs::read(run.join("bands.csv")).unwrap()
    );

    // Metadata: version, data hash, n, seed.
    let manifest: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(run.join("manifest.json")).unwrap()).unwrap();
    assert!(html.contains(manifest["data"]["sha256"].as_str().unwrap()));
    assert!(html.contains(&format!("mixband {}", env!("CARGO_PKG_VERSION"))));
    assert!(html.contains("n = 120"));
    assert!(html.contains("seed</dt><dd>5</dd>"));
    let caution = doc
        .descendants()
        .find(|n| n.attribute("id") == Some("caution"))
        .unwrap();
    assert!(caution
        .text()
        .unwrap()
        .contains("not a substitute for checking the model against the data"));

    // The shape section shows summary.json: one row per number of modes, with its
    // probability, and the occupied-components table says it is not the number of modes.
    let summary: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(run.join("summary.json")).unwrap()).unwrap();
    let modes = doc
        .descendants()
        .find(|n| n.attribute("id") == Some("modes"))
        .expect("modes table");
    let rows: Vec<Vec<String>> = modes
        .descendants()
        .filter(|n| n.has_tag_name("tr"))
        .skip(1)
        .map(|tr| {
            tr.children()
                .filter(|c| c.has_tag_name("td"))
                .map(|td| td.text().unwrap_or("").to_string())
                .collect()
        })
        .collect();
    let dist = summary["modes"]["distribution"].as_array().unwrap();
    assert_eq!(rows.len(), dist.len());
    for (row, d) in rows.iter().zip(dist) {
        assert_eq!(row[0], d["count"].as_u64().unwrap().to_string());
        let p: f64 = row[1].parse().unwrap();
        assert!(
            (p - d["probability"].as_f64().unwrap()).abs() < 5e-4,
            "{row:?} vs {d}"
        );
    }
    assert!(doc
        .descendants()
        .any(|n| n.attribute("id") == Some("functionals")));
    assert!(html.contains("NOT the number of modes"));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn banner_follows_the_gate() {
    let dir = scratch("report-banner");
    let run = make_run(&dir, 90, &["--no-report"]);
    assert!(
        !run.join("report.html").exists(),
        "--no-report still wrote a report"
    );
    let verdict = |html: &str| -> String {
        let doc = parse(html).unwrap();
        let b = doc
            .descendants()
            .find(|n| n.attribute("id") == Some("verdict"))
            .unwrap();
        b.descendants().filter_map(|n| n.text()).collect::<String>()
    };
    // The gate wrote diagnostics.json; the banner shows its verdict.
    let diag = run.join("diagnostics.json");
    let original: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&diag).unwrap()).unwrap();
    let passed = original["passed"].as_bool().unwrap();
    let v = verdict(&report(&run));
    if passed {
        assert!(
            v.contains("CONVERGED") && !v.contains("NOT CONVERGED"),
            "{v}"
        );
    } else {
        assert!(v.contains("NOT CONVERGED"), "{v}");
    }
    // A failed gate, with the gate's own sentences, is shown as such.
    let mut failed = original.clone();
    failed["passed"] = serde_json::Value::Bool(false);
    failed["failures"] = serde_json::json!(["loglik: R-hat 1.2 above 1.01"]);
    failed["advice"] = serde_json::json!(["run more draws"]);
    std::fs::write(&diag, serde_json::to_vec(&failed).unwrap()).unwrap();
    let v = verdict(&report(&run));
    assert!(
        v.contains("NOT CONVERGED")
            && v.contains("loglik: R-hat 1.2 above 1.01")
            && v.contains("run more draws"),
        "{v}"
    );
    // Without diagnostics.json nothing claims convergence.
    std::fs::remove_file(&diag).unwrap();
    let v = verdict(&report(&run));
    assert!(
        v.contains("CONVERGENCE NOT ASSESSED") || v.contains("NOT CONVERGED"),
        "{v}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
