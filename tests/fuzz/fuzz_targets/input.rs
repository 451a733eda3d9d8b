//! Any bytes given as an input file must open and decode to pages, or fail with a clean error:
//! never a panic, never an allocation past the limits.

#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;
use mistara::limits::Limits;

fuzz_target!(|data: &[u8]| {
    // Small caps keep each run fast; the decoding paths are the same as with the defaults.
    let limits = Limits {
        max_pixels: 4_000_000,
        max_side_px: 4_000,
        max_alloc_bytes: 64 << 20,
    };
    let _ = mistara::input::decode_all(Path::new("fuzz-input"), data.to_vec(), limits);
});
