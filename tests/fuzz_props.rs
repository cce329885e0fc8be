//! The fuzz targets' properties (`properties.rs`) as property tests on stable,
//! so `cargo test` checks them on every change; `scripts/fuzz.sh` drives the
//! same functions much longer under libFuzzer on nightly.

use proptest::prelude::*;

use super::properties::{
    chart_fits_the_unit_square, config_is_accepted_or_refused,
    pipeline_alarms_the_same_however_cut, reader_reads_the_same_however_cut,
};

/// Bytes that look like a history often enough to reach the roles and the
/// detectors: named columns, numbers that grow, blow-up spellings, restarts.
fn history_like() -> impl Strategy<Value = Vec<u8>> {
    let token = prop_oneof![
        Just(b"time,displacement,kinetic energy,internal energy,dt\n".to_vec()),
        Just(b"Time [s] Etot[J] step\n".to_vec()),
        Just(b"0.001,1.5E-03,2.0D+02,0.1234+105,1e-3\n".to_vec()),
        Just(b"1e300,-1e308,NaN,Infinity,*****\n".to_vec()),
        Just(b"{\"t\": 1, \"E\": 2}\n".to_vec()),
        Just(b"\xef\xbb\xbf".to_vec()),
        Just(b"\x1b]0;title\x07".to_vec()),
        Just(b"# comment\r\n".to_vec()),
        (0u32..1000, 0u32..1000)
            .prop_map(|(a, b)| format!("{a},{b}.5,1e-3,{b},{a}\n").into_bytes()),
        proptest::collection::vec(any::<u8>(), 0..8),
    ];
    proptest::collection::vec(token, 0..60).prop_map(|t| t.concat())
}

/// Configuration text made of the file's own keys and sections, with values
/// of every kind, so that most cases parse far enough to be validated.
fn config_like() -> impl Strategy<Value = String> {
    let line = prop_oneof![
        Just("[input]\n".to_string()),
        Just("[roles]\n".to_string()),
        Just("[signs]\n".to_string()),
        Just("[thresholds]\n".to_string()),
        Just("[actions]\n".to_string()),
        Just("format = \"pattern\"\n".to_string()),
        Just("pattern = \"t=(?P<time>\\\\S+)\"\n".to_string()),
        Just("pattern = \"(\"\n".to_string()),
        Just("delimiter = \"tab\"\n".to_string()),
        Just("max_line_bytes = 0\n".to_string()),
        Just("max_line_bytes = 18446744073709551615\n".to_string()),
        Just("balance_warning = -1.0\n".to_string()),
        Just("overflow_bound = nan\n".to_string()),
        Just("overflow_bound = 1e-300\n".to_string()),
        Just("scheme = \"central-difference\"\n".to_string()),
        Just("\"Time\" = \"time\"\n".to_string()),
        Just("kinetic = -1\n".to_string()),
        Just("touch = \"STOP\"\n".to_string()),
        "[a-z_]{1,12} = [-0-9.e]{1,8}\n",
        "[ -~]{0,30}\n",
    ];
    proptest::collection::vec(line, 0..12).prop_map(|l| l.concat())
}

/// Values a blow-up writes, and ordinary ones, as little-endian f64 bytes.
fn plotted_values() -> impl Strategy<Value = Vec<u8>> {
    let value = prop_oneof![
        Just(f64::NAN),
        Just(f64::INFINITY),
        Just(f64::NEG_INFINITY),
        Just(f64::MAX),
        Just(-f64::MAX),
        Just(1e308),
        Just(f64::MIN_POSITIVE / 4.0),
        Just(0.0),
        -1e6f64..1e6,
        any::<f64>(),
    ];
    (any::<u8>(), proptest::collection::vec(value, 0..200)).prop_map(|(shape, v)| {
        let mut bytes = vec![shape];
        for x in v {
            bytes.extend_from_slice(&x.to_le_bytes());
        }
        bytes
    })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn reader_with_roles_reads_the_same_however_cut(
        cut in any::<u8>(),
        body in prop_oneof![history_like(), proptest::collection::vec(any::<u8>(), 0..600)],
    ) {
        let mut data = vec![cut];
        data.extend(body);
        reader_reads_the_same_however_cut(&data);
    }

    #[test]
    fn pipeline_with_detectors_alarms_the_same_however_cut(cut in any::<u8>(), body in history_like()) {
        let mut data = vec![cut];
        data.extend(body);
        pipeline_alarms_the_same_however_cut(&data);
    }

    #[test]
    fn config_text_is_accepted_or_refused_never_a_panic(
        text in prop_oneof![config_like(), "\\PC{0,200}"],
    ) {
        config_is_accepted_or_refused(text.as_bytes());
    }

    #[test]
    fn chart_transform_lands_any_values_in_the_unit_square(bytes in plotted_values()) {
        chart_fits_the_unit_square(&bytes);
    }
}
