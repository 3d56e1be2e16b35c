//! Times SLIC on a 640x480 reference image (about 400 segments, single thread) and measures its memory.
//!
//! Owns: the SLIC benchmark. Prints milliseconds per image and the ratio to scikit-image 0.26
//! `skimage.segmentation.slic` on the same image with the same settings (median of 5 runs measured by
//! `tests/fixtures/slic/make_slic.py`, read from `tests/fixtures/slic/reference.json`) in wall-clock time
//! and in the thread's CPU time (the fairer figure on a shared machine), and the peak
//! working memory per pixel beyond the input image, both as counted by a global allocator wrapper and as
//! `sayso_core::slic::working_bytes` accounts for it. Goals: at most 0.25x scikit-image's time, at most
//! 24 bytes per pixel.
//! Must not: assert; figures are printed for people to read.

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::Instant;

use criterion::{criterion_group, criterion_main, Criterion};
use sayso_core::raster::{read_rgb_png, DEFAULT_PIXEL_LIMIT};
use sayso_core::slic::{slic, working_bytes, SlicParams};

#[path = "../tests/paths.rs"]
mod paths;

/// Wraps the system allocator to track live and peak heap bytes.
struct CountingAllocator;

static LIVE_BYTES: AtomicUsize = AtomicUsize::new(0);
static PEAK_BYTES: AtomicUsize = AtomicUsize::new(0);

unsafe impl GlobalAlloc for CountingAllocator {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let pointer = unsafe { System.alloc(layout) };
        if !pointer.is_null() {
            let live = LIVE_BYTES.fetch_add(layout.size(), Ordering::Relaxed) + layout.size();
            PEAK_BYTES.fetch_max(live, Ordering::Relaxed);
        }
        pointer
    }

    unsafe fn dealloc(&self, pointer: *mut u8, layout: Layout) {
        unsafe { System.dealloc(pointer, layout) };
        LIVE_BYTES.fetch_sub(layout.size(), Ordering::Relaxed);
    }

    unsafe fn realloc(&self, pointer: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        let moved = unsafe { System.realloc(pointer, layout, new_size) };
        if !moved.is_null() {
            if new_size >= layout.size() {
                let grown = new_size - layout.size();
                let live = LIVE_BYTES.fetch_add(grown, Ordering::Relaxed) + grown;
                PEAK_BYTES.fetch_max(live, Ordering::Relaxed);
            } else {
                LIVE_BYTES.fetch_sub(layout.size() - new_size, Ordering::Relaxed);
            }
        }
        moved
    }
}

#[global_allocator]
static ALLOCATOR: CountingAllocator = CountingAllocator;

const IMAGE: &str = "astronaut";

fn scikit_image_seconds(name: &str, field: &str) -> Option<f64> {
    let path = paths::fixture("slic/reference.json");
    let text = std::fs::read_to_string(path).ok()?;
    let reference: serde_json::Value = serde_json::from_str(&text).ok()?;
    reference["images"]
        .as_array()?
        .iter()
        .find(|image| image["name"] == name)?[field]
        .as_f64()
}

fn median(values: &mut [f64]) -> f64 {
    values.sort_by(f64::total_cmp);
    values[values.len() / 2]
}

/// CPU time this thread has run, from Linux's /proc/thread-self/schedstat (nanoseconds on a CPU).
fn thread_cpu_seconds() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
    let nanoseconds: f64 = text.split_whitespace().next()?.parse().ok()?;
    Some(nanoseconds * 1e-9)
}

fn bench_slic(criterion: &mut Criterion) {
    let path = paths::fixture("slic").join(format!("{IMAGE}.png"));
    let image = match read_rgb_png(&path, DEFAULT_PIXEL_LIMIT) {
        Ok(image) => image,
        Err(error) => {
            eprintln!("cannot run the SLIC benchmark: {error}");
            return;
        }
    };
    let params = SlicParams::default();
    let pixels = image.pixel_count() as f64;

    // Peak working memory, counted by the allocator, beyond what was live before the call.
    let baseline = LIVE_BYTES.load(Ordering::Relaxed);
    PEAK_BYTES.store(baseline, Ordering::Relaxed);
    let segment_count = slic(&image, &params).map_or(0, |result| result.segment_count);
    let measured_peak = PEAK_BYTES.load(Ordering::Relaxed).saturating_sub(baseline);
    let accounted = working_bytes(image.width, image.height, &params);

    // A plain median over repeated runs for the printed ratio; criterion's own report follows. On a shared
    // machine wall time includes waiting for a core, so the thread's own CPU time is printed beside it.
    let mut seconds = Vec::new();
    let mut cpu_seconds = Vec::new();
    for _ in 0..15 {
        let cpu_start = thread_cpu_seconds();
        let start = Instant::now();
        let result = slic(&image, &params);
        seconds.push(start.elapsed().as_secs_f64());
        if let (Some(before), Some(after)) = (cpu_start, thread_cpu_seconds()) {
            cpu_seconds.push(after - before);
        }
        std::hint::black_box(result.ok());
    }
    let ours = median(&mut seconds);
    println!(
        "slic {IMAGE} {}x{}: {segment_count} segments, {:.2} ms per image wall clock (median of 15, single thread)",
        image.width,
        image.height,
        ours * 1e3
    );
    let ours_cpu = (!cpu_seconds.is_empty()).then(|| median(&mut cpu_seconds));
    if let Some(cpu) = ours_cpu {
        println!(
            "slic {IMAGE}: {:.2} ms per image of thread CPU time (median of 15)",
            cpu * 1e3
        );
    }
    match scikit_image_seconds(IMAGE, "skimage_seconds_median") {
        Some(reference) => {
            println!(
                "slic {IMAGE}: scikit-image 0.26 slic {:.2} ms; ratio ours / scikit-image = {:.3} wall clock \
                 (goal <= 0.25)",
                reference * 1e3,
                ours / reference
            );
            let reference_cpu = scikit_image_seconds(IMAGE, "skimage_cpu_seconds_median");
            if let (Some(cpu), Some(reference_cpu)) = (ours_cpu, reference_cpu) {
                println!(
                    "slic {IMAGE}: scikit-image thread CPU time {:.2} ms; ratio ours / scikit-image = {:.3} \
                     in CPU time (goal <= 0.25)",
                    reference_cpu * 1e3,
                    cpu / reference_cpu
                );
            }
        }
        None => println!("slic {IMAGE}: no scikit-image time in the fixture"),
    }
    println!(
        "slic {IMAGE}: peak working memory {:.2} bytes/pixel measured by the allocator, {:.2} bytes/pixel \
         by working_bytes (goal <= 24)",
        measured_peak as f64 / pixels,
        accounted as f64 / pixels
    );

    criterion.bench_function("slic_640x480_400_segments", |bencher| {
        bencher.iter(|| slic(std::hint::black_box(&image), &params))
    });
}

criterion_group!(benches, bench_slic);
criterion_main!(benches);
