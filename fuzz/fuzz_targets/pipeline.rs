//! The whole pipeline — reader, roles, detectors, alarm book — on arbitrary
//! bytes: never a panic, and the same alarms at the same lines however the
//! bytes are cut.
#![no_main]

#[path = "../../tests/properties.rs"]
mod properties;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    properties::pipeline_alarms_the_same_however_cut(data);
});
