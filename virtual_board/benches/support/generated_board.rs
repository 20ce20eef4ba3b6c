//! Generated boards for the benches: many identical invented devices on one TAP port.

use std::fmt::Write;
use std::path::Path;

use virtual_board::{load_board_text, Board};

/// An invented device with `cells` boundary cells (a multiple of 10): per
/// group of ten, five BC_1 inputs, one control cell and four three-state
/// BC_1 outputs; 8-bit IR with IDCODE.
pub fn bsdl(cells: usize) -> String {
    assert_eq!(cells % 10, 0);
    let groups = cells / 10;
    let mut t = String::new();
    let w = &mut t;
    let _ = writeln!(w, "entity GEN{cells} is");
    let _ = writeln!(w, "  generic (PHYSICAL_PIN_MAP : string := \"G\");");
    let _ = writeln!(
        w,
        "  port (I : in bit_vector(0 to {}); Q : out bit_vector(0 to {});",
        groups * 5 - 1,
        groups * 4 - 1
    );
    let _ = writeln!(w, "        TCK, TMS, TDI : in bit; TDO : out bit);");
    let _ = writeln!(w, "  use STD_1149_1_2001.all;");
    let _ = writeln!(
        w,
        "  attribute PIN_MAP of GEN{cells} : entity is PHYSICAL_PIN_MAP;"
    );
    let _ = write!(
        w,
        "  constant G : PIN_MAP_STRING := \"TCK:1, TMS:2, TDI:3, TDO:4, I:("
    );
    let pins: Vec<String> = (0..groups * 5).map(|i| (10 + i).to_string()).collect();
    let _ = write!(w, "{}), Q:(", pins.join(","));
    let pins: Vec<String> = (0..groups * 4)
        .map(|i| (10 + groups * 5 + i).to_string())
        .collect();
    let _ = writeln!(w, "{})\";", pins.join(","));
    let _ = writeln!(w, "  attribute TAP_SCAN_IN of TDI : signal is true;");
    let _ = writeln!(w, "  attribute TAP_SCAN_OUT of TDO : signal is true;");
    let _ = writeln!(w, "  attribute TAP_SCAN_MODE of TMS : signal is true;");
    let _ = writeln!(
        w,
        "  attribute TAP_SCAN_CLOCK of TCK : signal is (50.0e6, BOTH);"
    );
    let _ = writeln!(
        w,
        "  attribute INSTRUCTION_LENGTH of GEN{cells} : entity is 8;"
    );
    let _ = writeln!(w, "  attribute INSTRUCTION_OPCODE of GEN{cells} : entity is \"EXTEST (00000000), SAMPLE (00000001), IDCODE (00000010), BYPASS (11111111)\";");
    let _ = writeln!(
        w,
        "  attribute INSTRUCTION_CAPTURE of GEN{cells} : entity is \"00000001\";"
    );
    let _ = writeln!(w, "  attribute IDCODE_REGISTER of GEN{cells} : entity is \"0001\" & \"0000000000000001\" & \"10100000000\" & \"1\";");
    let _ = writeln!(
        w,
        "  attribute BOUNDARY_LENGTH of GEN{cells} : entity is {cells};"
    );
    let _ = writeln!(w, "  attribute BOUNDARY_REGISTER of GEN{cells} : entity is");
    let mut entries = Vec::new();
    for g in 0..groups {
        let base = g * 10;
        for k in 0..5 {
            entries.push(format!("{} (BC_1, I({}), INPUT, X)", base + k, g * 5 + k));
        }
        entries.push(format!("{} (BC_1, *, CONTROL, 1)", base + 5));
        for k in 0..4 {
            entries.push(format!(
                "{} (BC_1, Q({}), OUTPUT3, X, {}, 1, Z)",
                base + 6 + k,
                g * 4 + k,
                base + 5
            ));
        }
    }
    let body: Vec<String> = entries.iter().map(|e| format!("    \"{e}\"")).collect();
    let _ = writeln!(w, "{};", body.join(" & \", \" &\n"));
    let _ = writeln!(w, "end GEN{cells};");
    t
}

/// The board file of [`chain_board`], named `name`, its devices reading
/// `gen.bsd`: `devices` generated devices of `cells` cells each, chained on
/// one TAP port, each device's outputs wired to the next device's inputs.
pub fn chain_board_yaml(name: &str, devices: usize, cells: usize) -> String {
    let mut yaml = format!("name: {name}\ndevices:\n");
    for d in 0..devices {
        yaml += &format!("  U{d}: {{ bsdl: gen.bsd, outputs: low }}\n");
    }
    let chain: Vec<String> = (0..devices).map(|d| format!("U{d}")).collect();
    yaml += &format!(
        "tap_ports:\n  - {{ name: P, chain: [{}] }}\nnets:\n",
        chain.join(", ")
    );
    let groups = cells / 10;
    for d in 0..devices.saturating_sub(1) {
        for k in 0..groups * 4 {
            yaml += &format!("  N{d}_{k}: [U{d}.Q({k}), U{}.I({k})]\n", d + 1);
        }
    }
    yaml
}

/// `devices` generated devices of `cells` cells each, chained on one TAP
/// port, each device's outputs wired to the next device's inputs.
pub fn chain_board(devices: usize, cells: usize) -> Board {
    let text = bsdl(cells);
    let yaml = chain_board_yaml("generated", devices, cells);
    load_board_text(&yaml, Path::new("generated.yaml"), &mut |_: &Path| {
        Ok((text.clone(), "gen.bsd".into()))
    })
    .map(|l| l.board)
    .unwrap_or_else(|e| panic!("generated board: {e}"))
}
