//! The BSDL reader against the rules of IEEE 1149.1 Annex B: one model read in full, one test per check.
//!
//! The device below (entity BTW9100) is invented for these tests: no real
//! part, maker or data sheet lies behind it, and the manufacturer code in its
//! IDCODE is invented too. The rules each test stands on are written from
//! memory unless a comment says otherwise.

use std::path::PathBuf;

use virtual_board::{
    parse_bsdl, read_bsdl, read_bsdl_text, BitPattern, BoundaryCell, CellControl, CellFunction,
    CellType, ClockStop, DeviceModel, DisableResult, PortMode, PortRange, PortRef, RangeDir,
    RegisterAccess, RegisterKind, Span,
};

/// A complete BSDL text in the style of the standard's Annex B examples.
///
/// Mixed letter case and comments in odd places are on purpose. Comments hold
/// no double quote and strings no `--`, so the helpers below can cut the text
/// without a lexer. `bsdl_no_panic.rs` reads this constant from this file.
const BASE: &str = r#"-- ==========================================================================
-- BTW9100: an invented device for boardtwin's BSDL reader tests. No real
-- part, maker or data sheet lies behind it; its manufacturer code is
-- invented. Written in the style of IEEE 1149.1-2001 Annex B (from memory).
-- ==========================================================================

Entity BTW9100 is   -- the entity name is ours

   -- The generic selects the second of the two pin maps below.
   generic (PHYSICAL_PIN_MAP : string := "BGA36");

   PORT (
      TCK    : in      bit;
      TMS    : in      bit;
      TDI    : in      bit;
      TRST_N : in      bit;                    -- TRST*, active low
      TDO    : out     bit;
      CLK_IN : in      bit;                    -- system clock, observed only
      Sense  : in      bit;
      EN_N   : in      bit;                    -- enable, also a control cell
      A      : in      bit_vector(0 to 3);     -- ascending range
      D      : inout   Bit_Vector(3 downto 0); -- descending range
      Q      : out     bit_vector(1 to 2);
      Rdy    : buffer  bit;
      INT_N  : out     bit;
      TX     : out     bit;                    -- AC-coupled driver (1149.6)
      VCC    : linkage bit;                    -- one port, three pins
      GND    : linkage bit_vector(0 to 1)
   );

   use STD_1149_1_2001.all;   -- the standard's cells and attributes

   attribute COMPONENT_CONFORMANCE of BTW9100 : entity is "STD_1149_1_2001";

   attribute PIN_MAP of btw9100 : entity is PHYSICAL_PIN_MAP;

   -- ---- pin maps ----
   constant QFN28 : PIN_MAP_STRING :=
      "VCC:(1, 12, 23), " &
      "TCK:2, TMS:3, TDI:4, TRST_N:5, TDO:6, " &
      "A:(7, 8, 9, 10), CLK_IN:11, SENSE:13, EN_N:14, " &
      "D:(15, 16, 17, 18), Q:(19, 20), RDY:21, INT_N:22, " &
      "TX:24, GND:(25, 26)";          -- pins 27 and 28 are not connected

   constant BGA36 : PIN_MAP_STRING :=
      "VCC:(A1, C3, F6), " &
      "TCK:A2, TMS:A3, TDI:A4, TRST_N:A5, TDO:A6, " &
      "A:(B1, B2, B3, B4), " &        -- A(0) is ball B1: left index first
      "CLK_IN:B5, Sense:B6, EN_N:C1, " &
      "D:(D1, D2, D3, D4), " &        -- D(3) is ball D1: left index first
      "Q:(E1, E2), rdy:E3, INT_N:E4, TX:E5, " &
      "GND:(F1, F2)";

   -- ---- test access port ----
   attribute TAP_SCAN_IN    of TDI    : signal is true;
   attribute TAP_SCAN_MODE  of TMS    : signal is true;
   attribute TAP_SCAN_OUT   of TDO    : signal is true;
   attribute TAP_SCAN_CLOCK of TCK    : signal is (25.0e6, LOW);
   attribute TAP_SCAN_RESET of TRST_N : signal is true;

   -- ---- instruction register ----
   attribute INSTRUCTION_LENGTH of BTW9100 : entity is 4;

   attribute INSTRUCTION_OPCODE of BTW9100 : entity is
      "EXTEST    (0000), " &
      "SAMPLE    (0001), " &
      "PRELOAD   (0001), " &          -- 2001: SAMPLE and PRELOAD may share
      "IDCODE    (0010), " &
      "USERCODE  (0011), " &
      "HIGHZ     (0100), " &
      "CLAMP     (0101), " &
      "Diag_Run  (10x0), " &          -- bit 1 is not decoded: 1000 and 1010
      "Diag_Read (1001), " &
      "BYPASS    (1111, 1110)";       -- two opcodes for one instruction

   attribute INSTRUCTION_CAPTURE of BTW9100 : entity is "0X01";  -- bit 2: status

   attribute INSTRUCTION_PRIVATE of BTW9100 : entity is "diag_run, DIAG_READ";

   -- ---- identification ----
   attribute IDCODE_REGISTER of BTW9100 : entity is
      "XXXX" &                 -- version: varies between revisions
      "0101101001110001" &     -- part number 5A71 hex (ours)
      "10101111111" &          -- manufacturer (invented)
      "1";                     -- the fixed 1

   attribute USERCODE_REGISTER of BTW9100 : entity is
      "1100xxxx" & "00000000" &   -- x: programmed by the board maker
      "xxxxxxxx" & "10100101";

   -- ---- data registers ----
   attribute REGISTER_ACCESS of BTW9100 : entity is
      "BOUNDARY (EXTEST, SAMPLE, PRELOAD), " &
      "BYPASS (BYPASS, HIGHZ, CLAMP), " &
      "DEVICE_ID (IDCODE, USERCODE), " &
      "DIAG_STATUS[12] (Diag_Run, Diag_Read CAPTURES 0000XXXX0101)";

   -- ---- boundary register ----
   attribute BOUNDARY_LENGTH of BTW9100 : entity is 20;

   attribute BOUNDARY_REGISTER of BTW9100 : entity is
   -- num  cell   port     function  safe ccell disval rslt
      "0   (BC_1, Q(1),    OUTPUT3,  X,   2,    1,     Z), " &
      "1   (BC_1, Q(2),    OUTPUT3,  X,   2,    1,     Z), " &
      "2   (BC_1, *,       CONTROL,  1), " &
      "3   (BC_7, D(0),    BIDIR,    X,   7,    0,     PULL1), " &
      "4   (BC_7, D(1),    BIDIR,    X,   7,    0,     PULL0), " &
      "5   (BC_7, D(2),    BIDIR,    X,   7,    0,     WEAK1), " &
      "6   (BC_7, D(3),    BIDIR,    X,   7,    0,     WEAK0), " &
      "7   (BC_2, *,       CONTROL,  0), " &
      "8   (BC_2, RDY,     OUTPUT2,  0), " &
      "9   (BC_2, INT_N,   OUTPUT3,  1,   10,   0,     KEEPER), " &
      "10  (BC_2, *,       CONTROLR, 0), " &
      -- a merged cell: cell 11 observes EN_N and controls TX
      "11  (BC_5, EN_N,    INPUT,    X), " &
      "11  (BC_5, *,       CONTROL,  0), " &
      "12  (AC_1, TX,      OUTPUT3,  X,   11,   0,     Z), " &
      "13  (BC_4, CLK_IN,  CLOCK,    X), " &
      "14  (bc_4, sense,   observe_only, x), " &
      "15  (BC_1, A(3),    INPUT,    X), " &
      "16  (BC_1, A(2),    INPUT,    X), " &
      "17  (BC_1, A(1),    INPUT,    X), " &
      "18  (BC_1, A(0),    INPUT,    X), " &
      "19  (BC_1, *,       INTERNAL, X)";

   -- ---- attributes this model does not use ----
   attribute AIO_COMPONENT_CONFORMANCE of BTW9100 : entity is "STD_1149_6_2003";
   attribute AIO_PIN_BEHAVIOR of BTW9100 : entity is
      "TX : LP_time=22.5e-9 HP_time=100.0e-9";
   attribute REGISTER_MNEMONICS of BTW9100 : entity is
      "Diag_Modes (Off (00), Loop (01), Sweep (10))";
   attribute Design_Warning of BTW9100 : entity is
      "Diag_Run drives the outputs; " &
      "do not run it on a powered board.";

-- ---- end ----
end BTW9100;
"#;

/// The rendered error for `text`, which must fail.
fn err(text: &str) -> String {
    parse_bsdl(text).unwrap_err().to_string()
}

/// `text` with the one occurrence of `from` replaced by `to`.
fn mutate(text: &str, from: &str, to: &str) -> String {
    assert_eq!(text.matches(from).count(), 1, "`{from}` must occur once");
    let out = text.replacen(from, to, 1);
    assert_ne!(out, text, "the replacement of `{from}` changed nothing");
    out
}

/// The base text with one replacement.
fn base_with(from: &str, to: &str) -> String {
    mutate(BASE, from, to)
}

fn base() -> DeviceModel {
    parse_bsdl(BASE).expect("the base text is valid")
}

/// The model with every span cleared, to compare texts laid out differently.
fn unspanned(mut m: DeviceModel) -> DeviceModel {
    m.ports.iter_mut().for_each(|p| p.span = Span::default());
    m.instructions
        .iter_mut()
        .for_each(|i| i.span = Span::default());
    m.cells.iter_mut().for_each(|c| c.span = Span::default());
    m.tap
        .declared_at
        .iter_mut()
        .for_each(|(_, s)| *s = Span::default());
    m
}

/// The model with every name upper-cased (BSDL names are case-insensitive).
fn upper_names(mut m: DeviceModel) -> DeviceModel {
    let up = |s: &mut String| *s = s.to_ascii_uppercase();
    up(&mut m.entity);
    up(&mut m.package);
    m.packages.iter_mut().for_each(up);
    for p in &mut m.ports {
        up(&mut p.name);
        p.pins.iter_mut().flatten().for_each(up);
    }
    let t = &mut m.tap;
    for s in [&mut t.tdi, &mut t.tdo, &mut t.tms, &mut t.tck, &mut t.trst] {
        s.iter_mut().for_each(up);
    }
    m.instructions.iter_mut().for_each(|i| up(&mut i.name));
    // A string's text is kept as written, too.
    m.design_warning.iter_mut().for_each(up);
    for a in &mut m.register_access {
        up(&mut a.instruction);
        if let RegisterKind::User { name, .. } = &mut a.register {
            up(name);
        }
    }
    for c in &mut m.cells {
        if let Some(p) = &mut c.port {
            up(&mut p.name);
        }
    }
    m
}

/// 1-based line and column of the first `needle` in `text` (found by text
/// search, not by the reader).
fn place(text: &str, needle: &str) -> (usize, usize) {
    let at = text.find(needle).expect("needle in text");
    let line = text[..at].matches('\n').count() + 1;
    let col = at - text[..at].rfind('\n').map_or(0, |n| n + 1) + 1;
    (line, col)
}

fn pat(msb_first: &str) -> BitPattern {
    BitPattern::parse(msb_first).expect("a 0/1/X pattern")
}

fn cell(
    num: u32,
    cell: CellType,
    port: Option<(&str, Option<i64>)>,
    function: CellFunction,
    safe: Option<bool>,
    control: Option<(u32, bool, DisableResult)>,
) -> BoundaryCell {
    BoundaryCell {
        num,
        cell,
        port: port.map(|(name, index)| PortRef {
            name: name.to_string(),
            index,
        }),
        function,
        safe,
        control: control.map(|(cell, disable_value, disable_result)| CellControl {
            cell,
            disable_value,
            disable_result,
        }),
        span: Span::default(),
    }
}

// ---------------------------------------------------------------------------
// The whole model
// ---------------------------------------------------------------------------

// IEEE 1149.1-2001 Annex B (BSDL), from memory: the entity header, generic
// PHYSICAL_PIN_MAP selecting one PIN_MAP_STRING constant, and `use` clauses.
#[test]
fn entity_package_and_uses() {
    let m = base();
    assert_eq!(m.entity, "BTW9100");
    assert_eq!(m.source, None);
    assert_eq!(m.package, "BGA36");
    assert_eq!(m.packages, ["QFN28", "BGA36"]);
    assert_eq!(m.uses, ["STD_1149_1_2001"]);
}

/// A port as (name, mode, range, pins per element).
type PortRow<'a> = (&'a str, PortMode, Option<PortRange>, Vec<Vec<&'a str>>);

// IEEE 1149.1-2001 Annex B, from memory: VHDL port modes, `to`/`downto`
// ranges, and positional pin association, left index first: D(3 downto 0)
// mapped to (D1, D2, D3, D4) puts D(3) on D1 and D(0) on D4. A scalar port
// given a pin list is bonded to all of them; pin IDs may be BGA ball names
// (IEEE 1149.1-2001 Annex B grammar, from memory).
#[test]
fn ports_modes_ranges_and_pins() {
    let m = base();
    let to = |l, r| {
        Some(PortRange {
            left: l,
            right: r,
            dir: RangeDir::To,
        })
    };
    let ports: Vec<PortRow> = m
        .ports
        .iter()
        .map(|p| {
            let pins = p
                .pins
                .iter()
                .map(|e| e.iter().map(String::as_str).collect())
                .collect();
            (p.name.as_str(), p.mode.clone(), p.range, pins)
        })
        .collect();
    let one = |pin| vec![vec![pin]];
    assert_eq!(
        ports,
        vec![
            ("TCK", PortMode::In, None, one("A2")),
            ("TMS", PortMode::In, None, one("A3")),
            ("TDI", PortMode::In, None, one("A4")),
            ("TRST_N", PortMode::In, None, one("A5")),
            ("TDO", PortMode::Out, None, one("A6")),
            ("CLK_IN", PortMode::In, None, one("B5")),
            ("Sense", PortMode::In, None, one("B6")),
            ("EN_N", PortMode::In, None, one("C1")),
            (
                "A",
                PortMode::In,
                to(0, 3),
                vec![vec!["B1"], vec!["B2"], vec!["B3"], vec!["B4"]]
            ),
            (
                "D",
                PortMode::InOut,
                Some(PortRange {
                    left: 3,
                    right: 0,
                    dir: RangeDir::Downto
                }),
                vec![vec!["D1"], vec!["D2"], vec!["D3"], vec!["D4"]]
            ),
            ("Q", PortMode::Out, to(1, 2), vec![vec!["E1"], vec!["E2"]]),
            ("Rdy", PortMode::Buffer, None, one("E3")),
            ("INT_N", PortMode::Out, None, one("E4")),
            ("TX", PortMode::Out, None, one("E5")),
            ("VCC", PortMode::Linkage, None, vec![vec!["A1", "C3", "F6"]]),
            (
                "GND",
                PortMode::Linkage,
                to(0, 1),
                vec![vec!["F1"], vec!["F2"]]
            ),
        ]
    );
    let d = m.port("d").expect("D, found case-insensitively");
    assert_eq!(d.pins_of(Some(3)), Some(&["D1".to_string()][..]));
    assert_eq!(d.pins_of(Some(0)), Some(&["D4".to_string()][..]));
    let a = m.port("A").expect("A");
    assert_eq!(a.pins_of(Some(0)), Some(&["B1".to_string()][..]));
    assert_eq!(a.pins_of(Some(3)), Some(&["B4".to_string()][..]));
    // Every span names the declaration it came from.
    for p in &m.ports {
        let at = p.span.offset as usize;
        assert!(BASE[at..].starts_with(&p.name), "span of port {}", p.name);
        assert_eq!(p.span.line as usize, BASE[..at].matches('\n').count() + 1);
    }
}

// IEEE 1149.1-2001 Annex B, from memory: the other package's pin map is
// applied when the generic selects it.
#[test]
fn the_first_package_maps_numeric_pins() {
    let m = parse_bsdl(&base_with(r#":= "BGA36""#, r#":= "QFN28""#)).unwrap();
    assert_eq!(m.package, "QFN28");
    assert_eq!(m.port("VCC").unwrap().pins, [["1", "12", "23"]]);
    assert_eq!(
        m.port("D").unwrap().pins_of(Some(3)),
        Some(&["15".to_string()][..])
    );
    assert_eq!(
        m.port("D").unwrap().pins_of(Some(0)),
        Some(&["18".to_string()][..])
    );
    assert_eq!(m.port("Q").unwrap().pins, [["19"], ["20"]]);
}

// IEEE 1149.1-2001 Annex B, from memory: TAP_SCAN_IN/OUT/MODE/CLOCK/RESET
// name the TAP ports; TAP_SCAN_CLOCK gives (maximum frequency in Hz, BOTH|LOW).
#[test]
fn tap_signals() {
    let t = base().tap;
    assert_eq!(t.tdi.as_deref(), Some("TDI"));
    assert_eq!(t.tdo.as_deref(), Some("TDO"));
    assert_eq!(t.tms.as_deref(), Some("TMS"));
    assert_eq!(t.tck.as_deref(), Some("TCK"));
    assert_eq!(t.trst.as_deref(), Some("TRST_N"));
    assert_eq!(t.tck_max_hz, Some(25_000_000.0));
    assert_eq!(t.tck_stop, Some(ClockStop::Low));
}

// IEEE 1149.1-2001 Annex B and clause 8, from memory: INSTRUCTION_OPCODE
// patterns are written MSB first, may list several opcodes per instruction
// and X for a bit not decoded; INSTRUCTION_PRIVATE marks private ones;
// INSTRUCTION_CAPTURE may hold X for design-specific bits.
#[test]
fn instructions_opcodes_private_and_capture() {
    let m = base();
    assert_eq!(m.ir_length, 4);
    let ins: Vec<(&str, Vec<String>, bool)> = m
        .instructions
        .iter()
        .map(|i| {
            (
                i.name.as_str(),
                i.opcodes.iter().map(ToString::to_string).collect(),
                i.private,
            )
        })
        .collect();
    let op = |s: &[&str]| s.iter().map(|x| x.to_string()).collect::<Vec<_>>();
    assert_eq!(
        ins,
        vec![
            ("EXTEST", op(&["0000"]), false),
            ("SAMPLE", op(&["0001"]), false),
            ("PRELOAD", op(&["0001"]), false),
            ("IDCODE", op(&["0010"]), false),
            ("USERCODE", op(&["0011"]), false),
            ("HIGHZ", op(&["0100"]), false),
            ("CLAMP", op(&["0101"]), false),
            ("Diag_Run", op(&["10X0"]), true),
            ("Diag_Read", op(&["1001"]), true),
            ("BYPASS", op(&["1111", "1110"]), false),
        ]
    );
    for i in &m.instructions {
        let at = i.span.offset as usize;
        assert!(
            BASE[at..].starts_with(&i.name),
            "span of instruction {}",
            i.name
        );
    }
    // The rightmost character is bit 0, the bit nearest TDO.
    let run = &m.instruction("DIAG_RUN").unwrap().opcodes[0];
    assert!(run.matches(&[false, false, false, true]) && run.matches(&[false, true, false, true]));
    assert!(!run.matches(&[true, false, false, true]));
    assert_eq!(m.ir_capture.to_string(), "0X01");
    assert_eq!(m.ir_capture, pat("0x01"));
    assert_eq!(
        (m.ir_capture.value_u64(), m.ir_capture.mask_u64()),
        (0b0001, 0b1011)
    );
}

// IEEE 1149.1-2001 clause 10 and Annex B, from memory: IDCODE is 32 bits
// written MSB first, often split over several strings; version = bits 31:28,
// part number = 27:12, manufacturer = 11:1, bit 0 = 1. The manufacturer
// field here is invented: its low seven bits are 1111111, the JEDEC
// continuation code, which names no company (from memory).
#[test]
fn idcode_and_usercode() {
    let m = base();
    let id = m.idcode.expect("IDCODE_REGISTER");
    assert_eq!(id.to_string(), "XXXX0101101001110001101011111111");
    let (part, maker) = (0x5A71u64, 0b101_0111_1111u64);
    assert_eq!(id.value_u64(), (part << 12) | (maker << 1) | 1);
    assert_eq!(id.value_u64(), 0x05A7_1AFF);
    assert_eq!(id.mask_u64(), 0x0FFF_FFFF, "the version bits 31:28 are X");
    let user = m.usercode.expect("USERCODE_REGISTER");
    assert_eq!(user.to_string(), "1100XXXX00000000XXXXXXXX10100101");
    assert_eq!(user.value_u64(), 0xC000_00A5);
    assert_eq!(user.mask_u64(), 0xF0FF_00FF);
}

// IEEE 1149.1-2001 Annex B, from memory: REGISTER_ACCESS associates
// instructions with BOUNDARY, BYPASS, DEVICE_ID (no length) or a
// design-specific register NAME[length]; CAPTURES states what it captures
// (IEEE 1149.1-2001 Annex B, from memory; the CAPTURES form is the least sure).
#[test]
fn register_access() {
    let m = base();
    let access = |ins: &str, register: RegisterKind, captures: Option<&str>| RegisterAccess {
        instruction: ins.to_string(),
        register,
        captures: captures.map(pat),
    };
    let diag = RegisterKind::User {
        name: "DIAG_STATUS".into(),
        length: 12,
    };
    assert_eq!(
        m.register_access,
        vec![
            access("EXTEST", RegisterKind::Boundary, None),
            access("SAMPLE", RegisterKind::Boundary, None),
            access("PRELOAD", RegisterKind::Boundary, None),
            access("BYPASS", RegisterKind::Bypass, None),
            access("HIGHZ", RegisterKind::Bypass, None),
            access("CLAMP", RegisterKind::Bypass, None),
            access("IDCODE", RegisterKind::DeviceId, None),
            access("USERCODE", RegisterKind::DeviceId, None),
            access("Diag_Run", diag.clone(), None),
            access("Diag_Read", diag.clone(), Some("0000XXXX0101")),
        ]
    );
    assert_eq!(m.register_for("diag_read"), Some(diag));
}

// IEEE 1149.1-2001 Annex B, from memory: a cell entry is
// num (cell, port|*, function, safe [, ccell, disval, rslt]); cell 0 is
// nearest TDO; one number may appear twice for a merged cell; 1149.6 AC_1
// cells are read and kept by name; every disable result Z, WEAK0, WEAK1,
// PULL0, PULL1, KEEPER is accepted.
#[test]
fn boundary_register_every_cell() {
    use CellFunction::*;
    use DisableResult::*;
    let m = base();
    assert_eq!(m.boundary_length, 20);
    let q = |i| Some(("Q", Some(i)));
    let d = |i| Some(("D", Some(i)));
    let a = |i| Some(("A", Some(i)));
    let bc = CellType::Bc;
    let expected = vec![
        cell(0, bc(1), q(1), Output3, None, Some((2, true, Z))),
        cell(1, bc(1), q(2), Output3, None, Some((2, true, Z))),
        cell(2, bc(1), None, Control, Some(true), None),
        cell(3, bc(7), d(0), Bidir, None, Some((7, false, Pull1))),
        cell(4, bc(7), d(1), Bidir, None, Some((7, false, Pull0))),
        cell(5, bc(7), d(2), Bidir, None, Some((7, false, Weak1))),
        cell(6, bc(7), d(3), Bidir, None, Some((7, false, Weak0))),
        cell(7, bc(2), None, Control, Some(false), None),
        cell(8, bc(2), Some(("Rdy", None)), Output2, Some(false), None),
        cell(
            9,
            bc(2),
            Some(("INT_N", None)),
            Output3,
            Some(true),
            Some((10, false, Keeper)),
        ),
        cell(10, bc(2), None, Controlr, Some(false), None),
        cell(11, bc(5), Some(("EN_N", None)), Input, None, None),
        cell(11, bc(5), None, Control, Some(false), None),
        cell(
            12,
            CellType::Other("AC_1".into()),
            Some(("TX", None)),
            Output3,
            None,
            Some((11, false, Z)),
        ),
        cell(13, bc(4), Some(("CLK_IN", None)), Clock, None, None),
        cell(14, bc(4), Some(("Sense", None)), ObserveOnly, None, None),
        cell(15, bc(1), a(3), Input, None, None),
        cell(16, bc(1), a(2), Input, None, None),
        cell(17, bc(1), a(1), Input, None, None),
        cell(18, bc(1), a(0), Input, None, None),
        cell(19, bc(1), None, Internal, None, None),
    ];
    assert_eq!(unspanned(m.clone()).cells, expected);
    // Each span points at the entry's number inside the string.
    for c in &m.cells {
        let at = c.span.offset as usize;
        assert!(
            BASE[at..].starts_with(&format!("{} ", c.num)),
            "span of cell {}",
            c.num
        );
        assert_eq!(c.span.line as usize, BASE[..at].matches('\n').count() + 1);
    }
    assert_eq!(m.cells[13].cell.to_string(), "AC_1");
}

// Common practice (a tolerant reader): attributes the model does not use
// (2013 REGISTER_MNEMONICS, 1149.6 AIO_*) are kept by name, not refused.
// DESIGN_WARNING is not among them: IEEE 1149.1-2001 Annex B (from memory)
// makes it the device maker's note to the test engineer, so its text is
// kept, whole, to be shown wherever the device is used.
#[test]
fn unmodelled_attributes_are_kept_by_name() {
    let m = base();
    assert_eq!(
        m.unmodelled_attributes,
        [
            "AIO_COMPONENT_CONFORMANCE",
            "AIO_PIN_BEHAVIOR",
            "REGISTER_MNEMONICS"
        ]
    );
    assert_eq!(
        m.design_warning.as_deref(),
        Some("Diag_Run drives the outputs; do not run it on a powered board.")
    );
}

// IEEE 1149.1-2001 Annex B, from memory: BSDL is case-insensitive; names keep
// the spelling of their declaration.
#[test]
fn lower_case_text_reads_the_same() {
    let lower = BASE.to_lowercase();
    let m = parse_bsdl(&lower).expect("the lower-case text is valid");
    assert_eq!(m.entity, "btw9100", "names are kept as written");
    assert_eq!(upper_names(m), upper_names(base()));
}

/// The base text cut at its `-- ---- name ----` lines.
fn sections(text: &str) -> Vec<String> {
    let mut out = vec![String::new()];
    for line in text.split_inclusive('\n') {
        if line.trim_start().starts_with("-- ----") {
            out.push(String::new());
        }
        out.last_mut().unwrap().push_str(line);
    }
    out
}

// IEEE 1149.1-2001 Annex B, from memory: the order of the attribute and
// constant statements inside the entity does not matter.
#[test]
fn attributes_in_another_order_read_the_same() {
    let parts = sections(BASE);
    assert_eq!(parts.len(), 9, "prefix, seven sections, end");
    let mut shuffled = vec![parts[0].clone()];
    shuffled.extend(parts[1..8].iter().rev().cloned());
    shuffled.push(parts[8].clone());
    let text = shuffled.concat();
    assert_ne!(text, BASE);
    let (boundary, opcodes) = (
        place(&text, "BOUNDARY_REGISTER of"),
        place(&text, "INSTRUCTION_OPCODE of"),
    );
    assert!(boundary < opcodes, "the boundary register now comes first");
    assert_eq!(unspanned(parse_bsdl(&text).unwrap()), unspanned(base()));
}

/// Every string cut into pieces of `n` characters, one piece a line, joined
/// with `&` and with a comment between pieces. The generic's default stays
/// one string.
fn split_strings(text: &str, n: usize) -> String {
    let mut out = String::new();
    let mut statement = String::new();
    let mut chars = text.chars().peekable();
    while let Some(ch) = chars.next() {
        match ch {
            '-' if chars.peek() == Some(&'-') => {
                out.push(ch);
                for c in chars.by_ref() {
                    out.push(c);
                    if c == '\n' {
                        break;
                    }
                }
            }
            '"' => {
                let content: String = chars.by_ref().take_while(|&c| c != '"').collect();
                if statement.to_ascii_lowercase().contains("generic") {
                    out.push_str(&format!("\"{content}\""));
                    continue;
                }
                let pieces: Vec<String> = content
                    .chars()
                    .collect::<Vec<_>>()
                    .chunks(n)
                    .map(|c| format!("\"{}\"", c.iter().collect::<String>()))
                    .collect();
                out.push_str(&pieces.join(" &\n      -- piece\n      "));
            }
            _ => {
                statement.push(ch);
                if ch == ';' {
                    statement.clear();
                }
                out.push(ch);
            }
        }
    }
    out
}

// IEEE 1149.1-2001 Annex B, from memory: a string value may be written as
// many strings joined with `&` over many lines, with comments between.
#[test]
fn strings_split_over_many_lines_read_the_same() {
    let text = split_strings(BASE, 3);
    assert!(
        text.lines().count() > 4 * BASE.lines().count(),
        "many more lines"
    );
    assert!(text.contains("\"XXX\" &\n      -- piece\n      \"X\" &"));
    assert_eq!(unspanned(parse_bsdl(&text).unwrap()), unspanned(base()));
}

// read_bsdl: the path is the model's source and prefixes every error
// (common practice: `path:line:col: message`).
#[test]
fn read_bsdl_names_the_file() {
    let folder = tempfile::tempdir().unwrap();
    let dir = folder.path().to_path_buf();
    let good = dir.join("btw9100.bsd");
    std::fs::write(&good, BASE).unwrap();
    assert_eq!(read_bsdl(&good).unwrap().source, Some(good.clone()));
    let bad = dir.join("btw9100_bad.bsd");
    std::fs::write(&bad, base_with("entity is 20;", "entity is 21;")).unwrap();
    let (line, col) = place(BASE, "BOUNDARY_LENGTH of");
    assert_eq!(
        read_bsdl(&bad).unwrap_err().to_string(),
        format!(
            "{}:{line}:{col}: BOUNDARY_LENGTH is 21 but BOUNDARY_REGISTER lists 20 cells",
            bad.display()
        )
    );
    let missing = PathBuf::from(&dir).join("absent.bsd");
    assert!(read_bsdl(&missing)
        .unwrap_err()
        .to_string()
        .starts_with(&format!(
            "{}:0:0: cannot read the file: ",
            missing.display()
        )));
    std::fs::remove_dir_all(&dir).unwrap();
}

// ---------------------------------------------------------------------------
// One test per rule check: a small change to the base text, the whole message
// ---------------------------------------------------------------------------

// IEEE 1149.1-2001 Annex B, from memory: BOUNDARY_LENGTH equals the number of
// cells BOUNDARY_REGISTER lists.
#[test]
fn boundary_length_differs_from_the_cells() {
    let (line, col) = place(BASE, "BOUNDARY_LENGTH of");
    assert_eq!((line, col), (99, 14));
    assert_eq!(
        err(&base_with("entity is 20;", "entity is 21;")),
        "<bsdl>:99:14: BOUNDARY_LENGTH is 21 but BOUNDARY_REGISTER lists 20 cells"
    );
    assert_eq!(
        err(&base_with("entity is 20;", "entity is 19;")),
        "<bsdl>:99:14: BOUNDARY_LENGTH is 19 but BOUNDARY_REGISTER lists 20 cells"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: cells are numbered 0 to
// BOUNDARY_LENGTH - 1 with none left out. The error points at the length.
#[test]
fn a_cell_number_is_missing() {
    let text = base_with("      \"14  (bc_4, sense,   observe_only, x), \" &\n", "");
    assert_eq!(place(&text, "20;"), (99, 53));
    assert_eq!(err(&text), "<bsdl>:99:53: boundary cell 14 is missing");
}

// IEEE 1149.1-2001 Annex B, from memory: a cell number past the end.
#[test]
fn a_cell_number_is_past_the_end() {
    let text = base_with("\"19  (BC_1, *,", "\"20  (BC_1, *,");
    assert_eq!(place(&text, "20  (BC_1"), (124, 8));
    assert_eq!(
        err(&text),
        "<bsdl>:124:8: boundary cell 20 is outside BOUNDARY_LENGTH 20"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: one number in two entries is only a
// merged cell, one that observes (INPUT) and one that drives or controls; two
// output entries are not.
#[test]
fn a_repeated_cell_that_is_no_merge() {
    let text = base_with("\"1   (BC_1, Q(2)", "\"0   (BC_1, Q(2)");
    assert_eq!(place(&text, "0   (BC_1, Q(1)").0, 103);
    assert_eq!(place(&text, "0   (BC_1, Q(2)"), (104, 8));
    assert_eq!(
        err(&text),
        "<bsdl>:104:8: boundary cell 0 is listed twice (first on line 103) and the two entries \
         are not a merged cell the standard allows"
    );
}

// The merge in the base text (cell 11: INPUT + CONTROL) is accepted and both
// entries are kept, in file order.
#[test]
fn a_merged_input_and_control_cell_is_accepted() {
    let m = base();
    let eleven: Vec<CellFunction> = m
        .cells
        .iter()
        .filter(|c| c.num == 11)
        .map(|c| c.function)
        .collect();
    assert_eq!(eleven, [CellFunction::Input, CellFunction::Control]);
    assert_eq!(m.cells.len(), 21);
}

// IEEE 1149.1-2001 Annex B, from memory: ccell names a cell of the register.
#[test]
fn a_control_cell_that_does_not_exist() {
    let text = base_with(
        "X,   2,    1,     Z), \" &\n      \"1 ",
        "X,   29,   1,     Z), \" &\n      \"1 ",
    );
    assert_eq!(place(&text, "0   (BC_1"), (103, 8));
    assert_eq!(
        err(&text),
        "<bsdl>:103:8: cell 0 names control cell 29, which does not exist"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: ccell is a CONTROL or CONTROLR cell.
#[test]
fn a_control_cell_that_is_not_a_control() {
    let text = base_with("1,   10,   0,     KEEPER", "1,   8,    0,     KEEPER");
    assert_eq!(place(&text, "9   (BC_2"), (112, 8));
    assert_eq!(
        err(&text),
        "<bsdl>:112:8: cell 9 names control cell 8, which is not CONTROL or CONTROLR"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: OUTPUT3 and BIDIR cells give ccell,
// disval and rslt.
#[test]
fn a_three_state_cell_without_control() {
    let text = base_with(
        "INT_N,   OUTPUT3,  1,   10,   0,     KEEPER)",
        "INT_N,   OUTPUT3,  1)",
    );
    assert_eq!(
        err(&text),
        "<bsdl>:112:8: cell 9 is three-state but gives no control cell, disable value and result"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: every opcode has INSTRUCTION_LENGTH bits.
#[test]
fn an_opcode_of_the_wrong_width() {
    let text = base_with("(0000)", "(00000)");
    assert_eq!(place(&text, "00000"), (65, 19));
    assert_eq!(
        err(&text),
        "<bsdl>:65:19: opcode 00000 of EXTEST has 5 bits but INSTRUCTION_LENGTH is 4"
    );
}

// IEEE 1149.1-2001 clause 7, from memory: the instruction register has at
// least two bits.
#[test]
fn an_instruction_register_of_one_bit() {
    assert_eq!(place(BASE, "INSTRUCTION_LENGTH of"), (62, 14));
    assert_eq!(
        err(&base_with("entity is 4;", "entity is 1;")),
        "<bsdl>:62:14: INSTRUCTION_LENGTH must be at least 2, found 1"
    );
}

// IEEE 1149.1-2001 clause 8, from memory: BYPASS is mandatory.
#[test]
fn there_is_no_bypass() {
    let text = base_with("\"BYPASS    (1111, 1110)\"", "\"NO_OP     (1111, 1110)\"");
    assert_eq!(place(&text, "INSTRUCTION_OPCODE"), (64, 14));
    assert_eq!(err(&text), "<bsdl>:64:14: there is no BYPASS instruction");
}

// IEEE 1149.1-2001 clause 8, from memory: the all-ones opcode is BYPASS.
#[test]
fn bypass_is_not_all_ones() {
    let text = base_with("(1111, 1110)", "(0111, 1110)");
    assert_eq!(place(&text, "BYPASS    ("), (74, 8));
    assert_eq!(
        err(&text),
        "<bsdl>:74:8: BYPASS must have the all-ones opcode"
    );
}

// IEEE 1149.1-2001 clause 7, from memory: the two least significant bits of
// the IR capture are 01.
#[test]
fn the_capture_does_not_end_in_01() {
    let text = base_with("\"0X01\"", "\"0X10\"");
    assert_eq!(place(&text, "0X10"), (76, 58));
    assert_eq!(
        err(&text),
        "<bsdl>:76:58: INSTRUCTION_CAPTURE 0X10: its two least significant bits must be 01"
    );
    assert_eq!(
        err(&base_with("\"0X01\"", "\"X011\"")),
        "<bsdl>:76:58: INSTRUCTION_CAPTURE X011: its two least significant bits must be 01"
    );
}

// IEEE 1149.1-2001 clause 7, from memory: INSTRUCTION_CAPTURE has
// INSTRUCTION_LENGTH bits.
#[test]
fn the_capture_has_the_wrong_width() {
    assert_eq!(
        err(&base_with("\"0X01\"", "\"00X01\"")),
        "<bsdl>:76:58: INSTRUCTION_CAPTURE 00X01: its width is not INSTRUCTION_LENGTH"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: a cell's port is a port of the entity.
#[test]
fn a_cell_names_an_unknown_port() {
    let text = base_with("A(3),", "B(3),");
    assert_eq!(place(&text, "B(3)"), (120, 19));
    assert_eq!(
        err(&text),
        "<bsdl>:120:19: `B` is not a port of this entity"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: an index lies inside the port's range.
#[test]
fn a_cell_names_an_index_outside_the_range() {
    let text = base_with("A(3),", "A(4),");
    assert_eq!(
        err(&text),
        "<bsdl>:120:19: `A(4)` is not an element of a declared port"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: the selected pin map bonds every
// port to a pin.
#[test]
fn a_port_without_a_pin() {
    let text = base_with("Sense:B6, ", "");
    assert_eq!(place(&text, "Sense "), (19, 7));
    assert_eq!(
        err(&text),
        "<bsdl>:19:7: port `Sense` has no pin in package `BGA36`"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: a vector's pin list has one entry
// per element.
#[test]
fn a_vector_with_the_wrong_number_of_pins() {
    let text = base_with("D:(D1, D2, D3, D4)", "D:(D1, D2, D3)");
    assert_eq!(place(&text, "D:(D1"), (50, 8));
    assert_eq!(
        err(&text),
        "<bsdl>:50:8: port `D`: 3 pins listed for a vector of 4 elements"
    );
}

// IEEE 1149.1-2001 Annex B, from memory: PHYSICAL_PIN_MAP names one of the
// PIN_MAP_STRING constants.
#[test]
fn an_unknown_package() {
    let text = base_with("\"BGA36\");", "\"BGA49\");");
    assert_eq!(place(&text, "\"BGA49\""), (10, 42));
    assert_eq!(
        err(&text),
        "<bsdl>:10:42: package `BGA49` has no PIN_MAP_STRING constant (the file has: QFN28, BGA36)"
    );
}

// Parker, The Boundary-Scan Handbook, BSDL chapter (from memory): X in
// an opcode is don't-care in decode, so no two instructions may decode the
// same opcode.
#[test]
fn ambiguous_opcodes() {
    let text = base_with("(0010)", "(00x0)");
    assert_eq!(place(&text, "00x0"), (68, 19));
    assert_eq!(
        err(&text),
        "<bsdl>:68:19: opcode 00X0 of IDCODE also decodes as EXTEST"
    );
}

// IEEE 1149.1-2001 clause 8 (from memory): SAMPLE and PRELOAD are
// two instructions that may share one opcode; the base text has them share 0001.
#[test]
fn sample_and_preload_may_share_an_opcode() {
    let m = base();
    assert_eq!(
        m.instruction("SAMPLE").unwrap().opcodes,
        m.instruction("PRELOAD").unwrap().opcodes
    );
    // Any other pair sharing an opcode is ambiguous.
    let text = base_with("PRELOAD   (0001)", "PREVIEW   (0001)");
    assert_eq!(
        err(&text),
        "<bsdl>:67:19: opcode 0001 of PREVIEW also decodes as SAMPLE"
    );
}

// IEEE 1149.1-2001 clause 10, from memory: IDCODE bit 0 is 1.
#[test]
fn idcode_bit_0_is_not_1() {
    let text = base_with("\"1\";", "\"0\";");
    assert_eq!(place(&text, "\"XXXX\""), (82, 7));
    assert_eq!(
        err(&text),
        "<bsdl>:82:8: IDCODE_REGISTER XXXX0101101001110001101011111110: its least significant \
         bit must be 1"
    );
}

// IEEE 1149.1-2001 clause 10, from memory: IDCODE has 32 bits.
#[test]
fn idcode_is_not_32_bits() {
    let text = base_with("\"XXXX\" &", "\"XXX\" &");
    assert_eq!(
        err(&text),
        "<bsdl>:82:8: IDCODE_REGISTER XXX0101101001110001101011111111: it must have 32 bits"
    );
}

// VHDL lexical rules as BSDL uses them (Parker, Appendix A, from memory): a
// string literal ends on its line.
#[test]
fn an_unterminated_string() {
    let text = base_with(
        "\"TCK:A2, TMS:A3, TDI:A4, TRST_N:A5, TDO:A6, \" &",
        "\"TCK:A2, TMS:A3, &",
    );
    assert_eq!(place(&text, "\"TCK:A2"), (47, 7));
    assert_eq!(err(&text), "<bsdl>:47:7: string is not closed on this line");
}

// IEEE 1149.1-2001 Annex B, from memory: each attribute is given once; the
// message names the line of the first.
#[test]
fn an_attribute_given_twice() {
    let text = base_with(
        "   attribute TAP_SCAN_MODE  of TMS",
        "   attribute TAP_SCAN_IN    of TMS    : signal is true;\n   attribute TAP_SCAN_MODE  of TMS",
    );
    assert_eq!(place(&text, "TAP_SCAN_IN    of TMS"), (56, 14));
    assert_eq!(
        err(&text),
        "<bsdl>:56:14: attribute TAP_SCAN_IN is given twice (first on line 55)"
    );
    let text = base_with(
        "entity is 4;",
        "entity is 4;\n   attribute INSTRUCTION_LENGTH of BTW9100 : entity is 4;",
    );
    assert_eq!(
        err(&text),
        "<bsdl>:63:14: attribute INSTRUCTION_LENGTH is given twice (first on line 62)"
    );
}

// Tolerance rule (common practice for BSDL readers): a vendor `use` package and a
// 2013 linkage subtype (written from memory as `linkage VREF_IN`) are read,
// not refused.
#[test]
fn an_unknown_use_package_and_linkage_type_are_accepted() {
    let text = base_with(
        "use STD_1149_1_2001.all;",
        "use STD_1149_1_2001.all;\n   use BTW_CELLS.all;",
    );
    let text = mutate(
        &text,
        "      GND    : linkage",
        "      VREF   : linkage VREF_IN;\n      GND    : linkage",
    );
    let text = mutate(&text, "\"GND:(F1, F2)\"", "\"GND:(F1, F2), VREF:C2\"");
    let m = parse_bsdl(&text).expect("accepted");
    assert_eq!(m.uses, ["STD_1149_1_2001", "BTW_CELLS"]);
    let vref = m.port("VREF").expect("VREF");
    assert_eq!(vref.mode, PortMode::OtherLinkage("VREF_IN".into()));
    assert_eq!(vref.pins, [["C2"]]);
    assert_eq!(m.ports.len(), base().ports.len() + 1);
}

// Regression (found by reading the reader): a range whose span does not fit
// in an i64 is refused, not an arithmetic overflow.
#[test]
fn a_range_too_wide_to_count_is_an_error() {
    let text = base_with(
        "bit_vector(0 to 3);",
        "bit_vector(-9223372036854775807 to 9223372036854775807);",
    );
    assert_eq!(
        err(&text),
        "<bsdl>:21:7: bit_vector range: `A` is not valid"
    );
}

// IEEE 1149.1-2001 clause 8, from memory: EXTEST and SAMPLE (SAMPLE/PRELOAD in
// older editions) are mandatory instructions.
#[test]
fn extest_and_sample_are_required() {
    let text = base_with("\"EXTEST    (0000), \" &", "\"EXTEST_X  (0000), \" &");
    let text = mutate(
        &text,
        "\"BOUNDARY (EXTEST, SAMPLE, PRELOAD), \"",
        "\"BOUNDARY (EXTEST_X, SAMPLE, PRELOAD), \"",
    );
    let (line, col) = place(&text, "INSTRUCTION_OPCODE");
    assert_eq!(
        err(&text),
        format!("<bsdl>:{line}:{col}: there is no EXTEST instruction (IEEE 1149.1 requires it)")
    );
}

// IEEE 1149.1-2001 Annex B, from memory: an IDCODE (USERCODE) instruction
// reads the value IDCODE_REGISTER (USERCODE_REGISTER) gives.
#[test]
fn usercode_without_its_register_is_an_error() {
    let start = BASE
        .find("   attribute USERCODE_REGISTER")
        .expect("usercode attribute");
    let end = start + BASE[start..].find(';').expect("its end") + 1;
    let text = format!("{}{}", &BASE[..start], &BASE[end..]);
    let (line, col) = place(&text, "USERCODE  (0011)");
    assert_eq!(
        err(&text),
        format!("<bsdl>:{line}:{col}: instruction USERCODE is listed but attribute USERCODE_REGISTER is missing")
    );
}

// IEEE 1149.1-2001 Annex B, from memory: a design-specific register gives its
// length in brackets, so a CAPTURES pattern must have that many bits.
#[test]
fn captures_pattern_must_fit_the_register() {
    let text = base_with("CAPTURES 0000XXXX0101", "CAPTURES 000XXXX0101");
    let (line, col) = place(&text, "000XXXX0101");
    assert_eq!(
        err(&text),
        format!("<bsdl>:{line}:{col}: CAPTURES pattern (its width is not the register's length): `000XXXX0101` is not valid")
    );
}

// IEEE 1149.1-2001 Annex B, from memory: entity attributes are given `of` the
// entity itself.
#[test]
fn an_attribute_of_another_entity_is_an_error() {
    let text = base_with(
        "attribute INSTRUCTION_LENGTH of BTW9100",
        "attribute INSTRUCTION_LENGTH of BTW9101",
    );
    let (line, col) = place(&text, "BTW9101");
    assert_eq!(
        err(&text),
        format!("<bsdl>:{line}:{col}: attribute INSTRUCTION_LENGTH is given for `BTW9101`, but the entity is `BTW9100`")
    );
}

// IEEE 1149.1-2001 Annex B, from memory: an entity holds generic, port, use,
// attribute and constant statements only; a mistyped keyword is an error,
// not a statement silently dropped.
#[test]
fn a_mistyped_statement_is_not_skipped() {
    let text = base_with(
        "   attribute INSTRUCTION_LENGTH of",
        "   atribute INSTRUCTION_LENGTH of",
    );
    let (line, col) = place(&text, "atribute");
    assert_eq!(
        err(&text),
        format!("<bsdl>:{line}:{col}: expected attribute, constant, use, generic, port or end, found `atribute`")
    );
}

// IEEE 1149.1-2001 Annex B, from memory: TAP_SCAN_IN, TAP_SCAN_OUT,
// TAP_SCAN_MODE and TAP_SCAN_RESET are BOOLEAN signal attributes written
// `signal is true`; TAP_SCAN_CLOCK is a signal attribute whose value is
// `(maximum frequency, BOTH|LOW)`. Any other form is refused at its place.
#[test]
fn tap_attributes_must_be_signal_attributes_that_say_true() {
    let cases = [
        (
            "TAP_SCAN_IN    of TDI    : signal is true;",
            "TAP_SCAN_IN    of TDI    : entity is true;",
            "entity is true",
            "TAP_SCAN_IN must be written `signal is true`, found `entity is true`",
        ),
        (
            "TAP_SCAN_RESET of TRST_N : signal is true;",
            "TAP_SCAN_RESET of TRST_N : signal is false;",
            "false;",
            "TAP_SCAN_RESET must be written `signal is true`, found `signal is false`",
        ),
        (
            "TAP_SCAN_MODE  of TMS    : signal is true;",
            "TAP_SCAN_MODE  of TMS    : signal is \"true\";",
            "\"true\";",
            "TAP_SCAN_MODE must be written `signal is true`, found `signal is \"true\"`",
        ),
        (
            "TAP_SCAN_OUT   of TDO    : signal is true;",
            "TAP_SCAN_OUT   of TDO    : signal is true or false;",
            "true or",
            "TAP_SCAN_OUT must be written `signal is true`, found `signal is true or false`",
        ),
        (
            "TAP_SCAN_CLOCK of TCK    : signal is (25.0e6, LOW);",
            "TAP_SCAN_CLOCK of TCK    : signal is true;",
            "true;",
            "TAP_SCAN_CLOCK must be written `signal is (frequency, BOTH|LOW)`, found `signal is true`",
        ),
        (
            "TAP_SCAN_CLOCK of TCK    : signal is (25.0e6, LOW);",
            "TAP_SCAN_CLOCK of TCK    : entity is (25.0e6, LOW);",
            "entity is (",
            "TAP_SCAN_CLOCK must be written `signal is (frequency, BOTH|LOW)`, found `entity is (25.0e6, LOW)`",
        ),
        (
            "TAP_SCAN_CLOCK of TCK    : signal is (25.0e6, LOW);",
            "TAP_SCAN_CLOCK of TCK    : signal is (25.0e6, LOW, BOTH);",
            "(25.0e6, LOW, BOTH)",
            "TAP_SCAN_CLOCK must be written `signal is (frequency, BOTH|LOW)`, found `signal is (25.0e6, LOW, BOTH)`",
        ),
    ];
    for (from, to, at, message) in cases {
        let text = base_with(from, to);
        let (line, col) = place(&text, to);
        let col = col + to.find(at).expect("the place is in the new text");
        assert_eq!(
            err(&text),
            format!("<bsdl>:{line}:{col}: {message}"),
            "{to}"
        );
    }
    // Letter case does not matter (BSDL is case-insensitive).
    let text = base_with(
        "TAP_SCAN_IN    of TDI    : signal is true;",
        "TAP_SCAN_IN    of TDI    : SIGNAL is TRUE;",
    );
    assert_eq!(parse_bsdl(&text).map(|m| m.tap.tdi), Ok(Some("TDI".into())));
}

// IEEE 1149.1-2001 clause 11 (from memory): the TAP pins have no
// boundary-scan cells. A cell on a TAP port is refused at the cell, and the
// message names the attribute that made the port a TAP signal.
#[test]
fn a_tap_port_with_a_boundary_cell() {
    let text = base_with("\"13  (BC_4, CLK_IN,", "\"13  (BC_4, TCK,");
    let (line, col) = place(&text, "13  (BC_4, TCK");
    let (aline, acol) = place(&text, "TAP_SCAN_CLOCK of TCK");
    assert_eq!((aline, acol), (58, 14));
    assert_eq!(
        err(&text),
        format!("<bsdl>:{line}:{col}: boundary cell 13 is on port TCK, which TAP_SCAN_CLOCK on line 58, column 14 makes a TAP signal; a TAP signal has no boundary cell")
    );
    // Written in lower case; the message spells the port as declared.
    let text = base_with("\"18  (BC_1, A(0),", "\"18  (BC_1, trst_n,");
    let (line, col) = place(&text, "18  (BC_1, trst_n");
    let (aline, acol) = place(&text, "TAP_SCAN_RESET of");
    assert_eq!(
        err(&text),
        format!("<bsdl>:{line}:{col}: boundary cell 18 is on port TRST_N, which TAP_SCAN_RESET on line {aline}, column {acol} makes a TAP signal; a TAP signal has no boundary cell")
    );
}

// Common practice: a BSDL file is plain text (VHDL source). A binary file or
// one in another encoding is refused at the line and column of its first
// bad byte, even inside a comment, where the lexer would skip it.
#[test]
fn a_file_that_is_not_text() {
    let folder = tempfile::tempdir().unwrap();
    let dir = folder.path().to_path_buf();
    // A byte that is never UTF-8 (0xFF) in the comment after `Entity BTW9100 is`.
    let anchor = "-- the entity name is ours";
    let (line, col) = place(BASE, anchor);
    let at = BASE.find(anchor).unwrap() + 3;
    let mut bytes = BASE.as_bytes().to_vec();
    bytes.insert(at, 0xff);
    let path = dir.join("latin.bsd");
    std::fs::write(&path, &bytes).unwrap();
    let message = format!(
        "{}:{line}:{}: the file is not text: byte 0xFF is not UTF-8 (a BSDL file is plain ASCII or UTF-8 text)",
        path.display(),
        col + 3
    );
    assert_eq!(read_bsdl(&path).unwrap_err().to_string(), message);
    assert_eq!(read_bsdl_text(&path).unwrap_err().to_string(), message);
    // A NUL byte (a binary file) in valid UTF-8, on line 2.
    let text = format!("-- header\n--  \0\x01{BASE}");
    assert_eq!(
        err(&text),
        "<bsdl>:2:5: the file is not text: control character U+0000 (a BSDL file is plain ASCII or UTF-8 text)"
    );
    // Tabs, form feeds and CR LF line ends are text.
    let text = BASE.replace('\n', "\r\n").replacen("   ", "\t\x0c", 3);
    assert!(parse_bsdl(&text).is_ok());
    std::fs::remove_dir_all(&dir).unwrap();
}
