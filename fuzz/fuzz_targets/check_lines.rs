//! Feeds arbitrary bytes through the whole checking pipeline and the
//! formatter: nothing may panic. Run: `cargo fuzz run --sanitizer none check_lines`.
#![no_main]

use lacuna::file::runner::{Recording, Runner};
use lacuna::file::layout::{MarkSpelling, format_text};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let mut recording = Recording::default();
    let mut checker = Runner::new(None, &mut recording);
    let _ = checker.check_reader("fuzz", data);
    if let Ok(text) = std::str::from_utf8(data) {
        let _ = format_text(text, MarkSpelling::Ascii);
    }
});
