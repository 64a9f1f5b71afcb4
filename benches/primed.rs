//! Small river-gauge frames: primed adaptive and context models against a
//! cold model and raw deflate.
//!
//! Criterion measures time per batch of frames; the sizes (bits per frame,
//! whole frames as sent) are printed once at start-up for both frame
//! layouts, with deflate with and without a preset dictionary. The preset
//! dictionary is emulated (flate2's default backend has no
//! `set_dictionary`), which makes its compression time meaningless, so only
//! its size is reported.

#[allow(dead_code)]
#[path = "../tests/support/mod.rs"]
mod test_support;

use criterion::{black_box, criterion_group, criterion_main, Criterion, Throughput};
use subrange::model::ContextModel;
use subrange::prime::Primer;
use test_support::frame_codecs::{
    cold_frame, deflate_frame, measure, primed_context_snapshot, primed_snapshot, training_sample,
};
use test_support::gauge_frames::{GaugeNetwork, Layout};

const START: u32 = 1_714_521_600;

fn frames(layout: Layout) -> (Vec<Vec<u8>>, Vec<Vec<u8>>) {
    let mut net = GaugeNetwork::new(7, 20, START, layout);
    let training = net.frames(40);
    (training, net.frames(15))
}

fn report_sizes() {
    for layout in [Layout::Binary, Layout::Text] {
        let (training, test) = frames(layout);
        let m = measure(&training, &test);
        eprintln!(
            "{layout:?} frames ({:.0} bits raw), bits/frame: primed context {:.1}, \
             primed order-0 {:.1}, cold {:.1}, deflate {:.1}, deflate+dictionary {:.1}; \
             context/deflate+dictionary {:.3}, order-0/deflate+dictionary {:.3}, \
             context/cold {:.3}",
            m.raw,
            m.primed_context,
            m.primed,
            m.cold,
            m.deflate,
            m.deflate_dictionary,
            m.primed_context / m.deflate_dictionary,
            m.primed / m.deflate_dictionary,
            m.primed_context / m.cold,
        );
    }
}

fn bench_frames(c: &mut Criterion) {
    report_sizes();
    let (training, test) = frames(Layout::Binary);
    let snapshot = primed_snapshot(&training_sample(&training));
    let primer: Primer = Primer::new(&snapshot).unwrap();
    let coded: Vec<Vec<u8>> = test
        .iter()
        .map(|f| primer.encode_message(f).unwrap())
        .collect();
    let bytes: usize = test.iter().map(Vec::len).sum();

    let mut group = c.benchmark_group("primed_frames/binary");
    group.throughput(Throughput::Bytes(bytes as u64));
    group.bench_function("primed_encode", |b| {
        b.iter(|| {
            for f in &test {
                black_box(primer.encode_message(f).unwrap());
            }
        })
    });
    group.bench_function("primed_decode", |b| {
        b.iter(|| {
            for f in &coded {
                black_box(primer.decode_message(f, 256).unwrap());
            }
        })
    });
    group.bench_function("cold_encode", |b| {
        b.iter(|| {
            for f in &test {
                black_box(cold_frame(f));
            }
        })
    });
    group.bench_function("flate2_deflate_encode", |b| {
        b.iter(|| {
            for f in &test {
                black_box(deflate_frame(&[], f));
            }
        })
    });
    group.finish();

    c.bench_function("primed_frames/restore_snapshot", |b| {
        b.iter(|| black_box(Primer::<subrange::model::StepwiseModel>::new(&snapshot).unwrap()))
    });

    // The context model on text frames: slower per byte (it rebuilds a
    // 256-entry table per byte), far smaller frames.
    let (training, test) = frames(Layout::Text);
    let snapshot = primed_context_snapshot(&training_sample(&training));
    let primer: Primer<ContextModel> = Primer::new(&snapshot).unwrap();
    let coded: Vec<Vec<u8>> = test
        .iter()
        .map(|f| primer.encode_message(f).unwrap())
        .collect();
    let bytes: usize = test.iter().map(Vec::len).sum();
    let mut group = c.benchmark_group("primed_frames/text");
    group.throughput(Throughput::Bytes(bytes as u64));
    group.bench_function("context_encode", |b| {
        b.iter(|| {
            for f in &test {
                black_box(primer.encode_message(f).unwrap());
            }
        })
    });
    group.bench_function("context_decode", |b| {
        b.iter(|| {
            for f in &coded {
                black_box(primer.decode_message(f, 256).unwrap());
            }
        })
    });
    group.bench_function("flate2_deflate_encode", |b| {
        b.iter(|| {
            for f in &test {
                black_box(deflate_frame(&[], f));
            }
        })
    });
    group.finish();
    c.bench_function("primed_frames/restore_context_snapshot", |b| {
        b.iter(|| black_box(Primer::<ContextModel>::new(&snapshot).unwrap()))
    });
}

criterion_group!(benches, bench_frames);
criterion_main!(benches);
