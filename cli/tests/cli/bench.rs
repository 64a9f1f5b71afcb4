//! `subrange bench` on small files: JSON validity and schema, the
//! baselines, the best-of summaries, plot output, errors.

use crate::support::*;
use serde_json::Value;

/// The general compressors this build measures by default, at their default
/// settings (the settings are this crate's choice: see `cli/src/baseline.rs`).
fn default_baselines() -> Vec<&'static str> {
    if cfg!(feature = "baselines") {
        vec![
            "flate2-6",
            "zstd-3",
            "xz-6",
            "bzip2-9",
            "brotli-11",
            "lz4-1",
        ]
    } else {
        vec!["flate2-6"]
    }
}

/// Every setting of every compressor this build has.
fn every_baseline() -> Vec<&'static str> {
    let mut v = vec!["flate2-1", "flate2-6", "flate2-9"];
    if cfg!(feature = "baselines") {
        v.extend([
            "zstd-1",
            "zstd-3",
            "zstd-22",
            "xz-0",
            "xz-6",
            "xz-9e",
            "bzip2-1",
            "bzip2-9",
            "brotli-0",
            "brotli-11",
            "lz4-fast8",
            "lz4-1",
            "lz4-12",
        ]);
    }
    v
}

fn codecs(results: &Value) -> Vec<&str> {
    results
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["codec"].as_str().unwrap())
        .collect()
}

fn bench_json(dir: &Scratch, extra: &[&str]) -> Value {
    let mut args = vec!["bench", "--json", "--runs", "1"];
    args.extend_from_slice(extra);
    let out = run_in(dir.path(), &args, None);
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    serde_json::from_slice(&out.stdout).expect("bench --json prints valid JSON")
}

/// Checks the speed of one result against its time, for `way` "encode" or
/// "decode": `<way>_mb_per_s` is the size in 10^6 bytes over
/// `<way>_seconds`, and null where the clock measured no time. Whatever the
/// clock read, the two figures must agree.
fn check_speed(r: &Value, way: &str, size: u64) {
    let secs = r[format!("{way}_seconds")]
        .as_f64()
        .unwrap_or_else(|| panic!("{way}_seconds is a number: {r}"));
    let speed = &r[format!("{way}_mb_per_s")];
    if size == 0 || secs == 0.0 {
        assert!(speed.is_null(), "{way}: no time measured, no speed: {r}");
    } else {
        let want = size as f64 / 1e6 / secs;
        let got = speed.as_f64().unwrap_or_else(|| panic!("{way} speed: {r}"));
        assert!(
            (got - want).abs() <= 1e-9 * want,
            "{way}: {got} vs {want}: {r}"
        );
    }
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
    let names = codecs(&f["results"]);
    for want in default_baselines() {
        assert!(names.contains(&want), "{names:?}");
    }
    for r in results {
        assert_eq!(r["ok"], true, "{r}");
        let size = r["compressed_size"].as_u64().unwrap() as f64;
        let ratio = r["ratio"].as_f64().unwrap();
        assert!((ratio - data.len() as f64 / size).abs() < 1e-9);
        let bpb = r["bits_per_byte"].as_f64().unwrap();
        assert!((bpb - 8.0 * size / data.len() as f64).abs() < 1e-9);
        check_speed(r, "encode", data.len() as u64);
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
    assert!(inputs[0]["summary"]["best_preset"].is_string());
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
    assert!(text.contains("nearest to it in size"), "{text}");
    for name in default_baselines() {
        assert!(text.contains(name), "{name}: {text}");
    }
    let svg = std::fs::read_to_string(dir.join("ratio.svg")).unwrap();
    assert!(svg.starts_with("<svg"), "{}", &svg[..100.min(svg.len())]);
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
    let size = v["inputs"][0]["size"].as_u64().unwrap();
    for r in v["inputs"][0]["results"].as_array().unwrap() {
        check_speed(r, "decode", size);
    }
    let out = run_in(
        dir.path(),
        &["bench", "--clock", "sundial", "levels.csv"],
        None,
    );
    assert_eq!(code(&out), 2);
}

/// The result of `codec` in an input's results.
fn result<'a>(input: &'a Value, codec: &str) -> &'a Value {
    input["results"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["codec"] == codec)
        .unwrap_or_else(|| panic!("{codec} missing"))
}

/// The codec with the smallest output among `rows` (the first on ties),
/// computed here from the sizes alone.
fn smallest<'a>(rows: impl Iterator<Item = &'a Value>) -> Option<&'a str> {
    let mut best: Option<(&str, u64)> = None;
    for r in rows {
        let size = r["compressed_size"].as_u64().unwrap();
        if best.is_none_or(|(_, b)| size < b) {
            best = Some((r["codec"].as_str().unwrap(), size));
        }
    }
    best.map(|(name, _)| name)
}

/// Checks a SUMMARY object against the rows it summarises, every figure
/// recomputed independently.
fn check_summary(summary: &Value, rows: &[&Value]) {
    let of_kind = |k: &'static str| rows.iter().copied().filter(move |r| r["kind"] == k);
    let name = |key: &str| summary[key].as_str();
    assert_eq!(
        name("smallest"),
        smallest(rows.iter().copied()),
        "{summary}"
    );
    assert_eq!(
        name("best_preset"),
        smallest(of_kind("preset")),
        "{summary}"
    );
    assert_eq!(
        name("best_baseline"),
        smallest(of_kind("baseline")),
        "{summary}"
    );
    let fastest = |key: &str| {
        rows.iter()
            .max_by(|a, b| {
                a[key]
                    .as_f64()
                    .unwrap()
                    .total_cmp(&b[key].as_f64().unwrap())
            })
            .map(|r| r[key].as_f64().unwrap())
    };
    let speed_of = |codec: &str, key: &str| {
        rows.iter().find(|r| r["codec"] == codec).unwrap()[key]
            .as_f64()
            .unwrap()
    };
    for (who, key) in [
        ("fastest_encode", "encode_mb_per_s"),
        ("fastest_decode", "decode_mb_per_s"),
    ] {
        assert_eq!(
            Some(speed_of(name(who).unwrap(), key)),
            fastest(key),
            "{who}"
        );
    }
    let size_of = |codec: &str| {
        rows.iter().find(|r| r["codec"] == codec).unwrap()["compressed_size"]
            .as_u64()
            .unwrap()
    };
    if let (Some(p), Some(b)) = (name("best_preset"), name("best_baseline")) {
        let want = size_of(p) as f64 / size_of(b) as f64;
        let got = summary["best_preset_vs_best_baseline_size"]
            .as_f64()
            .unwrap();
        assert!((got - want).abs() < 1e-12, "{got} vs {want}");
    }
    // Nearest in size on a log scale, for every preset.
    let nearest = summary["nearest"].as_array().unwrap();
    assert_eq!(
        nearest.len(),
        if of_kind("baseline").count() > 0 {
            of_kind("preset").count()
        } else {
            0
        }
    );
    for n in nearest {
        let p = size_of(n["preset"].as_str().unwrap()) as f64;
        let gap = |b: &Value| (p.ln() - (b["compressed_size"].as_u64().unwrap() as f64).ln()).abs();
        let chosen = gap(rows.iter().find(|r| r["codec"] == n["baseline"]).unwrap());
        for b in of_kind("baseline") {
            assert!(chosen <= gap(b), "{n}: {} is nearer", b["codec"]);
        }
        let enc = speed_of(n["preset"].as_str().unwrap(), "encode_mb_per_s")
            / speed_of(n["baseline"].as_str().unwrap(), "encode_mb_per_s");
        assert!((n["encode_speed_ratio"].as_f64().unwrap() - enc).abs() < 1e-9 * enc);
    }
}

#[test]
fn json_schema_every_baseline_level_and_best_of_summaries() {
    let dir = Scratch::new("bench-schema");
    dir.write("levels.csv", &gauge_text(2500));
    // Different data kinds, so that different codecs win.
    let mut frames = Vec::new();
    let mut x = 7u32;
    for i in 0..20_000u32 {
        x = x.wrapping_mul(1_103_515_245).wrapping_add(12_345);
        frames.extend_from_slice(&(i / 16).to_le_bytes());
        frames.push((x >> 28) as u8);
    }
    dir.write("frames.bin", &frames);
    let v = bench_json(
        &dir,
        &[
            "levels.csv",
            "frames.bin",
            "-p",
            "static,order2",
            "--baselines",
            "all-levels",
        ],
    );
    for key in [
        "tool",
        "version",
        "clock",
        "units",
        "presets",
        "baselines",
        "inputs",
        "overall",
    ] {
        assert!(!v[key].is_null(), "{key} missing");
    }
    assert_eq!(v["clock"], "wall");
    assert_eq!(v["presets"], serde_json::json!(["static", "order2"]));
    let want = every_baseline();
    assert_eq!(
        v["baselines"]
            .as_array()
            .unwrap()
            .iter()
            .map(|b| b.as_str().unwrap())
            .collect::<Vec<_>>(),
        want
    );
    let inputs = v["inputs"].as_array().unwrap();
    for input in inputs {
        let size = input["size"].as_u64().unwrap();
        assert_eq!(codecs(&input["results"]).len(), 2 + want.len());
        for name in &want {
            let r = result(input, name);
            assert_eq!(r["kind"], "baseline");
            assert_eq!(r["ok"], true, "{r}");
            assert!(r["error"].is_null());
            let family = r["family"].as_str().unwrap();
            assert!(name.starts_with(&format!("{family}-")), "{r}");
            let level = r["level"].as_str().unwrap();
            assert!(["fast", "default", "strongest"].contains(&level), "{r}");
            for key in ["ratio", "bits_per_byte"] {
                assert!(r[key].as_f64().unwrap() > 0.0, "{key}: {r}");
            }
            check_speed(r, "encode", size);
            check_speed(r, "decode", size);
            assert!(r["compressed_size"].as_u64().unwrap() > 0);
        }
        for p in ["static", "order2"] {
            let r = result(input, p);
            assert!(r["family"].is_null() && r["level"].is_null(), "{r}");
            assert!(r["ideal_bytes"].as_f64().unwrap() > 0.0);
        }
        let rows: Vec<&Value> = input["results"].as_array().unwrap().iter().collect();
        check_summary(&input["summary"], &rows);
        assert!(size > 0);
    }
    // Over all inputs: totals recomputed from the per-input rows.
    let overall = &v["overall"];
    assert_eq!(overall["left_out"], serde_json::json!([]));
    let totals: Vec<&Value> = overall["codecs"].as_array().unwrap().iter().collect();
    assert_eq!(totals.len(), 2 + want.len());
    for t in &totals {
        let codec = t["codec"].as_str().unwrap();
        let sum: u64 = inputs
            .iter()
            .map(|i| result(i, codec)["compressed_size"].as_u64().unwrap())
            .sum();
        assert_eq!(t["compressed_size"].as_u64().unwrap(), sum, "{codec}");
        let raw: u64 = inputs.iter().map(|i| i["size"].as_u64().unwrap()).sum();
        assert_eq!(t["input_size"].as_u64().unwrap(), raw);
    }
    check_summary(&overall["summary"], &totals);
}

#[test]
fn baseline_selection() {
    let dir = Scratch::new("bench-baselines");
    dir.write("levels.csv", &gauge_text(400));
    let v = bench_json(&dir, &["levels.csv", "-p", "static", "--baselines", "none"]);
    assert_eq!(codecs(&v["inputs"][0]["results"]), ["static"]);
    let summary = &v["inputs"][0]["summary"];
    assert!(summary["best_baseline"].is_null(), "{summary}");
    assert_eq!(summary["nearest"], serde_json::json!([]));
    let v = bench_json(
        &dir,
        &[
            "levels.csv",
            "-p",
            "static",
            "--baselines",
            "flate2:all-levels,flate2-9",
        ],
    );
    assert_eq!(
        codecs(&v["inputs"][0]["results"]),
        ["static", "flate2-1", "flate2-6", "flate2-9"]
    );
    let out = run_in(
        dir.path(),
        &["bench", "levels.csv", "--baselines", "gzip-9"],
        None,
    );
    assert_eq!(code(&out), 2, "{}", stderr(&out));
    assert!(
        stderr(&out).contains("unknown baseline 'gzip-9'"),
        "{}",
        stderr(&out)
    );
}

#[test]
fn default_bench_on_the_demo_corpus_measures_every_baseline() {
    // The command the README's main job runs, on a small corpus.
    let dir = Scratch::new("bench-demo");
    let v = bench_json(&dir, &["--corpus-size", "16K"]);
    assert_eq!(v["demo_corpus"], true);
    let inputs = v["inputs"].as_array().unwrap();
    assert_eq!(inputs.len(), subrange::corpus::demo(16).len());
    for input in inputs {
        assert_eq!(input["size"].as_u64().unwrap(), 16 << 10);
        let names = codecs(&input["results"]);
        for want in default_baselines()
            .into_iter()
            .chain(subrange::preset::Preset::names())
        {
            assert!(names.contains(&want), "{want}: {names:?}");
            assert_eq!(result(input, want)["ok"], true);
        }
        assert_eq!(
            names.len(),
            default_baselines().len() + subrange::preset::Preset::names().count()
        );
    }
}

#[test]
fn the_plot_parses_back_with_a_labelled_point_per_codec() {
    let dir = Scratch::new("bench-svg");
    dir.write("levels.csv", &gauge_text(800));
    dir.write("more.csv", &gauge_text(300));
    let out = run_in(
        dir.path(),
        &[
            "bench",
            "levels.csv",
            "more.csv",
            "--runs",
            "1",
            "-p",
            "static,adaptive",
            "--plot",
            "chart.svg",
            "-q",
        ],
        None,
    );
    assert_eq!(code(&out), 0, "{}", stderr(&out));
    let svg = std::fs::read_to_string(dir.join("chart.svg")).unwrap();
    let doc = roxmltree::Document::parse(&svg).expect("the plot is well-formed XML");
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    let texts: Vec<String> = doc
        .descendants()
        .filter(|n| n.has_tag_name("text"))
        .map(|n| n.text().unwrap_or("").trim().to_string())
        .collect();
    let count = |want: &str| texts.iter().filter(|t| *t == want).count();
    // One label a panel (encode and decode) for every codec.
    for name in default_baselines()
        .into_iter()
        .chain(["static", "adaptive"])
    {
        assert_eq!(count(name), 2, "{name} in {texts:?}");
    }
    assert!(
        texts.iter().any(|t| t.contains("encode speed")),
        "{texts:?}"
    );
    assert!(
        texts.iter().any(|t| t.contains("decode speed")),
        "{texts:?}"
    );
    // Presets are circles: per panel a large one overall and a small one per input.
    let circles = doc
        .descendants()
        .filter(|n| n.has_tag_name("circle"))
        .count();
    assert!(circles >= 2 * 2 * 3, "{circles} circles");
    let triangles = doc
        .descendants()
        .filter(|n| n.has_tag_name("polygon"))
        .count();
    assert!(
        triangles >= 2 * 3 * default_baselines().len(),
        "{triangles} triangles"
    );
}
