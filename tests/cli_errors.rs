//! Bad input on the built binary: every case exits with code 2, names the culprit (file,
//! line, key, column or data row), never panics, and leaves no run directory behind.

mod robust_support;

use robust_support::{assert_input_error, assert_ok, manifest, stderr, Scratch};

const DATA: &str = "id,x\n1,2.5\n2,3.1\n3,2.9\n4,4.4\n5,3.7\n";

/// A small valid config; tests replace one line to make it wrong.
const BASE: &str = "[data]\nfile = \"d.csv\"\ncolumn = \"x\"\n\n[sampler]\nchains = 2\nwarmup = 10\ndraws = 10\nseed = 1\n";

/// Writes `config` as c.toml and `data` as d.csv, samples into `run`, and returns the output
/// after checking that no run directory was created.
fn sample_with(name: &str, config: &str, data: &[u8]) -> std::process::Output {
    let s = Scratch::new(name);
    s.write("c.toml", config);
    s.write("d.csv", data);
    let out = s.run(&["sample", "c.toml", "--out", "run", "--quiet"]);
    // Exit 3 (the convergence gate failed on these tiny runs) still writes a run directory.
    if !matches!(out.status.code(), Some(0) | Some(3)) {
        assert!(
            !s.path("run").exists(),
            "run directory left behind: {}",
            stderr(&out)
        );
    }
    out
}

fn bad_config(name: &str, config: &str, needles: &[&str]) {
    assert_input_error(&sample_with(name, config, DATA.as_bytes()), needles);
}

fn bad_data(name: &str, data: &str, needles: &[&str]) {
    assert_input_error(&sample_with(name, BASE, data.as_bytes()), needles);
}

fn with_line(extra: &str) -> String {
    format!("{BASE}{extra}\n")
}

#[test]
fn valid_base_config_runs() {
    // Positive control: the config every other case breaks is accepted as written.
    assert_ok(&sample_with("base_ok", BASE, DATA.as_bytes()));
}

// ---- the config file ----

#[test]
fn missing_config_file() {
    let s = Scratch::new("cfg_missing");
    let out = s.run(&["sample", "nope.toml", "--out", "run"]);
    assert_input_error(&out, &["nope.toml", "cannot read config file"]);
    assert!(!s.path("run").exists());
}

#[test]
fn unreadable_config_file() {
    // A folder in place of the file cannot be read as text.
    let s = Scratch::new("cfg_unreadable");
    std::fs::create_dir_all(s.path("c.toml")).unwrap();
    let out = s.run(&["sample", "c.toml", "--out", "run"]);
    assert_input_error(&out, &["c.toml", "cannot read config file"]);
    assert!(!s.path("run").exists());
}

#[test]
fn toml_syntax_error_gives_line_and_column() {
    let cfg = "[data]\nfile = \"d.csv\"\ncolumn = \"x\n";
    bad_config("cfg_syntax", cfg, &["c.toml", "line 3, column"]);
}

#[test]
fn unknown_key_is_named_with_its_line() {
    let cfg = BASE.replace("seed = 1", "seed = 1\ncolour = \"red\"");
    bad_config("cfg_unknown_key", &cfg, &["c.toml", "line 10", "colour"]);
}

#[test]
fn unknown_section_is_named() {
    bad_config(
        "cfg_unknown_section",
        &with_line("[plots]\nwidth = 3"),
        &["line 10", "plots"],
    );
}

#[test]
fn wrong_type_is_named_with_line_and_column() {
    let cfg = BASE.replace("chains = 2", "chains = \"two\"");
    bad_config(
        "cfg_wrong_type",
        &cfg,
        &["c.toml", "line 6, column 10", "expected an integer"],
    );
}

#[test]
fn missing_required_data_file_key() {
    let cfg = BASE.replace("file = \"d.csv\"\n", "");
    bad_config(
        "cfg_no_file",
        &cfg,
        &["c.toml", "missing required key [data] file", "line 1"],
    );
}

#[test]
fn missing_required_column_key() {
    let cfg = BASE.replace("column = \"x\"\n", "");
    bad_config(
        "cfg_no_column",
        &cfg,
        &["missing required key [data] column"],
    );
}

#[test]
fn missing_data_section() {
    bad_config(
        "cfg_no_data",
        "[sampler]\nchains = 2\n",
        &["[data] file", "add a [data] section"],
    );
}

// ---- values out of range: each names the key and its line ----

#[test]
fn zero_chains() {
    bad_config(
        "range_chains",
        &BASE.replace("chains = 2", "chains = 0"),
        &["[sampler] chains", "at least 1", "line 6"],
    );
}

#[test]
fn zero_draws() {
    bad_config(
        "range_draws",
        &BASE.replace("draws = 10", "draws = 0"),
        &["[sampler] draws", "at least 1", "line 8"],
    );
}

#[test]
fn negative_resplit_moves() {
    bad_config(
        "range_resplit",
        &BASE.replace("draws = 10", "draws = 10\nresplit_moves = -2"),
        &["[sampler] resplit_moves", "at least 0", "line 9"],
    );
}

#[test]
fn zero_components() {
    let cfg = with_line("[model]\ncomponents = 0");
    bad_config(
        "range_k",
        &cfg,
        &["[model] components", "at least 1", "line 11"],
    );
}

#[test]
fn absurd_components_refused_before_allocating() {
    let cfg = with_line("[model]\ncomponents = 100000000000");
    bad_config(
        "range_k_huge",
        &cfg,
        &["[model] components", "at most", "line 11"],
    );
}

#[test]
fn negative_prior_scale() {
    let cfg = with_line("[prior]\nvar_scale = -1.0");
    bad_config(
        "range_prior_neg",
        &cfg,
        &["[prior] var_scale", "positive", "line 11"],
    );
}

#[test]
fn zero_prior_scale() {
    let cfg = with_line("[prior]\ncentre_sd = 0.0");
    bad_config(
        "range_prior_zero",
        &cfg,
        &["[prior] centre_sd", "positive", "line 11"],
    );
}

#[test]
fn level_of_one_is_outside_the_unit_interval() {
    let cfg = with_line("[bands]\nlevels = [0.5, 1.0]");
    bad_config(
        "range_level_one",
        &cfg,
        &["[bands] levels", "strictly between 0 and 1", "line 11"],
    );
}

#[test]
fn level_of_zero_is_outside_the_unit_interval() {
    let cfg = with_line("[bands]\nlevels = [0.0]");
    bad_config(
        "range_level_zero",
        &cfg,
        &["[bands] levels", "strictly between 0 and 1"],
    );
}

#[test]
fn grid_from_not_below_to() {
    let cfg = with_line("[grid]\nfrom = 5.0\nto = 5.0");
    bad_config(
        "range_grid",
        &cfg,
        &["[grid] from", "below [grid] to", "line 11"],
    );
}

#[test]
fn grid_with_one_point() {
    let cfg = with_line("[grid]\npoints = 1");
    bad_config(
        "range_points",
        &cfg,
        &["[grid] points", "at least 2", "line 11"],
    );
}

#[test]
fn dotted_key_is_located() {
    let cfg = "data.file = \"d.csv\"\ndata.column = \"x\"\nsampler.chains = 0\n";
    bad_config("range_dotted", cfg, &["[sampler] chains", "line 3"]);
}

#[test]
fn prior_unusable_in_standard_units() {
    // 1e-320 is a positive double, but divided by the data's sd it is no longer usable.
    let cfg = with_line("[model]\nkernel = \"location\"\n[prior]\ncentre_sd = 1e-320");
    bad_config(
        "range_prior_tiny",
        &cfg,
        &["[prior] centre_sd", "standard units"],
    );
}

// ---- the data file ----

#[test]
fn data_file_missing() {
    let cfg = BASE.replace("d.csv", "nope.csv");
    bad_config("data_missing", &cfg, &["[data] file", "nope.csv"]);
}

#[test]
fn column_missing_lists_existing_columns() {
    bad_data(
        "data_no_column",
        "id,y,z\n1,2,3\n",
        &["d.csv", "no column \"x\"", "\"id\", \"y\", \"z\""],
    );
}

#[test]
fn non_numeric_cell_names_row() {
    bad_data(
        "data_text",
        "id,x\n1,2.5\n2,abc\n3,1\n",
        &["d.csv", "line 3 (data row 2)", "\"abc\"", "not a number"],
    );
}

#[test]
fn empty_cell_is_an_error_by_default() {
    bad_data(
        "data_empty_cell",
        "id,x\n1,2.5\n2,\n3,1\n",
        &["d.csv", "data row 2", "empty", "missing = \"drop\""],
    );
}

#[test]
fn empty_column() {
    bad_data(
        "data_empty_column",
        "id,x\n1,\n2,\n",
        &["d.csv", "data row 1", "empty"],
    );
}

#[test]
fn empty_column_with_drop() {
    let cfg = BASE.replace("column = \"x\"", "column = \"x\"\nmissing = \"drop\"");
    let out = sample_with("data_empty_column_drop", &cfg, b"id,x\n1,\n2,\n");
    assert_input_error(&out, &["d.csv", "no observations", "2 empty cells dropped"]);
}

#[test]
fn header_only() {
    bad_data("data_header_only", "id,x\n", &["d.csv", "no observations"]);
}

#[test]
fn nan_cell_names_row() {
    bad_data(
        "data_nan",
        "id,x\n1,2\n2,3\n3,NaN\n",
        &["d.csv", "data row 3", "NaN", "finite"],
    );
}

#[test]
fn infinite_cells_name_row() {
    bad_data(
        "data_inf",
        "id,x\n1,2\n2,inf\n3,1\n",
        &["d.csv", "data row 2", "inf"],
    );
    bad_data(
        "data_neg_inf",
        "id,x\n1,2\n2,3\n3,-Infinity\n",
        &["d.csv", "data row 3", "-Infinity"],
    );
    // 1e400 overflows to infinity when parsed.
    bad_data(
        "data_overflow_literal",
        "id,x\n1,1e400\n2,3\n",
        &["d.csv", "data row 1", "1e400"],
    );
}

#[test]
fn one_observation() {
    bad_data(
        "data_one",
        "id,x\n1,2\n",
        &["d.csv", "1 observation", "at least 2"],
    );
}

#[test]
fn identical_values() {
    bad_data(
        "data_constant",
        "id,x\n1,7\n2,7\n3,7\n",
        &["d.csv", "all 3 observations equal 7"],
    );
}

#[test]
fn range_whose_square_overflows() {
    bad_data(
        "data_huge",
        "id,x\n1,1e200\n2,-1e200\n3,5e199\n",
        &["d.csv", "span from -1e200 to 1e200", "overflow"],
    );
}

#[test]
fn spread_whose_square_underflows() {
    bad_data(
        "data_tiny",
        "id,x\n1,1e-170\n2,2e-170\n3,4e-170\n",
        &["d.csv", "standard deviation", "underflow"],
    );
}

#[test]
fn spread_lost_in_rounding() {
    bad_data(
        "data_rounding",
        "id,x\n1,1\n2,1.0000000000000002\n3,1\n",
        &["d.csv", "last few digits"],
    );
}

#[test]
fn ragged_row_names_line() {
    bad_data(
        "data_ragged",
        "id,x\n1,2\n2\n3,4\n",
        &["d.csv", "line 3", "1 fields"],
    );
}

#[test]
fn invalid_utf8_names_line() {
    let out = sample_with("data_utf8", BASE, b"id,x\n1,2\n2,\xff\xfe\n3,1\n");
    assert_input_error(&out, &["d.csv", "line 3", "UTF-8"]);
}

#[test]
fn duplicated_column_name() {
    bad_data(
        "data_dup_column",
        "x,id,x\n1,2,3\n4,5,6\n",
        &["d.csv", "\"x\" 2 times", "columns 1, 3"],
    );
}

// ---- accepted edge cases (controls for the refusals above) ----

#[test]
fn huge_offset_and_tiny_spread_are_handled() {
    let big = "id,x\n1,1e150\n2,1.0000000001e150\n3,1.0000000003e150\n4,1.0000000002e150\n";
    assert_ok(&sample_with("data_offset_1e150", BASE, big.as_bytes()));
    let tiny = "id,x\n1,1e-150\n2,2e-150\n3,4e-150\n4,3e-150\n";
    assert_ok(&sample_with("data_spread_1e-150", BASE, tiny.as_bytes()));
}

#[test]
fn drop_policy_reports_how_many_were_dropped() {
    let s = Scratch::new("data_drop");
    s.write(
        "c.toml",
        BASE.replace("column = \"x\"", "column = \"x\"\nmissing = \"drop\""),
    );
    s.write("d.csv", "id,x\n1,2.5\n2,\n3,2.9\n4,\n5,3.7\n6,1.0\n");
    let out = s.run(&["sample", "c.toml", "--out", "run", "--quiet"]);
    assert_ok(&out);
    assert!(
        stderr(&out).contains("(2 empty cells dropped)"),
        "{}",
        stderr(&out)
    );
    let m = manifest(&s.path("run"));
    assert_eq!(m["data"]["dropped"], 2);
    assert_eq!(m["data"]["n"], 4);
}

// ---- the output directory and the command line ----

#[test]
fn existing_non_run_directory_is_refused_and_kept() {
    let s = Scratch::new("out_foreign");
    s.write("c.toml", BASE);
    s.write("d.csv", DATA);
    s.write("run/notes.txt", "mine");
    for force in [false, true] {
        let mut args = vec!["sample", "c.toml", "--out", "run", "--quiet"];
        if force {
            args.push("--force");
        }
        let out = s.run(&args);
        assert_input_error(&out, &["run"]);
        assert_eq!(
            std::fs::read_to_string(s.path("run/notes.txt")).unwrap(),
            "mine"
        );
        assert_eq!(
            std::fs::read_dir(s.path("run")).unwrap().count(),
            1,
            "something was added to run/"
        );
    }
}

#[test]
fn existing_run_needs_force() {
    let s = Scratch::new("out_rerun");
    s.write("c.toml", BASE);
    s.write("d.csv", DATA);
    assert_ok(&s.run(&["sample", "c.toml", "--out", "run", "--quiet"]));
    assert_input_error(
        &s.run(&["sample", "c.toml", "--out", "run", "--quiet"]),
        &["--force"],
    );
    assert_ok(&s.run(&["sample", "c.toml", "--out", "run", "--quiet", "--force"]));
}

#[test]
fn out_naming_a_file_is_refused() {
    let s = Scratch::new("out_file");
    s.write("c.toml", BASE);
    s.write("d.csv", DATA);
    s.write("run", "a file");
    assert_input_error(
        &s.run(&["sample", "c.toml", "--out", "run"]),
        &["run", "not a directory"],
    );
    assert_eq!(std::fs::read_to_string(s.path("run")).unwrap(), "a file");
}

#[test]
fn argument_errors_exit_2() {
    let s = Scratch::new("args");
    s.write("c.toml", BASE);
    s.write("d.csv", DATA);
    assert_input_error(
        &s.run(&["sample", "c.toml", "--out", "run", "--bogus"]),
        &["--bogus"],
    );
    assert_input_error(&s.run(&["sample", "c.toml"]), &["--out"]);
    assert_input_error(
        &s.run(&["sample", "c.toml", "--out", "run", "--threads", "two"]),
        &["--threads"],
    );
    assert_input_error(
        &s.run(&["sample", "c.toml", "--out", "run", "--threads", "0"]),
        &["--threads"],
    );
    assert_input_error(&s.run(&["frobnicate"]), &["frobnicate"]);
    assert!(!s.path("run").exists());
}

#[test]
fn resume_and_extend_of_a_non_run() {
    let s = Scratch::new("resume_non_run");
    std::fs::create_dir_all(s.path("empty")).unwrap();
    assert_input_error(
        &s.run(&["resume", "empty"]),
        &["empty", "mixband run directory"],
    );
    assert_input_error(
        &s.run(&["extend", "empty", "--draws", "5"]),
        &["empty", "mixband run directory"],
    );
    assert_input_error(&s.run(&["extend", "empty", "--draws", "0"]), &["--draws"]);
}

#[test]
fn shape_region_with_ends_reversed() {
    let cfg = with_line("[shape]\nregions = [[1.0, 2.0], [4.0, 3.0]]");
    bad_config(
        "shape_region_reversed",
        &cfg,
        &["[shape] regions entry 2 is [4, 3]", "from < to", "line 11"],
    );
}

#[test]
fn shape_dip_ratio_outside_the_unit_interval() {
    let cfg = with_line("[shape]\ndip_ratio = 1.5");
    bad_config(
        "shape_dip_ratio",
        &cfg,
        &["[shape] dip_ratio", "strictly between 0 and 1", "line 11"],
    );
}
