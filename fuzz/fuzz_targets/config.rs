//! The configuration file parser: any text is accepted or refused with an
//! error, never a panic; an accepted configuration reads a small history.
#![no_main]

#[path = "../../tests/properties.rs"]
mod properties;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    properties::config_is_accepted_or_refused(data);
});
