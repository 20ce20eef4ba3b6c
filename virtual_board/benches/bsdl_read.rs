//! Criterion bench: `parse_bsdl` on a generated BSDL text with 4,000 boundary cells.
//!
//! The text is an invented device (demo data of our own): an 8-bit IR with
//! IDCODE, and cells in groups of 20 — eight BC_1 inputs, seven BC_1
//! three-state outputs sharing one control cell, three BC_7 bidirectional
//! cells sharing another. Pin maps and the boundary register are split over
//! many `&`-joined strings, one cell per string, as BSDL files are written.

use std::fmt::Write;

use criterion::{black_box, criterion_group, criterion_main, Criterion, Throughput};
use virtual_board::{parse_bsdl, CellFunction};

/// Cells per group: 8 inputs, a control and 7 outputs, a control and 3 bidirectional.
const GROUP: usize = 20;
const INPUTS: usize = 8;
const OUTPUTS: usize = 7;
const BIDIRS: usize = 3;

/// A valid BSDL text with `cells` boundary cells (a multiple of 20).
fn generate(cells: usize) -> String {
    assert_eq!(cells % GROUP, 0, "cells must be a multiple of {GROUP}");
    let groups = cells / GROUP;
    let (n_in, n_out, n_bio) = (groups * INPUTS, groups * OUTPUTS, groups * BIDIRS);
    let mut t = String::with_capacity(cells * 64);
    let w = &mut t;
    // Writing to a String cannot fail.
    let _ = writeln!(w, "-- Generated for the bsdl_read bench; invented device.");
    let _ = writeln!(w, "entity BENCH4K is");
    let _ = writeln!(w, "  generic (PHYSICAL_PIN_MAP : string := \"GRID\");");
    let _ = writeln!(w, "  port (");
    let _ = writeln!(w, "    IN_D  : in      bit_vector(0 to {});", n_in - 1);
    let _ = writeln!(w, "    OUT_Q : out     bit_vector({} downto 0);", n_out - 1);
    let _ = writeln!(w, "    BIO   : inout   bit_vector(0 to {});", n_bio - 1);
    let _ = writeln!(w, "    TCK, TMS, TDI, TRST_N : in bit;");
    let _ = writeln!(w, "    TDO   : out     bit;");
    let _ = writeln!(w, "    VDD   : linkage bit_vector(1 to 8)");
    let _ = writeln!(w, "  );");
    let _ = writeln!(w, "  use STD_1149_1_2001.all;");
    let _ = writeln!(
        w,
        "  attribute COMPONENT_CONFORMANCE of BENCH4K : entity is \"STD_1149_1_2001\";"
    );
    let _ = writeln!(
        w,
        "  attribute PIN_MAP of BENCH4K : entity is PHYSICAL_PIN_MAP;"
    );
    let _ = writeln!(w, "  constant GRID : PIN_MAP_STRING :=");
    let _ = writeln!(
        w,
        "    \"TCK:1, TMS:2, TDI:3, TDO:4, TRST_N:5, VDD:(6,7,8,9,10,11,12,13), \" &"
    );
    let mut next_pin = 14;
    for (name, count) in [("IN_D", n_in), ("OUT_Q", n_out), ("BIO", n_bio)] {
        let pins: Vec<String> = (next_pin..next_pin + count)
            .map(|p| p.to_string())
            .collect();
        next_pin += count;
        let _ = writeln!(w, "    \"{name}:(\" &");
        for (i, chunk) in pins.chunks(16).enumerate() {
            let more = (i + 1) * 16 < count;
            let _ = writeln!(
                w,
                "    \"{}{}\" &",
                chunk.join(","),
                if more { "," } else { "" }
            );
        }
        let tail = if name == "BIO" { ")\";" } else { "), \" &" };
        let _ = writeln!(w, "    \"{tail}");
    }
    let _ = writeln!(w, "  attribute TAP_SCAN_IN    of TDI    : signal is true;");
    let _ = writeln!(w, "  attribute TAP_SCAN_MODE  of TMS    : signal is true;");
    let _ = writeln!(w, "  attribute TAP_SCAN_OUT   of TDO    : signal is true;");
    let _ = writeln!(
        w,
        "  attribute TAP_SCAN_CLOCK of TCK    : signal is (20.0e6, BOTH);"
    );
    let _ = writeln!(w, "  attribute TAP_SCAN_RESET of TRST_N : signal is true;");
    let _ = writeln!(
        w,
        "  attribute INSTRUCTION_LENGTH of BENCH4K : entity is 8;"
    );
    let _ = writeln!(w, "  attribute INSTRUCTION_OPCODE of BENCH4K : entity is");
    let _ = writeln!(
        w,
        "    \"EXTEST (00000000), SAMPLE (00000001), PRELOAD (00000010), \" &"
    );
    let _ = writeln!(
        w,
        "    \"IDCODE (00000100), CLAMP (00000101), HIGHZ (00000110, 00000111), \" &"
    );
    let _ = writeln!(w, "    \"BYPASS (11111111)\";");
    let _ = writeln!(
        w,
        "  attribute INSTRUCTION_CAPTURE of BENCH4K : entity is \"000XXX01\";"
    );
    let _ = writeln!(w, "  attribute IDCODE_REGISTER of BENCH4K : entity is");
    let _ = writeln!(
        w,
        "    \"0001\" & \"1011111101000000\" & \"10100000000\" & \"1\";"
    );
    let _ = writeln!(w, "  attribute REGISTER_ACCESS of BENCH4K : entity is");
    let _ = writeln!(w, "    \"BOUNDARY (EXTEST, SAMPLE, PRELOAD), BYPASS (BYPASS, CLAMP, HIGHZ), DEVICE_ID (IDCODE)\";");
    let _ = writeln!(
        w,
        "  attribute BOUNDARY_LENGTH of BENCH4K : entity is {cells};"
    );
    let _ = writeln!(w, "  attribute BOUNDARY_REGISTER of BENCH4K : entity is");
    let mut entries = Vec::with_capacity(cells);
    for g in 0..groups {
        let base = g * GROUP;
        for k in 0..INPUTS {
            entries.push(format!(
                "{} (BC_1, IN_D({}), INPUT, X)",
                base + k,
                g * INPUTS + k
            ));
        }
        let oe = base + INPUTS;
        entries.push(format!("{oe} (BC_1, *, CONTROL, 1)"));
        for k in 0..OUTPUTS {
            entries.push(format!(
                "{} (BC_1, OUT_Q({}), OUTPUT3, X, {oe}, 1, Z)",
                oe + 1 + k,
                g * OUTPUTS + k
            ));
        }
        let dir = oe + 1 + OUTPUTS;
        entries.push(format!("{dir} (BC_1, *, CONTROL, 0)"));
        for k in 0..BIDIRS {
            entries.push(format!(
                "{} (BC_7, BIO({}), BIDIR, X, {dir}, 0, KEEPER)",
                dir + 1 + k,
                g * BIDIRS + k
            ));
        }
    }
    let last = entries.len() - 1;
    for (i, e) in entries.iter().enumerate() {
        let (comma, join) = if i == last { ("", ";") } else { (",", " &") };
        let _ = writeln!(w, "    \"{e}{comma}\"{join}");
    }
    let _ = writeln!(w, "end BENCH4K;");
    t
}

fn bsdl_read(c: &mut Criterion) {
    let text = generate(4000);
    // Checked once, outside the timed loop: the text is valid and complete.
    let model = parse_bsdl(&text).unwrap_or_else(|e| panic!("generated BSDL: {e}"));
    assert_eq!(model.cells.len(), 4000);
    assert_eq!(model.boundary_length, 4000);
    assert_eq!(model.ir_length, 8);
    let count = |f: CellFunction| model.cells.iter().filter(|c| c.function == f).count();
    assert_eq!(count(CellFunction::Input), 1600);
    assert_eq!(count(CellFunction::Output3), 1400);
    assert_eq!(count(CellFunction::Bidir), 600);
    assert_eq!(count(CellFunction::Control), 400);
    assert!(model.unmodelled_attributes.is_empty());

    let mut group = c.benchmark_group("bsdl_read");
    group.throughput(Throughput::Bytes(text.len() as u64));
    group.bench_function("parse_bsdl_4000_cells", |b| {
        b.iter(|| parse_bsdl(black_box(&text)))
    });
    group.finish();
}

criterion_group!(benches, bsdl_read);
criterion_main!(benches);
