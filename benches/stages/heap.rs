//! A counting global allocator for the stage benchmark: live and peak heap
//! bytes, so a stage's peak can be read after it runs.
//!
//! Invariants: [`live`] is the sum of the sizes of the blocks handed out
//! and not yet freed (a `realloc` counts as the new size replacing the
//! old). It is kept in per-thread shards, each on its own cache line, so
//! threads allocating at once do not fight over one counter (a shared
//! counter made a 2-thread batch measurably slower than the work is).
//! While peak tracking is on, a second, shared count follows every change
//! too, and `peak` is at least that count at every moment since the last
//! [`reset_peak`]; sections timed on several threads (the batch) turn it
//! off with [`set_tracking`], and their peak is not measured. Counting uses
//! relaxed atomics: each update is applied once; the peak may miss a
//! nanosecond-wide spike between two threads' updates, never overstate.

use std::alloc::{GlobalAlloc, Layout, System};
use std::cell::Cell;
use std::sync::atomic::{AtomicBool, AtomicIsize, AtomicUsize, Ordering::Relaxed};

/// The system allocator, counting.
pub struct Counting;

const SHARDS: usize = 16;

/// One shard's count, alone on its cache line.
#[repr(align(128))]
struct Shard(AtomicIsize);

#[allow(clippy::declare_interior_mutable_const)]
const ZERO: Shard = Shard(AtomicIsize::new(0));
static LIVE: [Shard; SHARDS] = [ZERO; SHARDS];
static NEXT_SHARD: AtomicUsize = AtomicUsize::new(0);
static TRACKING: AtomicBool = AtomicBool::new(true);
static TRACKED: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

thread_local! {
    // a const initializer: no allocation, no destructor
    static SHARD: Cell<usize> = const { Cell::new(usize::MAX) };
}

fn shard() -> &'static AtomicIsize {
    let i = SHARD
        .try_with(|s| {
            if s.get() == usize::MAX {
                s.set(NEXT_SHARD.fetch_add(1, Relaxed) % SHARDS);
            }
            s.get()
        })
        .unwrap_or(0); // a thread being torn down
    &LIVE[i].0
}

fn grew(by: usize) {
    shard().fetch_add(by as isize, Relaxed);
    if TRACKING.load(Relaxed) {
        let now = TRACKED.fetch_add(by, Relaxed).wrapping_add(by);
        PEAK.fetch_max(now, Relaxed);
    }
}

fn shrank(by: usize) {
    shard().fetch_sub(by as isize, Relaxed);
    if TRACKING.load(Relaxed) {
        TRACKED.fetch_sub(by, Relaxed);
    }
}

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let p = System.alloc(layout);
        if !p.is_null() {
            grew(layout.size());
        }
        p
    }
    unsafe fn alloc_zeroed(&self, layout: Layout) -> *mut u8 {
        let p = System.alloc_zeroed(layout);
        if !p.is_null() {
            grew(layout.size());
        }
        p
    }
    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        System.dealloc(ptr, layout);
        shrank(layout.size());
    }
    unsafe fn realloc(&self, ptr: *mut u8, layout: Layout, new_size: usize) -> *mut u8 {
        let p = System.realloc(ptr, layout, new_size);
        if !p.is_null() {
            if new_size >= layout.size() {
                grew(new_size - layout.size());
            } else {
                shrank(layout.size() - new_size);
            }
        }
        p
    }
}

/// Heap bytes in use now (exact when no other thread is allocating).
pub fn live() -> usize {
    LIVE.iter().map(|s| s.0.load(Relaxed)).sum::<isize>().max(0) as usize
}

/// The most heap bytes in use at once since the last [`reset_peak`], while
/// tracking was on.
pub fn peak() -> usize {
    PEAK.load(Relaxed)
}

/// Starts a new measured section: the tracked count and the peak become
/// the live bytes now.
pub fn reset_peak() {
    let now = live();
    TRACKED.store(now, Relaxed);
    PEAK.store(now, Relaxed);
}

/// Turns peak tracking on (synchronized with [`live`], as by
/// [`reset_peak`]) or off (only the shards count).
pub fn set_tracking(on: bool) {
    TRACKING.store(on, Relaxed);
    if on {
        reset_peak();
    }
}

/// Bytes as MiB.
pub fn mib(bytes: usize) -> f64 {
    bytes as f64 / (1u64 << 20) as f64
}
