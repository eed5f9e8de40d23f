//! The material library through the real binary: publish, list, show, history, promote, retire,
//! diff, catalog and verify. Fit inputs are built in Rust (tests/library_fixture) so that the
//! residuals, and therefore the vetting verdicts, are known in closed form.

mod common;
mod library_fixture;

use common::{mucurve_in, Run, Scratch};
use library_fixture as fx;
use mucurve::library::Library;
use serde_json::Value;
use std::path::Path;

fn lib_args<'a>(args: &[&'a str]) -> Vec<&'a str> {
    let mut v = args.to_vec();
    v.extend(["--library", "lib"]);
    v
}

fn run(s: &Scratch, args: &[&str]) -> Run {
    mucurve_in(s.dir.path(), &lib_args(args))
}

/// Publish `report` as `id` and return the version number printed.
fn publish(s: &Scratch, id: &str, report: &mucurve::fit::report::FitReport) -> u32 {
    let name = format!(
        "{}-{}.fit.json",
        id,
        std::time::SystemTime::now()
            .duration_since(std::time::UNIX_EPOCH)
            .unwrap()
            .as_nanos()
    );
    fx::write_fit(s.dir.path(), &name, report);
    let out = run(s, &["publish", &name, "--material", id]).ok();
    published_version(&out.stdout, id)
}

fn published_version(stdout: &str, id: &str) -> u32 {
    let prefix = format!("published {}@", id);
    let rest = stdout
        .lines()
        .find_map(|l| l.strip_prefix(&prefix))
        .unwrap_or_else(|| panic!("no '{}' in {}", prefix, stdout));
    rest.split_whitespace().next().unwrap().parse().unwrap()
}

fn json(out: &Run) -> Value {
    serde_json::from_str(&out.stdout).unwrap_or_else(|e| panic!("not JSON ({e}): {}", out.stdout))
}

#[test]
fn publish_numbers_versions_consecutively_and_never_rewrites_one() {
    let s = Scratch::new();
    assert_eq!(publish(&s, "ni-a", &fx::good_fit()), 1);
    let first = std::fs::read(s.path("lib/ni-a/v0001.json")).unwrap();
    assert_eq!(publish(&s, "ni-a", &fx::good_fit()), 2);
    assert_eq!(publish(&s, "other", &fx::good_fit()), 1);
    assert_eq!(
        std::fs::read(s.path("lib/ni-a/v0001.json")).unwrap(),
        first,
        "version 1 changed"
    );
    run(&s, &["library", "verify"]).ok();
}

#[test]
fn published_file_holds_the_documented_fields_and_its_own_hash() {
    let s = Scratch::new();
    fx::write_fit(s.dir.path(), "fit.json", &fx::good_fit());
    let out = run(
        &s,
        &[
            "publish",
            "fit.json",
            "--material",
            "ni-a",
            "--note",
            "first lot",
        ],
    )
    .ok();
    assert!(out.stdout.contains("lib/ni-a/v0001.json"), "{}", out.stdout);
    let doc: Value =
        serde_json::from_slice(&std::fs::read(s.path("lib/ni-a/v0001.json")).unwrap()).unwrap();
    for key in [
        "schema_version",
        "material",
        "version",
        "created",
        "tool_version",
        "model",
        "band",
        "stats",
        "kk",
        "warnings",
        "provenance",
        "residuals",
        "sha256",
    ] {
        assert!(doc.get(key).is_some(), "missing {key}");
    }
    assert_eq!(doc["note"], "first lot");
    assert_eq!(doc["tool_version"], mucurve::TOOL_VERSION);
    assert_eq!(doc["residuals"].as_array().unwrap().len(), 2 * fx::POINTS);
    // The self-hash is SHA-256 of the key-sorted compact JSON without the field, recomputed
    // here with the sha2 crate directly rather than through the library's helper.
    use sha2::Digest;
    let mut body = doc.clone();
    body.as_object_mut().unwrap().remove("sha256");
    let digest = sha2::Sha256::digest(serde_json::to_vec(&body).unwrap());
    let hex: String = digest.iter().map(|b| format!("{:02x}", b)).collect();
    assert_eq!(doc["sha256"], hex.as_str());
}

#[test]
fn publish_refuses_a_fit_line_without_provenance_and_writes_nothing() {
    let s = Scratch::new();
    let mut report = fx::good_fit();
    report.provenance.clear();
    fx::write_fit(s.dir.path(), "fit.json", &report);
    let out = run(&s, &["publish", "fit.json", "--material", "ni-a"]).failed();
    assert!(
        out.stderr.contains("no provenance") && out.stderr.contains("-o FIT.json"),
        "{}",
        out.stderr
    );
    assert!(!s.path("lib").exists());
    let mut report = fx::good_fit();
    report.provenance[0].sha256 = report.provenance[0].sha256.to_uppercase();
    fx::write_fit(s.dir.path(), "upper.json", &report);
    let out = run(&s, &["publish", "upper.json", "--material", "ni-a"]).failed();
    assert!(
        out.stderr.contains("cannot be published") && out.stderr.contains("/provenance/0/sha256"),
        "{}",
        out.stderr
    );
    assert!(!s.path("lib").exists());
    s.write("broken.json", "{\"source\": 1");
    let out = run(&s, &["publish", "broken.json", "--material", "ni-a"]).failed();
    assert!(
        out.stderr.contains("broken.json") && out.stderr.contains("not a fit report"),
        "{}",
        out.stderr
    );
}

#[test]
fn promote_vets_a_version_that_meets_the_rules_once() {
    let s = Scratch::new();
    publish(&s, "ni-a", &fx::good_fit());
    let out = run(
        &s,
        &[
            "library",
            "promote",
            "ni-a@1",
            "--by",
            "Ada",
            "--why",
            "two samples agree",
        ],
    )
    .ok();
    assert!(out.stdout.contains("ni-a@1 is vetted"), "{}", out.stdout);
    let again = run(
        &s,
        &[
            "library", "promote", "ni-a@1", "--by", "Ada", "--why", "again",
        ],
    )
    .failed();
    assert!(
        again.stderr.contains("only a draft can be promoted"),
        "{}",
        again.stderr
    );
    let listed = json(&run(&s, &["library", "list", "--status", "vetted", "--json"]).ok());
    assert_eq!(listed.as_array().unwrap().len(), 1);
    assert_eq!(listed[0]["material"], "ni-a");
    assert_eq!(listed[0]["version"], 1);
    assert_eq!(listed[0]["status"], "vetted");
    run(&s, &["library", "verify"]).ok();
}

/// Each vetting rule named when it fails, and only the failing ones (tolerances: PHYSICS.md §8,
/// common practice; rules documented in src/library/vetting.rs).
#[test]
fn promote_refuses_and_names_the_failed_rule() {
    let s = Scratch::new();
    let one_sample = fx::fit(&fx::spin_wall(), &[0.0]);
    let mut kk_fail = fx::good_fit();
    kk_fail.kk.pass = false;
    // A sanity finding blocks; a note on a file (every analyser export with segment
    // boundaries repeats a frequency) does not.
    let mut warned = fx::good_fit();
    let finding = "measured μ″ is negative beyond the noise at 12 of 80 frequencies".to_string();
    warned.warnings.push(finding.clone());
    warned.sanity = Some(vec![finding]);
    let mut noted = fx::good_fit();
    noted
        .warnings
        .push("sample1-5t.s1p: 1 repeated frequency merged".into());
    noted.sanity = Some(Vec::new());
    // A fit file from before the sanity list: every warning counts.
    let mut older = noted.clone();
    older.sanity = None;
    // Offsets 0, +4 %, −1.5 % give d = 0, 3.85 %, 1.52 % (|r| = |o|/(1 + o)): the worst pair sums
    // to 5.37 % > 5 % while rms_rel = 1.69 % and max_rel = 3.85 % stay inside their limits.
    // Offsets ±4 %: rms_rel = 2.84 % > 2 % and the pair sums to 8.0 % > 5 %.
    let disagree = fx::fit(&fx::spin_wall(), &[0.0, 0.04, -0.015]);
    let noisy = fx::fit(&fx::spin_wall(), &[0.04, -0.04]);
    // Two windings on one core (two files, one sample): one sample, nothing to compare.
    let mut one_core = fx::good_fit();
    one_core.provenance.iter_mut().for_each(|p| p.sample = 0);
    one_core.residuals.iter_mut().for_each(|r| r.sample = 0);
    let cases: [(&str, &mucurve::fit::report::FitReport, &[&str]); 8] = [
        ("one", &one_sample, &["two-samples", "samples-agree"]),
        ("one-core", &one_core, &["two-samples", "samples-agree"]),
        ("kk", &kk_fail, &["kk-pass"]),
        ("warned", &warned, &["sanity"]),
        ("noted", &noted, &[]),
        ("older", &older, &["sanity"]),
        ("disagree", &disagree, &["samples-agree"]),
        ("noisy", &noisy, &["residual-rms", "samples-agree"]),
    ];
    let all = [
        "kk-pass",
        "sanity",
        "residual-rms",
        "residual-max",
        "two-samples",
        "samples-agree",
    ];
    for (id, report, failing) in cases {
        publish(&s, id, report);
        let promote = [
            "library",
            "promote",
            &format!("{}@1", id),
            "--by",
            "Ada",
            "--why",
            "review",
        ];
        if failing.is_empty() {
            run(&s, &promote).ok();
            continue;
        }
        let out = run(&s, &promote).failed();
        for rule in all {
            let named = out.stderr.contains(&format!("rule {} failed", rule));
            assert_eq!(
                named,
                failing.contains(&rule),
                "{id}: rule {rule}\n{}",
                out.stderr
            );
        }
    }
    let vetted = json(&run(&s, &["library", "list", "--status", "vetted", "--json"]).ok());
    let vetted: Vec<&str> = vetted
        .as_array()
        .unwrap()
        .iter()
        .map(|v| v["material"].as_str().unwrap())
        .collect();
    assert_eq!(vetted, ["noted"], "a refused promotion changed a status");
}

#[test]
fn retire_records_who_why_and_successor_in_the_history() {
    let s = Scratch::new();
    publish(&s, "ni-a", &fx::good_fit());
    publish(&s, "ni-a", &fx::good_fit());
    run(
        &s,
        &[
            "library",
            "promote",
            "ni-a@1",
            "--by",
            "Ada",
            "--why",
            "first review",
        ],
    )
    .ok();
    let bad = run(
        &s,
        &[
            "library",
            "retire",
            "ni-a@1",
            "--why",
            "x",
            "--superseded-by",
            "ni-a@9",
        ],
    )
    .failed();
    assert!(bad.stderr.contains("no version 9"), "{}", bad.stderr);
    run(
        &s,
        &[
            "library",
            "retire",
            "ni-a@1",
            "--why",
            "new lot measured",
            "--superseded-by",
            "ni-a@2",
            "--by",
            "Bob",
        ],
    )
    .ok();
    run(&s, &["library", "retire", "ni-a@1", "--why", "twice"]).failed();
    let out = run(&s, &["library", "history", "ni-a"]).ok();
    let lines: Vec<&str> = out.stdout.lines().collect();
    assert_eq!(lines.len(), 4, "{}", out.stdout);
    assert!(
        lines[2].contains("ni-a@1  promote by Ada: first review"),
        "{}",
        out.stdout
    );
    assert!(
        lines[3].contains("ni-a@1  retire by Bob: new lot measured (superseded by ni-a@2)"),
        "{}",
        out.stdout
    );
    let all = json(&run(&s, &["library", "list", "--json"]).ok());
    let statuses: Vec<&str> = all
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["status"].as_str().unwrap())
        .collect();
    assert_eq!(statuses, ["retired", "draft"]);
    run(&s, &["library", "verify"]).ok();
}

/// The model object of `show --json` rebuilds a model whose μ equals the published one; checked
/// on the Debye loss peak μ″(f_r) = Δμ/2 (PHYSICS.md §4, textbook Debye relaxation).
#[test]
fn show_json_carries_the_model_in_the_fit_shape() {
    let s = Scratch::new();
    publish(
        &s,
        "deb",
        &fx::fit(&fx::debye(150.0, 2e7), &[0.005, -0.005]),
    );
    let doc = json(&run(&s, &["library", "show", "deb", "--json"]).ok());
    assert_eq!(doc["status"], "draft");
    assert_eq!(doc["version"], 1);
    let model = &doc["model"];
    let mu_inf: mucurve::fit::report::Estimate =
        serde_json::from_value(model["mu_inf"].clone()).unwrap();
    let terms: Vec<mucurve::fit::report::TermReport> =
        serde_json::from_value(model["terms"].clone()).unwrap();
    assert!(model["correlation"].is_array());
    let m = mucurve::library::model_json::model_from_report(&mu_inf, &terms).unwrap();
    assert!((-m.mu(2e7).im - 75.0).abs() < 1e-9);
    let text = run(&s, &["library", "show", "deb@1"]).ok();
    assert!(
        text.stdout.contains("[pass] samples-agree"),
        "{}",
        text.stdout
    );
}

/// Two Debye models differing only in Δμ (100 vs 110, μ∞ = 1): |Δμ_curve|/|μ_a| =
/// 10/|101 + j f/f_r|, largest at the band's low edge (closed form from the Debye term).
#[test]
fn diff_reports_parameter_deltas_and_the_largest_curve_deviation() {
    let s = Scratch::new();
    publish(&s, "deb", &fx::fit(&fx::debye(100.0, 1e7), &[0.0, 0.001]));
    publish(&s, "deb", &fx::fit(&fx::debye(110.0, 1e7), &[0.0, 0.001]));
    let d = json(&run(&s, &["library", "diff", "deb@1", "deb@2", "--json"]).ok());
    let delta_mu = d["params"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| p["name"] == "term1.debye.delta_mu")
        .unwrap();
    assert!((delta_mu["delta"].as_f64().unwrap() - 10.0).abs() < 1e-12);
    assert!((delta_mu["rel"].as_f64().unwrap() - 0.1).abs() < 1e-12);
    let x = fx::F_MIN / 1e7;
    let expected = 100.0 * 10.0 / (101.0f64.powi(2) + x * x).sqrt();
    assert!(
        (d["curve"]["max_pct"].as_f64().unwrap() - expected).abs() < 1e-9,
        "{}",
        d["curve"]
    );
    assert!((d["curve"]["at_hz"].as_f64().unwrap() - fx::F_MIN).abs() < 1e-3);
    let text = run(&s, &["library", "diff", "deb@1", "deb@2"]).ok();
    assert!(text.stdout.contains("largest |Δμ|/|μ|"), "{}", text.stdout);
}

/// Catalog figures against the Debye closed form (PHYSICS.md §4): μ″ peaks at f = f_r;
/// μ′(f_min) = μ∞ + Δμ/(1 + (f_min/f_r)²).
#[test]
fn catalog_csv_and_parquet_hold_one_row_per_version_with_key_figures() {
    let s = Scratch::new();
    publish(
        &s,
        "deb",
        &fx::fit(&fx::debye(150.0, 2e7), &[0.005, -0.005]),
    );
    publish(&s, "sw", &fx::good_fit());
    run(&s, &["library", "catalog", "-o", "cat.csv"]).ok();
    let mut rdr = csv::Reader::from_path(s.path("cat.csv")).unwrap();
    let headers = rdr.headers().unwrap().clone();
    let rows: Vec<csv::StringRecord> = rdr.records().map(|r| r.unwrap()).collect();
    assert_eq!(rows.len(), 2);
    let col = |name: &str| {
        headers
            .iter()
            .position(|h| h == name)
            .unwrap_or_else(|| panic!("no column {name}"))
    };
    let deb = &rows[0];
    assert_eq!(&deb[col("material")], "deb");
    assert_eq!(&deb[col("status")], "draft");
    let f_peak: f64 = deb[col("f_peak_mu_double_prime_hz")].parse().unwrap();
    assert!((f_peak / 2e7 - 1.0).abs() < 1e-4, "peak at {f_peak}");
    let mu_low: f64 = deb[col("mu_prime_low")].parse().unwrap();
    let x = fx::F_MIN / 2e7;
    assert!((mu_low - (1.0 + 150.0 / (1.0 + x * x))).abs() < 1e-9);
    for c in ["version", "f_min_hz", "f_max_hz", "created", "model"] {
        col(c);
    }

    run(&s, &["library", "catalog", "-o", "cat.parquet"]).ok();
    use polars::prelude::*;
    let file = std::fs::File::open(s.path("cat.parquet")).unwrap();
    let df = ParquetReader::new(file).finish().unwrap();
    assert_eq!(df.height(), 2);
    assert_eq!(
        df.column("material").unwrap().str().unwrap().get(1),
        Some("sw")
    );

    let bad = run(&s, &["library", "catalog", "-o", "cat.xlsx"]).failed();
    assert!(bad.stderr.contains(".csv or .parquet"), "{}", bad.stderr);
}

#[test]
fn verify_names_an_edited_event_log_and_a_gap_in_versions() {
    let s = Scratch::new();
    publish(&s, "ni-a", &fx::good_fit());
    publish(&s, "ni-a", &fx::good_fit());
    publish(&s, "ni-a", &fx::good_fit());
    run(
        &s,
        &["library", "promote", "ni-a@1", "--by", "Ada", "--why", "ok"],
    )
    .ok();
    run(&s, &["library", "retire", "ni-a@1", "--why", "superseded"]).ok();
    let log = s.path("lib/ni-a/events.jsonl");
    let text = std::fs::read_to_string(&log).unwrap();
    std::fs::write(&log, text.replacen("\"by\":\"Ada\"", "\"by\":\"Eve\"", 1)).unwrap();
    std::fs::rename(
        s.path("lib/ni-a/v0002.json"),
        s.path("lib/ni-a/v0002.json.bak"),
    )
    .unwrap();
    let out = run(&s, &["library", "verify"]).failed();
    assert!(
        out.stdout.contains("FAULT")
            && out.stdout.contains("events.jsonl")
            && out.stdout.contains("prev_sha256"),
        "{}",
        out.stdout
    );
    assert!(
        out.stdout.contains("version 2 is missing"),
        "{}",
        out.stdout
    );
}

#[test]
fn queries_explain_unknown_materials_and_bad_references() {
    let s = Scratch::new();
    publish(&s, "ni-a", &fx::good_fit());
    for (args, needle) in [
        (vec!["library", "show", "nope"], "no material 'nope'"),
        (vec!["library", "show", "ni-a@7"], "no version 7"),
        (
            vec!["library", "promote", "ni-a", "--by", "A", "--why", "w"],
            "names no version",
        ),
        (
            vec!["library", "diff", "ni-a@1", "../x@1"],
            "invalid material id",
        ),
        (
            vec!["library", "list", "--status", "golden"],
            "unknown status",
        ),
        (
            vec!["library", "promote", "ni-a@1", "--by", " ", "--why", "w"],
            "--by must not be empty",
        ),
    ] {
        let out = run(&s, &args).failed();
        assert!(out.stderr.contains(needle), "{:?}: {}", args, out.stderr);
    }
    let missing = mucurve_in(s.dir.path(), &["library", "list", "--library", "absent"]).failed();
    assert!(
        missing.stderr.contains("library folder not found"),
        "{}",
        missing.stderr
    );
}

/// The library API used by other stages reads what the CLI wrote.
#[test]
fn library_api_loads_published_versions() {
    let s = Scratch::new();
    publish(&s, "ni-a", &fx::good_fit());
    let lib = Library::new(s.path("lib"));
    let m = lib.load("ni-a", None).unwrap();
    assert_eq!((m.material.as_str(), m.version), ("ni-a", 1));
    let model = m.to_model().unwrap();
    let truth = fx::spin_wall();
    assert!((model.mu(3e7) - truth.mu(3e7)).norm() < 1e-9);
    assert!(lib
        .latest_with_status("ni-a", mucurve::library::Status::Vetted)
        .is_err());
    assert!(Path::new(&lib.version_path("ni-a", 1)).is_file());
}

/// With SOURCE_DATE_EPOCH (reproducible-builds.org convention) set, the same fit published into
/// two libraries gives byte-identical files; 1234567890 s is 2009-02-13T23:31:30Z.
#[test]
fn source_date_epoch_makes_published_files_reproducible() {
    let s = Scratch::new();
    fx::write_fit(s.dir.path(), "fit.json", &fx::good_fit());
    for lib in ["one", "two"] {
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_mucurve"))
            .args([
                "publish",
                "fit.json",
                "--material",
                "ni-a",
                "--library",
                lib,
            ])
            .current_dir(s.dir.path())
            .env("SOURCE_DATE_EPOCH", "1234567890")
            .output()
            .unwrap();
        assert!(
            out.status.success(),
            "{}",
            String::from_utf8_lossy(&out.stderr)
        );
    }
    let one = std::fs::read(s.path("one/ni-a/v0001.json")).unwrap();
    assert_eq!(one, std::fs::read(s.path("two/ni-a/v0001.json")).unwrap());
    let doc: Value = serde_json::from_slice(&one).unwrap();
    assert_eq!(doc["created"], "2009-02-13T23:31:30Z");
}

#[test]
fn a_version_file_copied_under_another_number_is_refused() {
    let s = Scratch::new();
    publish(&s, "ni-a", &fx::good_fit());
    publish(&s, "ni-a", &fx::good_fit());
    std::fs::copy(s.path("lib/ni-a/v0001.json"), s.path("lib/ni-a/v0002.json")).unwrap();
    let out = run(&s, &["library", "show", "ni-a@2"]).failed();
    assert!(
        out.stderr.contains("holds ni-a@1 but is stored as ni-a@2"),
        "{}",
        out.stderr
    );
    let out = run(&s, &["library", "verify"]).failed();
    assert!(
        out.stdout.contains("v0002.json: holds version 1"),
        "{}",
        out.stdout
    );
}
