//! `subrange inspect`: a container's header and every block, checked.
//!
//! The header is printed first (format version, preset and its parameters,
//! block size), then one line per block: where it starts, whether it is
//! coded or stored, its raw and coded sizes, bits per byte, and the result of
//! decoding it and comparing CRC-32s. A damaged block is reported and the walk
//! goes on to the next one; when a frame itself is damaged the walk cannot
//! find the next block and stops there, saying why and at which offset. Any
//! damage makes the command exit with 3 after the full report.

use std::fmt::Write as _;

use subrange::format::{BlockInfo, BlockKind, CrcStatus, Inspector};

use crate::cli::InspectArgs;
use crate::exit::{CliError, CliResult};
use crate::files::Input;
use crate::report::{fixed, table_aligned, thousands};

/// Runs `subrange inspect`.
pub fn run(args: &InspectArgs) -> CliResult {
    let input = Input::from_arg(Some(&args.file));
    let (reader, _) = input.open()?;
    let reader = std::io::BufReader::with_capacity(1 << 16, reader);
    let name = input.describe();
    let mut walk = Inspector::new(reader)
        .map_err(|e| CliError::library(format!("cannot inspect {name}"), &e))?;

    let mut out = String::new();
    let h = walk.header().clone();
    let _ = writeln!(
        out,
        "{name}: subrange container, format version {}",
        h.version
    );
    // The library's textual form, which `compress --preset` accepts.
    let _ = writeln!(out, "  preset      {}", h.preset);
    let _ = writeln!(out, "  block size  {} bytes", thousands(h.block_size));
    let _ = writeln!(out, "  header      {} bytes", h.len);
    out.push('\n');

    let mut rows = vec![[
        "block", "offset", "kind", "raw", "coded", "bits/B", "status",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect::<Vec<_>>()];
    let mut blocks = 0u64;
    let mut damaged = 0u64;
    let mut stop = None;
    for item in walk.by_ref() {
        match item {
            Ok(b) => {
                blocks += 1;
                let (ok, status) = status(&b);
                if !ok {
                    damaged += 1;
                }
                rows.push(block_row(&b, status));
            }
            Err(e) => stop = Some(e),
        }
    }
    let _ = write!(
        out,
        "{}",
        indent(&table_aligned(
            &rows,
            &[false, false, true, false, false, false, true]
        ))
    );
    if let Some(e) = &stop {
        let _ = writeln!(out, "  walk stopped: {e}");
    }
    out.push('\n');
    match walk.end() {
        Some(end) => {
            let _ = writeln!(
                out,
                "end record at offset {}: {} block(s), {} raw bytes; container {} bytes{}",
                thousands(end.offset),
                end.block_count,
                thousands(end.total_raw),
                thousands(end.container_len),
                if end.total_raw > 0 {
                    format!(
                        ", ratio {}",
                        fixed(
                            (end.container_len > 0)
                                .then(|| end.total_raw as f64 / end.container_len as f64),
                            3
                        )
                    )
                } else {
                    String::new()
                }
            );
            if end.index_len > 0 {
                let _ = writeln!(
                    out,
                    "block index: {} bytes after the end record (random access)",
                    thousands(end.index_len)
                );
            }
        }
        None => out.push_str("end record not reached\n"),
    }
    crate::print_stdout(&out)?;

    if damaged > 0 || stop.is_some() {
        let mut what = Vec::new();
        if damaged > 0 {
            what.push(format!("{damaged} of {blocks} block(s) fail their checks"));
        }
        if let Some(e) = &stop {
            what.push(format!("the walk stopped: {e}"));
        }
        return Err(CliError::damaged(format!(
            "{name} is damaged: {}",
            what.join("; ")
        )));
    }
    Ok(())
}

fn indent(text: &str) -> String {
    text.lines().map(|l| format!("  {l}\n")).collect()
}

/// Whether the block is sound, and its status text.
fn status(b: &BlockInfo) -> (bool, String) {
    match &b.crc_status {
        CrcStatus::Ok => (true, format!("ok (crc32 {:08x})", b.crc_expected)),
        CrcStatus::Mismatch { actual } => (
            false,
            format!(
                "DAMAGED: crc32 {actual:08x}, recorded {:08x}",
                b.crc_expected
            ),
        ),
        CrcStatus::PayloadMismatch { expected, actual } => (
            false,
            format!("DAMAGED: payload crc32 {actual:08x}, recorded {expected:08x}"),
        ),
        CrcStatus::Undecodable(e) => (false, format!("DAMAGED: {e}")),
        _ => (false, "DAMAGED: unrecognised check result".to_string()),
    }
}

fn block_row(b: &BlockInfo, status: String) -> Vec<String> {
    vec![
        b.index.to_string(),
        thousands(b.offset),
        match b.kind {
            BlockKind::Stored => "stored".to_string(),
            _ => "coded".to_string(),
        },
        thousands(b.raw_len),
        thousands(b.coded_len),
        fixed(
            (b.raw_len > 0).then(|| 8.0 * b.coded_len as f64 / b.raw_len as f64),
            3,
        ),
        status,
    ]
}
