//! Arbitrary bytes as a model file: parse → validate → echo → geometry. Errors are fine; a
//! panic, an abort or a hang is a bug.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let text = String::from_utf8_lossy(data);
    let Ok(file) = xsheat::model::parse(&text) else {
        return;
    };
    let Ok(section) = xsheat::model::validate(&file) else {
        return;
    };
    // The echoed model serialises for every valid section.
    assert!(!section.resolved_json().is_null());
    let _ = xsheat::geometry::build(&section);
});
