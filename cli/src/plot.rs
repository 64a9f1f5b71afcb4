//! `bench --plot`: the ratio–speed chart, as SVG.
//!
//! Two panels side by side: compressed bits per byte against encode speed,
//! and against decode speed. Speed is on a logarithmic axis (presets and
//! baselines differ by orders of magnitude); smaller and further right is
//! better, so the Pareto front is the lower-right edge of the cloud. Each
//! codec has one large labelled point for all inputs together (total output
//! bits over total input, total input over total time; from
//! [`Summary::overall`], so only codecs that succeeded on every input) and a
//! small point of the same colour per input, so both the overall trade-off
//! and its spread across data kinds show. Presets are circles, baselines
//! triangles coloured by compressor. The SVG is rendered into memory and
//! written by the caller through the safe-output path.

use plotters::coord::Shift;
use plotters::prelude::*;

use crate::bench::BenchReport;
use crate::codec::Kind;
use crate::exit::{CliError, CliResult};
use crate::summary::{Point, Summary};

/// Which speed a panel plots.
#[derive(Clone, Copy)]
enum Direction {
    Encode,
    Decode,
}

impl Direction {
    fn speed(self, p: &Point) -> Option<f64> {
        match self {
            Direction::Encode => p.encode_mb_s(),
            Direction::Decode => p.decode_mb_s(),
        }
    }

    fn axis(self) -> &'static str {
        match self {
            Direction::Encode => "encode speed, MB/s (log scale)",
            Direction::Decode => "decode speed, MB/s (log scale)",
        }
    }
}

/// Renders the chart as SVG text.
///
/// # Errors
///
/// A failure when there is nothing to plot (empty inputs only, or every
/// codec failed) or drawing fails.
pub fn render(report: &BenchReport) -> CliResult<String> {
    let overall = Summary::overall(report).0.points;
    let per_input: Vec<Point> = report
        .files
        .iter()
        .flat_map(|f| Summary::of_input(f).points)
        .collect();
    let plotted = |p: &&Point| {
        p.bits_per_byte().is_some() && p.encode_mb_s().is_some() && p.decode_mb_s().is_some()
    };
    let overall: Vec<Point> = overall.iter().filter(plotted).cloned().collect();
    let per_input: Vec<Point> = per_input.iter().filter(plotted).cloned().collect();
    if overall.is_empty() && per_input.is_empty() {
        return Err(CliError::failure(
            "cannot plot: no codec measured any input that had bytes",
        ));
    }
    let mut svg = String::new();
    draw(&mut svg, &overall, &per_input, report)
        .map_err(|e| CliError::failure(format!("cannot draw the plot: {e}")))?;
    Ok(svg)
}

const PRESETS: [RGBColor; 6] = [
    RGBColor(0x1f, 0x77, 0xb4),
    RGBColor(0xd6, 0x27, 0x28),
    RGBColor(0x2c, 0xa0, 0x2c),
    RGBColor(0x94, 0x67, 0xbd),
    RGBColor(0xff, 0x7f, 0x0e),
    RGBColor(0x17, 0xbe, 0xcf),
];

const BASELINES: [RGBColor; 6] = [
    RGBColor(0x55, 0x55, 0x55),
    RGBColor(0x8c, 0x56, 0x4b),
    RGBColor(0x7f, 0x7f, 0x00),
    RGBColor(0xbc, 0x80, 0xbd),
    RGBColor(0x00, 0x80, 0x80),
    RGBColor(0xaa, 0xaa, 0xaa),
];

/// Each codec's colour: presets in turn, baselines by compressor family
/// (the name up to its last `-`).
fn colours(points: &[Point]) -> Vec<(String, Kind, RGBColor)> {
    let mut out: Vec<(String, Kind, RGBColor)> = Vec::new();
    let mut families: Vec<String> = Vec::new();
    for p in points {
        if out.iter().any(|(n, _, _)| *n == p.codec) {
            continue;
        }
        let c = match p.kind {
            Kind::Preset => PRESETS[out.iter().filter(|o| o.1 == Kind::Preset).count() % 6],
            Kind::Baseline => {
                let family = p.codec.rsplit_once('-').map_or(&p.codec[..], |(f, _)| f);
                let i = match families.iter().position(|f| f == family) {
                    Some(i) => i,
                    None => {
                        families.push(family.to_string());
                        families.len() - 1
                    }
                };
                BASELINES[i % BASELINES.len()]
            }
        };
        out.push((p.codec.clone(), p.kind, c));
    }
    out
}

fn draw(
    svg: &mut String,
    overall: &[Point],
    per_input: &[Point],
    report: &BenchReport,
) -> Result<(), Box<dyn std::error::Error>> {
    let root = SVGBackend::with_string(svg, (1400, 640)).into_drawing_area();
    root.fill(&WHITE)?;
    let inputs = if report.demo_corpus {
        "demo corpus".to_string()
    } else {
        format!("{} input(s)", report.files.len())
    };
    let caption = format!(
        "subrange bench, {inputs}: bits per byte against speed \
         (circles: presets, triangles: baselines; large: all inputs, small: each input)"
    );
    let root = root.titled(&caption, ("sans-serif", 22))?;
    let panels = root.split_evenly((1, 2));
    let all: Vec<Point> = overall.iter().chain(per_input).cloned().collect();
    let palette = colours(&all);
    for (area, dir) in panels.iter().zip([Direction::Encode, Direction::Decode]) {
        panel(area, dir, overall, per_input, &palette)?;
    }
    root.present()?;
    Ok(())
}

/// The (speed, bits per byte) of the points of codec `name` that have
/// both.
fn coordinates<'a>(
    points: &'a [Point],
    name: &'a str,
    dir: Direction,
) -> impl Iterator<Item = (f64, f64)> + Clone + 'a {
    points
        .iter()
        .filter(move |p| p.codec == name)
        .filter_map(move |p| Some((dir.speed(p)?, p.bits_per_byte()?)))
}

fn panel(
    area: &DrawingArea<SVGBackend<'_>, Shift>,
    dir: Direction,
    overall: &[Point],
    per_input: &[Point],
    palette: &[(String, Kind, RGBColor)],
) -> Result<(), Box<dyn std::error::Error>> {
    let all = || overall.iter().chain(per_input);
    let (lo, hi) = all()
        .filter_map(|p| dir.speed(p))
        .fold((f64::INFINITY, 0.0f64), |(lo, hi), s| {
            (lo.min(s), hi.max(s))
        });
    let top = all()
        .filter_map(Point::bits_per_byte)
        .fold(1.0f64, f64::max)
        * 1.1;
    let x_range = (lo / 2.0).max(1e-4)..(hi * 2.0).max(lo * 4.0);
    let mut chart = ChartBuilder::on(area)
        .margin(14)
        .x_label_area_size(44)
        .y_label_area_size(52)
        .build_cartesian_2d(x_range.log_scale(), 0.0..top)?;
    chart
        .configure_mesh()
        .x_desc(dir.axis())
        .y_desc("compressed bits per byte")
        .draw()?;
    for (name, kind, c) in palette {
        let c = *c;
        let small = coordinates(per_input, name, dir);
        let big = coordinates(overall, name, dir);
        match kind {
            Kind::Preset => {
                chart.draw_series(small.map(|xy| Circle::new(xy, 3, c.mix(0.45).filled())))?;
                chart.draw_series(big.clone().map(|xy| Circle::new(xy, 7, c.filled())))?;
            }
            Kind::Baseline => {
                chart.draw_series(
                    small.map(|xy| TriangleMarker::new(xy, 4, c.mix(0.45).filled())),
                )?;
                chart.draw_series(big.clone().map(|xy| TriangleMarker::new(xy, 8, c.filled())))?;
            }
        }
        chart.draw_series(big.map(|xy| {
            EmptyElement::at(xy)
                + Text::new(
                    name.clone(),
                    (9, -16),
                    ("sans-serif", 13).into_font().color(&c),
                )
        }))?;
    }
    Ok(())
}
