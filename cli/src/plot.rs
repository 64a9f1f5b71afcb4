//! `bench --plot`: an SVG scatter of compression ratio against encode speed.
//!
//! One large labelled point per codec for all inputs together (total input
//! over total output, total input over total encode time), and a small point
//! of the same colour per input, so both the overall trade-off and its spread
//! across data kinds show. Speed is on a logarithmic axis: presets and
//! baselines differ by orders of magnitude. The SVG is rendered into memory
//! and written by the caller through the safe-output path.

use plotters::prelude::*;

use crate::bench::BenchReport;
use crate::codec::Kind;
use crate::exit::{CliError, CliResult};
use crate::report;

/// A codec's overall figures: name, kind, ratio, encode MB/s.
type Overall = (String, Kind, f64, f64);

fn overall(report: &BenchReport) -> Vec<Overall> {
    report::totals(report)
        .into_iter()
        .filter_map(|(name, kind, raw, packed)| {
            let secs: f64 = report
                .files
                .iter()
                .filter_map(|f| f.get(&name))
                .map(|m| m.encode_secs)
                .sum();
            (raw > 0 && packed > 0 && secs > 0.0).then(|| {
                (
                    name,
                    kind,
                    raw as f64 / packed as f64,
                    raw as f64 / 1e6 / secs,
                )
            })
        })
        .collect()
}

/// Renders the plot as SVG text.
///
/// # Errors
///
/// A failure when there is nothing to plot (empty inputs only) or drawing
/// fails.
pub fn render(report: &BenchReport) -> CliResult<String> {
    let points = overall(report);
    let per_input: Vec<(String, f64, f64)> = report
        .files
        .iter()
        .flat_map(|f| {
            f.results.iter().filter_map(move |m| {
                Some((m.codec.clone(), m.ratio(f.size)?, m.encode_mb_s(f.size)?))
            })
        })
        .collect();
    if points.is_empty() {
        return Err(CliError::failure(
            "cannot plot: no input had any bytes to measure",
        ));
    }
    let speeds = points
        .iter()
        .map(|p| p.3)
        .chain(per_input.iter().map(|p| p.2));
    let (lo, hi) = speeds.fold((f64::INFINITY, 0.0f64), |(lo, hi), s| {
        (lo.min(s), hi.max(s))
    });
    let ratios = points
        .iter()
        .map(|p| p.2)
        .chain(per_input.iter().map(|p| p.1));
    let top = ratios.fold(1.0f64, f64::max) * 1.12;
    let x_range = (lo / 2.0).max(1e-3)..(hi * 2.0);

    let mut svg = String::new();
    draw(&mut svg, &points, &per_input, x_range, top, report)
        .map_err(|e| CliError::failure(format!("cannot draw the plot: {e}")))?;
    Ok(svg)
}

fn colour(i: usize, kind: Kind) -> RGBColor {
    const PRESETS: [RGBColor; 6] = [
        RGBColor(0x1f, 0x77, 0xb4),
        RGBColor(0xd6, 0x27, 0x28),
        RGBColor(0x2c, 0xa0, 0x2c),
        RGBColor(0x94, 0x67, 0xbd),
        RGBColor(0xff, 0x7f, 0x0e),
        RGBColor(0x17, 0xbe, 0xcf),
    ];
    const BASELINES: [RGBColor; 3] = [
        RGBColor(0x99, 0x99, 0x99),
        RGBColor(0x66, 0x66, 0x66),
        RGBColor(0x22, 0x22, 0x22),
    ];
    match kind {
        Kind::Preset => PRESETS[i % PRESETS.len()],
        Kind::Baseline => BASELINES[i % BASELINES.len()],
    }
}

fn draw(
    svg: &mut String,
    points: &[Overall],
    per_input: &[(String, f64, f64)],
    x_range: std::ops::Range<f64>,
    top: f64,
    report: &BenchReport,
) -> Result<(), Box<dyn std::error::Error>> {
    let root = SVGBackend::with_string(svg, (900, 600)).into_drawing_area();
    root.fill(&WHITE)?;
    let caption = if report.demo_corpus {
        "subrange bench: ratio against encode speed (demo corpus)".to_string()
    } else {
        format!(
            "subrange bench: ratio against encode speed ({} input(s))",
            report.files.len()
        )
    };
    let mut chart = ChartBuilder::on(&root)
        .caption(caption, ("sans-serif", 20))
        .margin(16)
        .x_label_area_size(44)
        .y_label_area_size(56)
        .build_cartesian_2d(x_range.log_scale(), 0.0..top)?;
    chart
        .configure_mesh()
        .x_desc("encode speed, MB/s (log scale); large points: all inputs, small: each input")
        .y_desc("ratio (original / compressed)")
        .draw()?;

    let mut preset_i = 0;
    let mut base_i = 0;
    for (name, kind, ratio, speed) in points {
        let c = match kind {
            Kind::Preset => {
                preset_i += 1;
                colour(preset_i - 1, *kind)
            }
            Kind::Baseline => {
                base_i += 1;
                colour(base_i - 1, *kind)
            }
        };
        let small: Vec<(f64, f64)> = per_input
            .iter()
            .filter(|p| &p.0 == name)
            .map(|p| (p.2, p.1))
            .collect();
        chart.draw_series(
            small
                .iter()
                .map(|&(x, y)| Circle::new((x, y), 3, c.mix(0.45).filled())),
        )?;
        let label = name.clone();
        chart
            .draw_series(std::iter::once(Circle::new(
                (*speed, *ratio),
                7,
                c.filled(),
            )))?
            .label(label)
            .legend(move |(x, y)| Circle::new((x + 8, y), 5, c.filled()));
        chart.draw_series(std::iter::once(
            EmptyElement::at((*speed, *ratio))
                + Text::new(
                    name.clone(),
                    (10, -18),
                    ("sans-serif", 14).into_font().color(&c),
                ),
        ))?;
    }
    chart
        .configure_series_labels()
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .position(SeriesLabelPosition::UpperRight)
        .draw()?;
    root.present()?;
    Ok(())
}
