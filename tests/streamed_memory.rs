//! Loading values recorded at a resolution holds the distinct values, not the rows: 10^6
//! rows of 100 distinct values (generated on the fly, never held) load into 100 entries,
//! and the heap never grows by more than 1 MB while they stream through the loader and
//! the SHA-256, where holding the rows (the reference loader) takes over 16 MB (8 bytes a
//! value and 16 a line number). The heap is measured by a counting allocator in this test
//! binary, which has this one test so nothing else allocates meanwhile. Exact counts, no
//! timing.

use std::alloc::{GlobalAlloc, Layout, System};
use std::io::Read;
use std::path::Path;
use std::sync::atomic::{AtomicUsize, Ordering};

use mixband::data::HashingReader;
use mixband::run::{load_sample, load_sample_in_memory, Prepared};

struct Counting;

static NOW: AtomicUsize = AtomicUsize::new(0);
static PEAK: AtomicUsize = AtomicUsize::new(0);

unsafe impl GlobalAlloc for Counting {
    unsafe fn alloc(&self, layout: Layout) -> *mut u8 {
        let p = unsafe { System.alloc(layout) };
        if !p.is_null() {
            let now = NOW.fetch_add(layout.size(), Ordering::SeqCst) + layout.size();
            PEAK.fetch_max(now, Ordering::SeqCst);
        }
        p
    }

    unsafe fn dealloc(&self, ptr: *mut u8, layout: Layout) {
        unsafe { System.dealloc(ptr, layout) };
        NOW.fetch_sub(layout.size(), Ordering::SeqCst);
    }
}

#[global_allocator]
static ALLOC: Counting = Counting;

/// The largest growth of the heap while `f` runs, in bytes.
fn peak_growth<T>(f: impl FnOnce() -> T) -> (T, usize) {
    let base = NOW.load(Ordering::SeqCst);
    PEAK.store(base, Ordering::SeqCst);
    let out = f();
    (out, PEAK.load(Ordering::SeqCst) - base)
}

/// CSV text "x\n" then `rows` values 1.00 to 1.99 (100 distinct), made as they are read.
struct Rows {
    next: usize,
    rows: usize,
    pending: Vec<u8>,
}

impl Rows {
    fn new(rows: usize) -> Rows {
        Rows {
            next: 0,
            rows,
            pending: b"x\n".to_vec(),
        }
    }
}

impl Read for Rows {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        while self.pending.len() < buf.len() && self.next < self.rows {
            let v = 100 + (self.next * 37) % 100;
            self.pending
                .extend_from_slice(format!("{}.{:02}\n", v / 100, v % 100).as_bytes());
            self.next += 1;
        }
        let n = buf.len().min(self.pending.len());
        buf[..n].copy_from_slice(&self.pending[..n]);
        self.pending.drain(..n);
        Ok(n)
    }
}

#[test]
fn a_million_rows_of_a_hundred_values_load_in_a_hundred_entries() {
    const N: usize = 1_000_000;
    let text = "[data]\nfile = \"d.csv\"\ncolumn = \"x\"\nresolution = 0.01\n[sampler]\nseed = 1\n";
    let small = "x\n1.00\n1.01\n";
    let config = Prepared::from_text(text, "c.toml", Path::new("."), Some(small.as_bytes()))
        .unwrap()
        .config;

    let (loaded, grew) = peak_growth(|| {
        let mut reader = HashingReader::new(Rows::new(N));
        let loaded = load_sample(&mut reader, &config, "d.csv", "d.csv").unwrap();
        (loaded, reader.finish().unwrap())
    });
    let (loaded, _hash) = loaded;
    assert_eq!(loaded.values.len(), 100);
    assert_eq!(
        loaded.counts.as_ref().unwrap().iter().sum::<u64>(),
        N as u64
    );
    assert_eq!(loaded.recording.n, N as u64);
    assert!(grew < 1 << 20, "streamed: the heap grew by {grew} bytes");

    // The reference holds the rows: the same table, and a heap that grows with them.
    let (reference, grew_ref) =
        peak_growth(|| load_sample_in_memory(Rows::new(N), &config, "d.csv", "d.csv").unwrap());
    assert_eq!(format!("{reference:?}"), format!("{loaded:?}"));
    assert!(
        grew_ref > 16 << 20,
        "in memory: the heap grew by {grew_ref} bytes"
    );
}
