//! Fuzz the reader and the pipeline: arbitrary bytes, cut into pieces at
//! positions taken from the input itself, must never panic, and the pipeline must
//! give the same rows however the bytes are cut.
#![no_main]

use libfuzzer_sys::fuzz_target;
use rhoscope::alarm::Alarm;
use rhoscope::pipeline::Pipeline;
use rhoscope::settings::Settings;

fuzz_target!(|data: &[u8]| {
    let Some((&cut, body)) = data.split_first() else {
        return;
    };
    let settings = Settings::default();
    let mut whole = Pipeline::new(&settings);
    let mut a: Vec<Alarm> = Vec::new();
    whole.feed(body, None, &mut a);
    whole.finish(&mut a);

    let mut pieces = Pipeline::new(&settings);
    let mut b: Vec<Alarm> = Vec::new();
    for chunk in body.chunks(usize::from(cut).max(1)) {
        pieces.feed(chunk, Some(0.0), &mut b);
    }
    pieces.finish(&mut b);
    assert_eq!(whole.rows(), pieces.rows());
    assert_eq!(a.len(), b.len());
});
