//! Defect list reader, applied to the demo board.
#![no_main]
use std::path::Path;

use libfuzzer_sys::fuzz_target;
use virtual_board::{BsdlError, BsdlErrorKind, DefectSpec};

fuzz_target!(|data: &[u8]| {
    let text = boardtwin_fuzz::text(data);
    if let Ok((list, _)) = virtual_board::read_yaml::<Vec<DefectSpec>>(&text) {
        let mut none = |p: &Path| {
            Err(BsdlError {
                path: Some(p.to_path_buf()),
                span: Default::default(),
                kind: BsdlErrorKind::Io("no file".into()),
            })
        };
        let _ = boardtwin_fuzz::demo().with_defects(&list, &mut none);
    }
});
