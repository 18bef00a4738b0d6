//! Property tests: no config text, CSV bytes or chain table, however malformed, makes a
//! loader panic; whatever a loader accepts is usable (finite, standardised data).

use std::path::Path;

use mixband::config::{parse_config_str, resolve, MissingPolicy};
use mixband::data::{load_column_from_reader, Standardised};
use mixband::run::Prepared;
use proptest::prelude::*;

/// Config lines built from real sections and keys with values of every TOML type, mixed
/// with arbitrary text, so that both the parser and the range checks are exercised.
fn config_line() -> impl Strategy<Value = String> {
    let section = prop::sample::select(vec![
        "[data]",
        "[model]",
        "[prior]",
        "[sampler]",
        "[grid]",
        "[bands]",
        "[gate]",
        "[junk]",
        "[[data]]",
    ]);
    let key = prop::sample::select(vec![
        "file",
        "column",
        "missing",
        "units",
        "kernel",
        "weights",
        "components",
        "centre",
        "centre_sd",
        "centre_shrink",
        "var_shape",
        "var_scale_prior",
        "var_scale",
        "var_scale_shape",
        "var_scale_rate",
        "dirichlet_delta",
        "alpha_prior",
        "alpha",
        "alpha_shape",
        "alpha_rate",
        "chains",
        "warmup",
        "draws",
        "thin",
        "seed",
        "from",
        "to",
        "points",
        "levels",
        "max_rhat",
        "min_ess",
        "min_chains",
        "bogus",
        "sampler.chains",
        "grid.from",
    ]);
    let value = prop_oneof![
        any::<i64>().prop_map(|v| v.to_string()),
        prop::sample::select(vec![-1i64, 0, 1, 2, 3, 10, 100_000]).prop_map(|v| v.to_string()),
        any::<f64>().prop_map(|v| if v.is_finite() {
            format!("{v:?}")
        } else {
            "nan".into()
        }),
        prop::sample::select(vec![
            "inf", "-inf", "nan", "1e308", "-1e-320", "0.0", "0.5", "1.0"
        ])
        .prop_map(String::from),
        prop::sample::select(vec![
            "\"d.csv\"",
            "\"x\"",
            "\"drop\"",
            "\"error\"",
            "\"location\"",
            "\"location-scale\"",
            "\"dirichlet\"",
            "\"stick-breaking\"",
            "\"fixed\"",
            "\"gamma\"",
            "\"\"",
        ])
        .prop_map(String::from),
        prop::collection::vec(any::<f64>(), 0..4).prop_map(|v| {
            let cells: Vec<String> = v
                .iter()
                .map(|x| {
                    if x.is_finite() {
                        format!("{x:?}")
                    } else {
                        "0.5".into()
                    }
                })
                .collect();
            format!("[{}]", cells.join(", "))
        }),
        "\\PC{0,12}".prop_map(|s| s),
    ];
    prop_oneof![
        section.prop_map(String::from),
        (key, value).prop_map(|(k, v)| format!("{k} = {v}")),
        "\\PC{0,30}".prop_map(|s| s),
    ]
}

fn config_text() -> impl Strategy<Value = String> {
    prop::collection::vec(config_line(), 0..25).prop_map(|lines| lines.join("\n"))
}

/// CSV-like text: a header and rows of cells that are numbers, extremes, blanks or junk.
fn csv_text() -> impl Strategy<Value = String> {
    let cell = prop_oneof![
        any::<f64>().prop_map(|v| format!("{v:?}")),
        (-1e3f64..1e3).prop_map(|v| format!("{v}")),
        prop::sample::select(vec![
            "", " ", "NaN", "inf", "-inf", "1e400", "1e-400", "abc", "\"1,5\"", "0x1", "1e150", "#"
        ])
        .prop_map(String::from),
        "\\PC{0,6}".prop_map(|s| s),
    ];
    let row = prop::collection::vec(cell, 0..4).prop_map(|c| c.join(","));
    (
        prop::sample::select(vec!["x", "x,y", "y,x", "x,x", "", "y"]),
        prop::collection::vec(row, 0..30),
    )
        .prop_map(|(h, rows)| format!("{h}\n{}", rows.join("\n")))
}

fn check_csv(bytes: &[u8]) {
    for policy in [MissingPolicy::Error, MissingPolicy::Drop] {
        if let Ok(sample) = load_column_from_reader(bytes, "p.csv", "x", policy) {
            assert!(sample.values.iter().all(|v| v.is_finite()));
            if let Ok(st) = Standardised::new(&sample.values, "p.csv") {
                assert!(st.z.iter().all(|v| v.is_finite()));
                assert!(st.scale.is_finite() && st.scale > 0.0);
            }
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn config_text_never_panics(text in config_text()) {
        if let Ok(raw) = parse_config_str(&text, "p.toml") {
            let _ = resolve(&raw, &text, "p.toml", Path::new("."), None);
        }
    }

    #[test]
    fn config_and_data_together_never_panic(valid_start in any::<bool>(), rest in config_text(), csv in csv_text()) {
        // Half the cases start with a valid [data] section so the data checks are reached.
        let text = if valid_start { format!("[data]\nfile = \"d.csv\"\ncolumn = \"x\"\n{rest}") } else { rest };
        // The whole preparation step, with the data given as bytes (as the demo does).
        if let Ok(prep) = Prepared::from_text(&text, "p.toml", Path::new("."), Some(csv.as_bytes())) {
            prop_assert!(prep.data.z.iter().all(|v| v.is_finite()));
            prop_assert!(prep.config.grid_from < prep.config.grid_to);
        }
    }

    #[test]
    fn csv_text_never_panics(csv in csv_text()) {
        check_csv(csv.as_bytes());
    }

    #[test]
    fn csv_bytes_never_panic(bytes in prop::collection::vec(any::<u8>(), 0..400)) {
        let mut with_header = b"x,y\n".to_vec();
        with_header.extend_from_slice(&bytes);
        check_csv(&bytes);
        check_csv(&with_header);
    }

    #[test]
    fn extreme_values_are_standardised_or_refused(values in prop::collection::vec(any::<f64>().prop_filter("finite", |v| v.is_finite()), 0..40)) {
        let csv = std::iter::once("x".to_string()).chain(values.iter().map(|v| format!("{v:?}"))).collect::<Vec<_>>().join("\n");
        check_csv(csv.as_bytes());
    }

    #[test]
    fn chain_tables_never_panic(body in "\\PC{0,200}", k in 1usize..3) {
        let mut text = String::from("iteration,loglik,occupied,concentration");
        for j in 1..=k {
            text.push_str(&format!(",weight_{j},mean_{j},sd_{j}"));
        }
        text.push('\n');
        text.push_str(&body);
        let _ = mixband::store::parse_chain(&text, "p.csv", 1);
        let _ = mixband::store::parse_chain(&body, "p.csv", 1);
    }

    #[test]
    fn key_location_never_panics(text in "\\PC{0,200}", section in "[a-z]{0,6}", key in "[a-z.]{0,6}") {
        let _ = mixband::config::locate::key_line(&text, &section, &key);
        let _ = mixband::config::locate::section_line(&text, &section);
    }
}
