//! JSON output for machines, written by hand (RFC 8259).
//!
//! A small value tree ([`Value`]) serialised compactly with two-space
//! indentation. Strings are escaped per RFC 8259 §7 (quote, backslash and
//! control characters); numbers that are not finite become `null`, since JSON
//! has no NaN or infinity.

use std::fmt::Write as _;

use crate::bench::BenchReport;
use crate::codec::Kind;

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
/// Shape: `{"tool", "version", "runs", "demo_corpus", "units", "inputs": [{"name",
/// "size", "order0_entropy_bits_per_byte", "results": [{"codec", "kind",
/// "compressed_size", "ratio", "bits_per_byte", "ideal_bytes",
/// "overhead_percent", "encode_mb_per_s", "decode_mb_per_s",
/// "encode_seconds", "decode_seconds"}]}], "summary": [{"input",
/// "best_preset", "ratio", "flate2_9_ratio", "ratio_vs_flate2_9"}]}`.
/// Missing figures (no ideal cost for a baseline, no ratio for an empty
/// input) are `null`.
pub fn bench(report: &BenchReport) -> String {
    let inputs = report
        .files
        .iter()
        .map(|f| {
            let results = f
                .results
                .iter()
                .map(|m| {
                    Value::obj([
                        ("codec", Value::str(&m.codec)),
                        (
                            "kind",
                            Value::str(match m.kind {
                                Kind::Preset => "preset",
                                Kind::Baseline => "baseline",
                            }),
                        ),
                        ("compressed_size", Value::Int(m.compressed)),
                        ("ratio", Value::opt(m.ratio(f.size))),
                        ("bits_per_byte", Value::opt(m.bits_per_byte(f.size))),
                        ("ideal_bytes", Value::opt(m.ideal_bytes())),
                        ("overhead_percent", Value::opt(m.overhead_pct())),
                        ("encode_mb_per_s", Value::opt(m.encode_mb_s(f.size))),
                        ("decode_mb_per_s", Value::opt(m.decode_mb_s(f.size))),
                        ("encode_seconds", Value::Num(m.encode_secs)),
                        ("decode_seconds", Value::Num(m.decode_secs)),
                    ])
                })
                .collect();
            Value::obj([
                ("name", Value::str(&f.name)),
                ("size", Value::Int(f.size)),
                ("order0_entropy_bits_per_byte", Value::Num(f.entropy0)),
                ("results", Value::Arr(results)),
            ])
        })
        .collect();
    let summary = report
        .files
        .iter()
        .filter_map(|f| {
            let best = f.best_preset()?;
            let base = f.get("flate2-9").and_then(|b| b.ratio(f.size));
            let r = best.ratio(f.size);
            Some(Value::obj([
                ("input", Value::str(&f.name)),
                ("best_preset", Value::str(&best.codec)),
                ("ratio", Value::opt(r)),
                ("flate2_9_ratio", Value::opt(base)),
                (
                    "ratio_vs_flate2_9",
                    Value::opt(r.zip(base).map(|(x, y)| x / y)),
                ),
            ]))
        })
        .collect();
    Value::obj([
        ("tool", Value::str("subrange")),
        ("version", Value::str(env!("CARGO_PKG_VERSION"))),
        ("runs", Value::Int(u64::from(report.runs))),
        ("demo_corpus", Value::Bool(report.demo_corpus)),
        (
            "units",
            Value::obj([
                ("size", Value::str("bytes")),
                ("ratio", Value::str("original size / compressed size")),
                (
                    "speed",
                    Value::str(match report.clock {
                        crate::bench::Clock::Wall => {
                            "1e6 bytes of uncompressed data per second, best run, one thread"
                        }
                        crate::bench::Clock::Cpu => {
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
        ("inputs", Value::Arr(inputs)),
        ("summary", Value::Arr(summary)),
    ])
    .to_text()
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
