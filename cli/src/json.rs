//! JSON output for machines, written by hand (RFC 8259).
//!
//! A small value tree ([`Value`]) serialised compactly with two-space
//! indentation. Strings are escaped per RFC 8259 §7 (quote, backslash and
//! control characters); numbers that are not finite become `null`, since JSON
//! has no NaN or infinity.

use std::fmt::Write as _;

use crate::bench::{BenchReport, Clock, Figures, Measurement};
use crate::codec::Kind;
use crate::summary::{Point, Summary};

/// A JSON value.
#[derive(Debug, Clone, PartialEq)]
pub enum Value {
    /// `null`.
    Null,
    /// `true` / `false`.
    Bool(bool),
    /// An unsigned integer, written exactly.
    Int(u64),
    /// A real number (`null` if not finite).
    Num(f64),
    /// A string.
    Str(String),
    /// An array.
    Arr(Vec<Value>),
    /// An object, keys in the given order.
    Obj(Vec<(String, Value)>),
}

impl Value {
    /// An object from `(key, value)` pairs.
    pub fn obj<const N: usize>(pairs: [(&str, Value); N]) -> Value {
        Value::Obj(pairs.into_iter().map(|(k, v)| (k.to_string(), v)).collect())
    }

    /// A string value.
    pub fn str(s: impl Into<String>) -> Value {
        Value::Str(s.into())
    }

    /// A number or `null`.
    pub fn opt(v: Option<f64>) -> Value {
        v.map_or(Value::Null, Value::Num)
    }

    /// Serialises with indentation and a final newline.
    pub fn to_text(&self) -> String {
        let mut out = String::new();
        self.write(&mut out, 0);
        out.push('\n');
        out
    }

    fn write(&self, out: &mut String, indent: usize) {
        match self {
            Value::Null => out.push_str("null"),
            Value::Bool(b) => out.push_str(if *b { "true" } else { "false" }),
            Value::Int(n) => {
                let _ = write!(out, "{n}");
            }
            Value::Num(x) if x.is_finite() => {
                // Rust prints f64 as the shortest text that reads back
                // exactly; it never uses exponent notation in `{}`, so the
                // result is a valid JSON number.
                let _ = write!(out, "{x}");
            }
            Value::Num(_) => out.push_str("null"),
            Value::Str(s) => escape_into(out, s),
            Value::Arr(items) => {
                if items.is_empty() {
                    out.push_str("[]");
                    return;
                }
                out.push('[');
                for (i, item) in items.iter().enumerate() {
                    out.push_str(if i == 0 { "\n" } else { ",\n" });
                    pad(out, indent + 1);
                    item.write(out, indent + 1);
                }
                out.push('\n');
                pad(out, indent);
                out.push(']');
            }
            Value::Obj(pairs) => {
                if pairs.is_empty() {
                    out.push_str("{}");
                    return;
                }
                out.push('{');
                for (i, (k, v)) in pairs.iter().enumerate() {
                    out.push_str(if i == 0 { "\n" } else { ",\n" });
                    pad(out, indent + 1);
                    escape_into(out, k);
                    out.push_str(": ");
                    v.write(out, indent + 1);
                }
                out.push('\n');
                pad(out, indent);
                out.push('}');
            }
        }
    }
}

fn pad(out: &mut String, indent: usize) {
    for _ in 0..indent {
        out.push_str("  ");
    }
}

/// Writes `s` as a JSON string literal.
pub fn escape_into(out: &mut String, s: &str) {
    out.push('"');
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            '\u{08}' => out.push_str("\\b"),
            '\u{0C}' => out.push_str("\\f"),
            c if (c as u32) < 0x20 => {
                let _ = write!(out, "\\u{:04x}", c as u32);
            }
            c => out.push(c),
        }
    }
    out.push('"');
}

/// The bench report as JSON.
///
/// Schema (every key always present; a figure that does not exist — no
/// ideal cost for a baseline, no ratio for an empty input, any figure of a
/// failed codec, no baseline in a summary — is `null`):
///
/// ```text
/// { "tool": "subrange", "version": str, "runs": int, "clock": "wall" | "cpu",
///   "demo_corpus": bool, "units": { "size", "ratio", "speed", "ideal_bytes": str },
///   "presets": [codec name, ...], "baselines": [codec name, ...],
///   "inputs": [ { "name": str, "size": int, "order0_entropy_bits_per_byte": num,
///       "results": [ RESULT, ... ],          // measurement order: presets, then baselines
///       "summary": SUMMARY } ],
///   "overall": { "codecs": [ TOTAL, ... ],   // codecs that succeeded on every input
///       "left_out": [codec name, ...],       // codecs that failed on some input
///       "summary": SUMMARY } }               // over the totals
/// RESULT  = { "codec": str, "kind": "preset" | "baseline",
///             "family": str | null, "level": "fast" | "default" | "strongest" | null,
///             "ok": bool, "error": str | null,
///             "compressed_size": int | null, "ratio", "bits_per_byte", "ideal_bytes",
///             "overhead_percent", "encode_mb_per_s", "decode_mb_per_s",
///             "encode_seconds", "decode_seconds": num | null }
/// TOTAL   = { "codec", "kind", "input_size": int, "compressed_size": int, "ratio",
///             "bits_per_byte", "encode_mb_per_s", "decode_mb_per_s",
///             "encode_seconds", "decode_seconds" }
/// SUMMARY = { "smallest", "fastest_encode", "fastest_decode",
///             "best_preset", "best_baseline": codec name | null,
///             "best_preset_size", "best_baseline_size": int | null,
///             "best_preset_vs_best_baseline_size": num | null,   // preset / baseline
///             "nearest": [ { "preset", "baseline": codec name,
///                 "preset_size", "baseline_size": int,
///                 "size_ratio",                                 // preset / baseline
///                 "encode_speed_ratio", "decode_speed_ratio": num | null } ] }
/// ```
pub fn bench(report: &BenchReport) -> String {
    let inputs = report
        .files
        .iter()
        .map(|f| {
            let results = f.results.iter().map(|m| result(m, f.size)).collect();
            Value::obj([
                ("name", Value::str(&f.name)),
                ("size", Value::Int(f.size)),
                ("order0_entropy_bits_per_byte", Value::Num(f.entropy0)),
                ("results", Value::Arr(results)),
                ("summary", summary(&Summary::of_input(f))),
            ])
        })
        .collect();
    let (overall, left_out) = Summary::overall(report);
    let names = |kind: Kind| {
        let list = report.files.first().map_or(Vec::new(), |f| {
            f.results
                .iter()
                .filter(|m| m.kind == kind)
                .map(|m| Value::str(&m.codec))
                .collect()
        });
        Value::Arr(list)
    };
    Value::obj([
        ("tool", Value::str("subrange")),
        ("version", Value::str(env!("CARGO_PKG_VERSION"))),
        ("runs", Value::Int(u64::from(report.runs))),
        (
            "clock",
            Value::str(match report.clock {
                Clock::Wall => "wall",
                Clock::Cpu => "cpu",
            }),
        ),
        ("demo_corpus", Value::Bool(report.demo_corpus)),
        (
            "units",
            Value::obj([
                ("size", Value::str("bytes")),
                ("ratio", Value::str("original size / compressed size")),
                (
                    "speed",
                    Value::str(match report.clock {
                        Clock::Wall => {
                            "1e6 bytes of uncompressed data per second, best run, one thread"
                        }
                        Clock::Cpu => {
                            "1e6 bytes of uncompressed data per second of the measuring \
                             thread's CPU time, best run, one thread"
                        }
                    }),
                ),
                (
                    "ideal_bytes",
                    Value::str("sum of -log2 p over the coded symbols, / 8"),
                ),
            ]),
        ),
        ("presets", names(Kind::Preset)),
        ("baselines", names(Kind::Baseline)),
        ("inputs", Value::Arr(inputs)),
        (
            "overall",
            Value::obj([
                (
                    "codecs",
                    Value::Arr(overall.points.iter().map(total).collect()),
                ),
                (
                    "left_out",
                    Value::Arr(left_out.iter().map(Value::str).collect()),
                ),
                ("summary", summary(&overall)),
            ]),
        ),
    ])
    .to_text()
}

fn kind_name(kind: Kind) -> Value {
    Value::str(match kind {
        Kind::Preset => "preset",
        Kind::Baseline => "baseline",
    })
}

fn result(m: &Measurement, size: u64) -> Value {
    let x = m.outcome.as_ref().ok();
    let num = |f: &dyn Fn(&Figures) -> Option<f64>| Value::opt(x.and_then(f));
    Value::obj([
        ("codec", Value::str(&m.codec)),
        ("kind", kind_name(m.kind)),
        (
            "family",
            m.baseline
                .map_or(Value::Null, |b| Value::str(b.family().name())),
        ),
        (
            "level",
            m.baseline
                .map_or(Value::Null, |b| Value::str(b.level().name())),
        ),
        ("ok", Value::Bool(x.is_some())),
        (
            "error",
            m.outcome.as_ref().err().map_or(Value::Null, Value::str),
        ),
        (
            "compressed_size",
            x.map_or(Value::Null, |x| Value::Int(x.compressed)),
        ),
        ("ratio", num(&|x| x.ratio(size))),
        ("bits_per_byte", num(&|x| x.bits_per_byte(size))),
        ("ideal_bytes", num(&|x| x.ideal_bytes())),
        ("overhead_percent", num(&|x| x.overhead_pct())),
        ("encode_mb_per_s", num(&|x| x.encode_mb_s(size))),
        ("decode_mb_per_s", num(&|x| x.decode_mb_s(size))),
        ("encode_seconds", num(&|x| Some(x.encode_secs))),
        ("decode_seconds", num(&|x| Some(x.decode_secs))),
    ])
}

fn total(p: &Point) -> Value {
    Value::obj([
        ("codec", Value::str(&p.codec)),
        ("kind", kind_name(p.kind)),
        ("input_size", Value::Int(p.raw)),
        ("compressed_size", Value::Int(p.compressed)),
        ("ratio", Value::opt(p.ratio())),
        ("bits_per_byte", Value::opt(p.bits_per_byte())),
        ("encode_mb_per_s", Value::opt(p.encode_mb_s())),
        ("decode_mb_per_s", Value::opt(p.decode_mb_s())),
        ("encode_seconds", Value::Num(p.encode_secs)),
        ("decode_seconds", Value::Num(p.decode_secs)),
    ])
}

fn summary(s: &Summary) -> Value {
    let name = |i: Option<usize>| s.point(i).map_or(Value::Null, |p| Value::str(&p.codec));
    let size = |i: Option<usize>| s.point(i).map_or(Value::Null, |p| Value::Int(p.compressed));
    let nearest = s
        .nearest
        .iter()
        .map(|n| {
            let (p, b) = (&s.points[n.preset], &s.points[n.baseline]);
            Value::obj([
                ("preset", Value::str(&p.codec)),
                ("baseline", Value::str(&b.codec)),
                ("preset_size", Value::Int(p.compressed)),
                ("baseline_size", Value::Int(b.compressed)),
                ("size_ratio", Value::opt(n.size_ratio(s))),
                ("encode_speed_ratio", Value::opt(n.encode_ratio(s))),
                ("decode_speed_ratio", Value::opt(n.decode_ratio(s))),
            ])
        })
        .collect();
    Value::obj([
        ("smallest", name(s.smallest)),
        ("fastest_encode", name(s.fastest_encode)),
        ("fastest_decode", name(s.fastest_decode)),
        ("best_preset", name(s.best_preset)),
        ("best_baseline", name(s.best_baseline)),
        ("best_preset_size", size(s.best_preset)),
        ("best_baseline_size", size(s.best_baseline)),
        (
            "best_preset_vs_best_baseline_size",
            Value::opt(s.best_preset_vs_best_baseline()),
        ),
        ("nearest", Value::Arr(nearest)),
    ])
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn strings_are_escaped() {
        let mut s = String::new();
        escape_into(&mut s, "a\"b\\c\nd\u{1}é");
        assert_eq!(s, r#""a\"b\\c\nd\u0001é""#);
    }

    #[test]
    fn numbers_and_nesting() {
        let v = Value::obj([
            ("a", Value::Arr(vec![Value::Int(1), Value::Num(0.5)])),
            ("b", Value::Num(f64::NAN)),
            ("c", Value::Arr(vec![])),
            ("d", Value::Num(1e-7)),
            ("e", Value::Num(1e21)),
        ]);
        let text = v.to_text();
        assert_eq!(
            text,
            "{\n  \"a\": [\n    1,\n    0.5\n  ],\n  \"b\": null,\n  \"c\": [],\n  \"d\": 0.0000001,\n  \"e\": 1000000000000000000000\n}\n"
        );
    }
}
