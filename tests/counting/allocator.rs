//! A counting global allocator for the memory tests: it wraps the system allocator and keeps the live heap
//! bytes and their peak, so a test can measure what some work holds. Each memory test is a test binary of
//! its own (`tests/image_memory.rs`, `tests/scene_memory.rs`, `tests/service_scene_cache.rs`), because the
//! counters are global to the process; this module is included in each with `#[path]`.
//!
//! Owns: the allocator, its two counters, and `measured`. Must not: measure anything itself.

// Each test binary uses one of the two readings.
#![allow(dead_code)]

use std::alloc::{GlobalAlloc, Layout, System};
use std::sync::atomic::{AtomicUsize, Ordering};

struct Counting;

static LIVE: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

fn grew(bytes: usize) {
    let live = LIVE.fetch_add(bytes, Ordering::Relaxed) + bytes;
    PEAK.fetch_max(live, Ordering::Relaxed);
}

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let pointer = System.alloc(layout);
        if !pointer.is_null() {
            grew(layout.size());
        }
        pointer
    }

    unsafe fn dealloc(&self, pointer: *mut u8, layout: Layout) {
        System.dealloc(pointer, layout);
        LIVE.fetch_sub(layout.size(), Ordering::Relaxed);
    }

    unsafe fn realloc(&self, pointer: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        let moved = System.realloc(pointer, layout, new_size);
        if !moved.is_null() {
            if new_size > layout.size() {
                grew(new_size - layout.size());
            } else {
                LIVE.fetch_sub(layout.size() - new_size, Ordering::Relaxed);
            }
        }
        moved
    }
}

#[global_allocator]
static ALLOCATOR: Counting = Counting;

/// The heap bytes live now.
pub fn live() -> usize {
    LIVE.load(Ordering::Relaxed)
}

/// The heap `work` holds at its peak above what was live when it started, what it still holds when it
/// returns (its result included), and its result. Measurements must not overlap: the counters are the
/// process's.
pub fn measured<T>(work: impl FnOnce() -> T) -> (usize, isize, T) {
    let start = LIVE.load(Ordering::Relaxed);
    PEAK.store(start, Ordering::Relaxed);
    let result = work();
    let kept = LIVE.load(Ordering::Relaxed) as isize - start as isize;
    (PEAK.load(Ordering::Relaxed) - start, kept, result)
}
