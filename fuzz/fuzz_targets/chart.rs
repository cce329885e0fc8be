//! The chart transform every plotted value passes (`rhoscope::scale::fit`):
//! any bit patterns — NaN, ±inf, ±1e308, subnormals — land in the unit square
//! with their order kept and finite labels.
#![no_main]

#[path = "../../tests/properties.rs"]
mod properties;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    properties::chart_fits_the_unit_square(data);
});
