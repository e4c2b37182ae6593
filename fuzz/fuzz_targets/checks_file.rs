//! Fuzz target: the checks-file reader on arbitrary bytes (the harness is shared with the
//! proptest version in tests/reader_properties.rs). A panic, an abort, a hang or running out of
//! memory is a finding; an `Err` with a message is the reader doing its job.
#![no_main]

#[allow(dead_code)]
#[path = "../../tests/common/readers.rs"]
mod readers;

libfuzzer_sys::fuzz_target!(|data: &[u8]| {
    let _ = readers::checks_file(data);
});
