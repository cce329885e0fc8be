//! The reader with column roles: arbitrary bytes, cut into pieces at a size
//! taken from the first byte, must never panic and must read the same schemas,
//! roles, rows, segments and skips however they are cut. Light per input (no
//! detectors) so it runs fast; `pipeline` adds the detectors.
#![no_main]

#[path = "../../tests/properties.rs"]
mod properties;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    properties::reader_reads_the_same_however_cut(data);
});
