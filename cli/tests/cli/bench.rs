//! `subrange bench` on small files: JSON validity, plot output, errors.

use crate::support::*;
use serde_json::Value;

fn bench_json(dir: &Scratch, extra: &[&str]) -> Value {
    let mut args = vec!["bench", "--json", "--runs", "1"];
    args.extend_from_slice(extra);
    let out = run_in(dir.path(), &args, None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    serde_json::from_slice(&out.stdout).expect("bench --json prints valid JSON")
}

#[test]
fn json_is_valid_and_its_figures_are_consistent() {
    let dir = Scratch::new("bench-json");
    let data = gauge_text(3000);
    dir.write("levels.csv", &data);
    dir.write("empty.bin", b"");
    let v = bench_json(&dir, &["levels.csv", "empty.bin"]);
    let inputs = v["inputs"].as_array().unwrap();
    assert_eq!(inputs.len(), 2);
    let f = &inputs[0];
    assert_eq!(f["name"], "levels.csv");
    assert_eq!(f["size"].as_u64().unwrap(), data.len() as u64);
    let results = f["results"].as_array().unwrap();
    let names: Vec<&str> = results
        .iter()
        .map(|r| r["codec"].as_str().unwrap())
        .collect();
    for want in ["flate2-1", "flate2-6", "flate2-9"] {
        assert!(names.contains(&want), "{names:?}");
    }
    for r in results {
        let size = r["compressed_size"].as_u64().unwrap() as f64;
        let ratio = r["ratio"].as_f64().unwrap();
        assert!((ratio - data.len() as f64 / size).abs() < 1e-9);
        let bpb = r["bits_per_byte"].as_f64().unwrap();
        assert!((bpb - 8.0 * size / data.len() as f64).abs() < 1e-9);
        assert!(r["encode_mb_per_s"].as_f64().unwrap() > 0.0);
        if r["kind"] == "preset" {
            let ideal = r["ideal_bytes"].as_f64().unwrap();
            assert!(ideal > 0.0 && ideal <= size, "{r}");
            let over = r["overhead_percent"].as_f64().unwrap();
            assert!((over - 100.0 * (size - ideal) / ideal).abs() < 1e-6);
        } else {
            assert!(r["ideal_bytes"].is_null());
        }
    }
    // The empty input has no ratio: null, not NaN.
    let empty = &inputs[1]["results"][0];
    assert!(empty["ratio"].is_null(), "{empty}");
    assert_eq!(v["summary"][0]["input"], "levels.csv");
}

#[test]
fn json_sizes_are_the_sizes_compress_writes() {
    let dir = Scratch::new("bench-sizes");
    let data = gauge_text(4000);
    dir.write("levels.csv", &data);
    let v = bench_json(&dir, &["levels.csv", "--block-size", "8K"]);
    let results = v["inputs"][0]["results"].as_array().unwrap();
    let mut checked = 0;
    for name in subrange::preset::Preset::names() {
        let r = results
            .iter()
            .find(|r| r["codec"] == name)
            .unwrap_or_else(|| panic!("{name} missing from bench"));
        let out = run_in(
            dir.path(),
            &[
                "compress",
                "levels.csv",
                "-o",
                "-",
                "--preset",
                name,
                "-b",
                "8K",
            ],
            None,
        );
        assert_eq!(code(&out), 0, "{}", stderr(&out));
        assert_eq!(
            r["compressed_size"].as_u64().unwrap(),
            out.stdout.len() as u64,
            "{name}"
        );
        checked += 1;
    }
    assert!(checked >= 2);
}

#[test]
fn table_output_ends_with_a_summary_and_plot_is_svg() {
    let dir = Scratch::new("bench-plot");
    dir.write("levels.csv", &gauge_text(1000));
    let out = run_in(
        dir.path(),
        &["bench", "levels.csv", "--runs", "1", "--plot", "ratio.svg"],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let text = stdout(&out);
    assert!(text.contains("Summary"), "{text}");
    assert!(text.contains("flate2-9"), "{text}");
    let svg = std::fs::read_to_string(dir.join("ratio.svg")).unwrap();
    assert!(svg.starts_with("<svg"), "{}", &svg[..100.min(svg.len())]);
    assert!(svg.contains("flate2-9"));
    // The plot is not overwritten without --force.
    let again = run_in(
        dir.path(),
        &["bench", "levels.csv", "--runs", "1", "--plot", "ratio.svg"],
        None,
    );
    assert_one_line_failure(&again, 4);
    let forced = run_in(
        dir.path(),
        &[
            "bench",
            "levels.csv",
            "--runs",
            "1",
            "--plot",
            "ratio.svg",
            "--force",
        ],
        None,
    );
    assert_eq!(code(&forced), 0, "{}", stderr(&forced));
}

#[test]
fn preset_selection_and_unknown_preset() {
    let dir = Scratch::new("bench-preset");
    dir.write("levels.csv", &gauge_text(500));
    let v = bench_json(&dir, &["levels.csv", "--preset", "static"]);
    let presets: Vec<&Value> = v["inputs"][0]["results"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|r| r["kind"] == "preset")
        .collect();
    assert_eq!(presets.len(), 1);
    assert_eq!(presets[0]["codec"], "static");

    let out = run_in(
        dir.path(),
        &["bench", "levels.csv", "--preset", "quickest"],
        None,
    );
    assert_eq!(code(&out), 2, "{}", stderr(&out));
    let err = stderr(&out);
    assert!(err.contains("quickest"), "{err}");
    for name in subrange::preset::Preset::names() {
        assert!(err.contains(name), "{err}");
    }
}

#[test]
fn a_missing_file_is_named() {
    let dir = Scratch::new("bench-missing");
    let out = run_in(dir.path(), &["bench", "absent.csv"], None);
    assert_one_line_failure(&out, 1);
    assert!(stderr(&out).contains("absent.csv"));
}

#[test]
fn cpu_clock_is_named_in_the_units() {
    let dir = Scratch::new("bench-clock");
    dir.write("levels.csv", &gauge_text(20_000));
    let v = bench_json(&dir, &["levels.csv", "-p", "static", "--clock", "cpu"]);
    let speed = v["units"]["speed"].as_str().unwrap();
    assert!(speed.contains("CPU time"), "{speed}");
    for r in v["inputs"][0]["results"].as_array().unwrap() {
        assert!(r["decode_mb_per_s"].as_f64().unwrap() > 0.0, "{r}");
    }
    let out = run_in(
        dir.path(),
        &["bench", "--clock", "sundial", "levels.csv"],
        None,
    );
    assert_eq!(code(&out), 2);
}
