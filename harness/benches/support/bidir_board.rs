//! Generated boards of invented 400-cell devices whose nets are
//! bidirectional at both ends, for the campaign benches.

use std::fmt::Write;
use virtual_board::{load_board, LoadedBoard};

/// Bidirectional pins per device.
pub const BIDIR_PER_DEVICE: usize = 160;

/// An invented device of 400 boundary cells: per group of ten, two BC_1
/// inputs and four BC_7 BIDIR pins, each with its own BC_1 control cell.
/// The disable results cycle through Z, KEEPER, PULL1 and WEAK0.
pub fn bsdl() -> String {
    let groups = 40;
    let mut t = String::new();
    let w = &mut t;
    let _ = writeln!(w, "entity BIDIR400 is");
    let _ = writeln!(w, "  generic (PHYSICAL_PIN_MAP : string := \"G\");");
    let _ = writeln!(
        w,
        "  port (I : in bit_vector(0 to {}); B : inout bit_vector(0 to {});",
        groups * 2 - 1,
        groups * 4 - 1
    );
    let _ = writeln!(w, "        TCK, TMS, TDI : in bit; TDO : out bit);");
    let _ = writeln!(w, "  use STD_1149_1_2001.all;");
    let _ = writeln!(
        w,
        "  attribute PIN_MAP of BIDIR400 : entity is PHYSICAL_PIN_MAP;"
    );
    let inputs: Vec<String> = (0..groups * 2).map(|i| (10 + i).to_string()).collect();
    let bidir: Vec<String> = (0..groups * 4)
        .map(|i| (10 + groups * 2 + i).to_string())
        .collect();
    let _ = writeln!(
        w,
        "  constant G : PIN_MAP_STRING := \"TCK:1, TMS:2, TDI:3, TDO:4, I:({}), B:({})\";",
        inputs.join(","),
        bidir.join(",")
    );
    for (a, s) in [
        ("TAP_SCAN_IN of TDI", "true"),
        ("TAP_SCAN_OUT of TDO", "true"),
        ("TAP_SCAN_MODE of TMS", "true"),
        ("TAP_SCAN_CLOCK of TCK", "(50.0e6, BOTH)"),
    ] {
        let _ = writeln!(w, "  attribute {a} : signal is {s};");
    }
    let _ = writeln!(
        w,
        "  attribute INSTRUCTION_LENGTH of BIDIR400 : entity is 8;"
    );
    let _ = writeln!(w, "  attribute INSTRUCTION_OPCODE of BIDIR400 : entity is \"EXTEST (00000000), SAMPLE (00000001), IDCODE (00000010), BYPASS (11111111)\";");
    let _ = writeln!(
        w,
        "  attribute INSTRUCTION_CAPTURE of BIDIR400 : entity is \"00000001\";"
    );
    let _ = writeln!(w, "  attribute IDCODE_REGISTER of BIDIR400 : entity is \"0001\" & \"0000000000000010\" & \"10100000000\" & \"1\";");
    let _ = writeln!(
        w,
        "  attribute BOUNDARY_LENGTH of BIDIR400 : entity is 400;"
    );
    let _ = writeln!(w, "  attribute BOUNDARY_REGISTER of BIDIR400 : entity is");
    let mut entries = Vec::new();
    let results = ["Z", "KEEPER", "PULL1", "WEAK0"];
    for g in 0..groups {
        let base = g * 10;
        for k in 0..2 {
            entries.push(format!("{} (BC_1, I({}), INPUT, X)", base + k, g * 2 + k));
        }
        for k in 0..4 {
            let control = base + 2 + 2 * k;
            let pin = g * 4 + k;
            entries.push(format!("{control} (BC_1, *, CONTROL, 1)"));
            entries.push(format!(
                "{} (BC_7, B({pin}), BIDIR, X, {control}, 1, {})",
                control + 1,
                results[pin % 4]
            ));
        }
    }
    let body: Vec<String> = entries.iter().map(|e| format!("    \"{e}\"")).collect();
    let _ = writeln!(w, "{};", body.join(" & \", \" &\n"));
    let _ = writeln!(w, "end BIDIR400;");
    t
}

/// A board of `nets` nets on one TAP port: bidirectional pin 80 + k of
/// device d joins pin k of device d+1; every fifth net has a pull-up.
pub fn board(nets: usize) -> LoadedBoard {
    let half = BIDIR_PER_DEVICE / 2;
    let devices = nets.div_ceil(half) + 1;
    let text = bsdl();
    let mut yaml = String::from("name: generated bidirectional\nfloat: high\ndevices:\n");
    for d in 0..devices {
        yaml += &format!("  U{d}: {{ bsdl: bidir.bsd, outputs: off }}\n");
    }
    let chain: Vec<String> = (0..devices).map(|d| format!("U{d}")).collect();
    yaml += &format!(
        "tap_ports:\n  - {{ name: P, chain: [{}] }}\nnets:\n",
        chain.join(", ")
    );
    let mut pulls = String::new();
    let mut count = 0;
    'all: for d in 0..devices - 1 {
        for k in 0..half {
            if count == nets {
                break 'all;
            }
            yaml += &format!("  N{d}_{k}: [U{d}.B({}), U{}.B({k})]\n", half + k, d + 1);
            if count % 5 == 0 {
                pulls += &format!("  N{d}_{k}: up\n");
            }
            count += 1;
        }
    }
    yaml += "pulls:\n";
    yaml += &pulls;
    // On disk: the campaign's reference runs read the BSDL beside the board.
    let dir = std::env::temp_dir().join(format!("boardtwin-bench-bidir-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap_or_else(|e| panic!("{e}"));
    std::fs::write(dir.join("bidir.bsd"), &text).unwrap_or_else(|e| panic!("{e}"));
    let path = dir.join("generated.yaml");
    std::fs::write(&path, &yaml).unwrap_or_else(|e| panic!("{e}"));
    load_board(&path).unwrap_or_else(|e| panic!("{e}"))
}
