//! The second demo board, the invented QD-640 quay data concentrator: its
//! IPC-D-356A netlist (`scenarios/netlists/quay_concentrator.ipc`) is
//! written by the generator below, and this test checks that the committed
//! file is exactly what the generator writes (`BOARDTWIN_WRITE_NETLIST=1
//! cargo test -p harness --test second_demo_board committed` rewrites it),
//! then imports it with its assembly file and checks the
//! chains and the nets by scan access against the figures worked out by
//! hand from the generator's design (comments beside each figure).
//!
//! Design (everything invented):
//! - three TAP connectors, each pin 1 TDI, 2 TDO, 3 TMS, 4 TCK, 5 TRST*
//!   (J13: GND), 6 GND: J11 (TAP_A) → U2 → U1 (QM7420 bridges); J12
//!   (TAP_B) → U5 → U3 → U4 (QM5508 port controllers); J13 (TAP_C) → U7
//!   (QM3310, ball-grid BG49) → U8 (QM2040) → U6 (QM3310, TQ44). The chains
//!   run against designator order on purpose: the import must follow them.
//! - non-scan parts from the part table `scenarios/parts/quay_parts.yaml`:
//!   U21 (QB244 octal three-state buffer, enables on GND), U22 (QB245
//!   transceiver, DIR pulled up, OE from U3), U23 (QI04 hex inverter), U24
//!   (QA08 quad AND), RN11 and RN12 (QR16I, eight isolated resistors),
//!   RN13 to RN15 (QR10B, nine bussed resistors on a common pin);
//! - a non-scan controller U30 with its memories U31 to U33, an Ethernet
//!   PHY U34, LEDs and the backplane connector P1 and front-panel
//!   connector P2: the bulk of the nets, out of reach of every scan cell.

#[allow(dead_code)]
#[path = "support/demo.rs"]
mod demo;

use std::collections::BTreeMap;
use std::fmt::Write as _;

use demo::repo;
use harness::import::{self, NetlistFormat};
use virtual_board::{parse_bsdl_package, read_bsdl_text, DeviceModel};

const NETLIST: &str = "scenarios/netlists/quay_concentrator.ipc";
const ASSEMBLY: &str = "scenarios/assembly/quay_concentrator.yaml";

/// The netlist being built: net → (designator, pin), in order.
struct Gen {
    nets: Vec<(String, Vec<(String, String)>)>,
    index: BTreeMap<String, usize>,
    models: BTreeMap<String, DeviceModel>,
}

impl Gen {
    fn new() -> Gen {
        let dev = |file: &str, pkg: Option<&str>| {
            let p = repo().join("scenarios/devices").join(file);
            parse_bsdl_package(&read_bsdl_text(&p).unwrap(), pkg).unwrap()
        };
        let mut models = BTreeMap::new();
        for d in ["U1", "U2"] {
            models.insert(d.to_string(), dev("qm7420_bus_bridge.bsd", None));
        }
        for d in ["U3", "U4", "U5"] {
            models.insert(d.to_string(), dev("qm5508_port_controller.bsd", None));
        }
        models.insert("U6".into(), dev("qm3310_io_expander.bsd", Some("TQ44")));
        models.insert("U7".into(), dev("qm3310_io_expander.bsd", Some("BG49")));
        models.insert("U8".into(), dev("qm2040_clock_buffer.bsd", None));
        Gen {
            nets: Vec::new(),
            index: BTreeMap::new(),
            models,
        }
    }

    /// Puts `des`-`pin` on `net`.
    fn pin(&mut self, net: &str, des: &str, pin: &str) {
        let i = *self.index.entry(net.to_string()).or_insert_with(|| {
            self.nets.push((net.to_string(), Vec::new()));
            self.nets.len() - 1
        });
        self.nets[i].1.push((des.to_string(), pin.to_string()));
    }

    /// The pins of a scan device's port element (`LB_D`, Some(3)).
    fn pins_of(&self, des: &str, port: &str, index: Option<i64>) -> Vec<String> {
        let m = &self.models[des];
        m.port(port)
            .and_then(|p| p.pins_of(index))
            .unwrap_or_else(|| panic!("{des} has no {port}({index:?})"))
            .to_vec()
    }

    /// Puts a scan device's port element on `net`.
    fn port(&mut self, net: &str, des: &str, port: &str, index: Option<i64>) {
        for p in self.pins_of(des, port, index) {
            self.pin(net, des, &p);
        }
    }

    /// Every pin of `port` (all elements) on `net` (supplies).
    fn all(&mut self, net: &str, des: &str, port: &str) {
        let m = &self.models[des];
        let pins: Vec<String> = m
            .port(port)
            .map(|p| p.pins.iter().flatten().cloned().collect())
            .unwrap_or_default();
        for p in pins {
            self.pin(net, des, &p);
        }
    }
}

/// The QD-640 netlist as IPC-D-356A text.
fn generate() -> String {
    let mut g = Gen::new();
    // TAP ports.
    let taps: [(&str, &str, &[&str], bool); 3] = [
        ("J11", "A", &["U2", "U1"], true),
        ("J12", "B", &["U5", "U3", "U4"], true),
        ("J13", "C", &["U7", "U8", "U6"], false),
    ];
    for (conn, p, chain, trst) in taps {
        let tdi = format!("TDI_{p}");
        g.pin(&tdi, conn, "1");
        let mut cur = tdi;
        for (k, d) in chain.iter().enumerate() {
            g.port(&cur, d, "TDI", None);
            cur = if k + 1 == chain.len() {
                format!("TDO_{p}")
            } else {
                format!("TAP_{p}_L{}", k + 1)
            };
            g.port(&cur, d, "TDO", None);
        }
        g.pin(&cur, conn, "2");
        for (sig, pin) in [("TMS", "3"), ("TCK", "4")] {
            let net = format!("{sig}_{p}");
            g.pin(&net, conn, pin);
            for d in chain {
                g.port(&net, d, sig, None);
            }
        }
        if trst {
            let net = format!("TRST_{p}_N");
            g.pin(&net, conn, "5");
            for d in chain {
                g.port(&net, d, "TRST_N", None);
            }
        } else {
            g.pin("GND", conn, "5");
        }
        g.pin("GND", conn, "6");
    }
    // Supplies of the scan devices.
    for d in ["U1", "U2", "U3", "U4", "U5", "U6", "U7"] {
        g.all("+3V3", d, "VCC");
        g.all("GND", d, "GND");
    }
    for d in ["U3", "U4", "U5"] {
        g.all("+3V3", d, "VCCIO");
    }
    g.all("+3V3", "U8", "VDD");
    g.all("GND", "U8", "GND");

    // A: U1.LB_D → U3.PA, direct.
    for i in 0..8 {
        let n = format!("LBA_D{i}");
        g.port(&n, "U1", "LB_D", Some(i));
        g.port(&n, "U3", "PA", Some(i));
    }
    // B: U2.LB_D → RN11 (element i+1: pins i+1 and 16-i) → U6.SW_IN.
    for i in 0..8 {
        let (n, m) = (format!("LBB_D{i}"), format!("SW_C{i}"));
        g.port(&n, "U2", "LB_D", Some(i));
        g.pin(&n, "RN11", &(i + 1).to_string());
        g.pin(&m, "RN11", &(16 - i).to_string());
        g.port(&m, "U6", "SW_IN", Some(i));
    }
    // C: U1's local strobes and address → U21 (QB244: a 2,4,6,8,11,13,15,17;
    // y 18,16,14,12,9,7,5,3; enables 1 and 19 on GND) → U7.SW_IN.
    let strobes: [(&str, Option<i64>); 8] = [
        ("LB_A", Some(0)),
        ("LB_A", Some(1)),
        ("LB_A", Some(2)),
        ("LB_A", Some(3)),
        ("LB_RD_N", None),
        ("LB_WR_N", None),
        ("LB_CS_N", Some(0)),
        ("LB_CS_N", Some(1)),
    ];
    let (a244, y244) = (
        ["2", "4", "6", "8", "11", "13", "15", "17"],
        ["18", "16", "14", "12", "9", "7", "5", "3"],
    );
    for (i, (port, idx)) in strobes.iter().enumerate() {
        let (n, m) = (format!("LOC_{i}"), format!("LOC_{i}_BUF"));
        g.port(&n, "U1", port, *idx);
        g.pin(&n, "U21", a244[i]);
        g.pin(&m, "U21", y244[i]);
        g.port(&m, "U7", "SW_IN", Some(i as i64));
    }
    for p in ["1", "19", "10"] {
        g.pin("GND", "U21", p);
    }
    g.pin("+3V3", "U21", "20");
    // D: U5.PA → U22 (QB245: a 2..9, b 18..11, DIR 1 pulled up by RN15,
    // OE 19 from U3.PD(2)) → U4.PE(0..3), U4.ADDR(0..3).
    for i in 0..8 {
        let (n, m) = (format!("XA_{i}"), format!("XB_{i}"));
        g.port(&n, "U5", "PA", Some(i));
        g.pin(&n, "U22", &(2 + i).to_string());
        g.pin(&m, "U22", &(18 - i).to_string());
        if i < 4 {
            g.port(&m, "U4", "PE", Some(i));
        } else {
            g.port(&m, "U4", "ADDR", Some(i - 4));
        }
    }
    g.pin("XCVR_DIR", "U22", "1");
    g.pin("XCVR_OE_N", "U22", "19");
    g.port("XCVR_OE_N", "U3", "PD", Some(2));
    g.pin("GND", "U22", "10");
    g.pin("+3V3", "U22", "20");
    // E: U3.PC(0..5) → U23 (QI04: a 1,3,5,9,11,13; y 2,4,6,8,10,12) → U1.HOST_A(0..5).
    let (a04, y04) = (
        ["1", "3", "5", "9", "11", "13"],
        ["2", "4", "6", "8", "10", "12"],
    );
    for i in 0..6 {
        let (n, m) = (format!("INV_{i}"), format!("INV_{i}_N"));
        g.port(&n, "U3", "PC", Some(i as i64));
        g.pin(&n, "U23", a04[i]);
        g.pin(&m, "U23", y04[i]);
        g.port(&m, "U1", "HOST_A", Some(i as i64));
    }
    g.pin("GND", "U23", "7");
    g.pin("+3V3", "U23", "14");
    // F: U5.PC pairs → U24 (QA08: inputs 1,2 / 4,5 / 9,10 / 12,13; y 3, 6,
    // 8, 11) → U1.HOST_A(6), HOST_A(7), HOST_CS_N, HOST_RD_N.
    let and_in = [["1", "2"], ["4", "5"], ["9", "10"], ["12", "13"]];
    let and_y = ["3", "6", "8", "11"];
    let and_to: [(&str, Option<i64>); 4] = [
        ("HOST_A", Some(6)),
        ("HOST_A", Some(7)),
        ("HOST_CS_N", None),
        ("HOST_RD_N", None),
    ];
    for k in 0..4 {
        for (j, pin) in and_in[k].iter().enumerate() {
            let n = format!("AND_{k}_{j}");
            g.port(&n, "U5", "PC", Some((2 * k + j) as i64));
            g.pin(&n, "U24", pin);
        }
        let m = format!("AND_{k}_Y");
        g.pin(&m, "U24", and_y[k]);
        g.port(&m, "U1", and_to[k].0, and_to[k].1);
    }
    g.pin("GND", "U24", "7");
    g.pin("+3V3", "U24", "14");
    // G: direct scan-to-scan nets.
    for i in 0..8 {
        let n = format!("HA_B{i}");
        g.port(&n, "U4", "PC", Some(i));
        g.port(&n, "U2", "HOST_A", Some(i));
    }
    let pd_to: [(&str, &str); 4] = [
        ("U2", "HOST_CS_N"),
        ("U2", "HOST_RD_N"),
        ("U2", "HOST_WR_N"),
        ("U1", "HOST_WR_N"),
    ];
    for (i, (d, p)) in pd_to.iter().enumerate() {
        let n = format!("HSTB_{i}");
        g.port(&n, "U5", "PD", Some(i as i64));
        g.port(&n, d, p, None);
    }
    let clk_in: [(&str, Option<i64>); 4] = [
        ("REF_CLK", None),
        ("FB_IN", None),
        ("DIV_SEL", Some(1)),
        ("DIV_SEL", Some(0)),
    ];
    for (i, (p, idx)) in clk_in.iter().enumerate() {
        let n = format!("CKCFG_{i}");
        g.port(&n, "U6", "EXP_OUT", Some(i as i64));
        g.port(&n, "U8", p, *idx);
    }
    let clk_to: [(&str, i64); 6] = [
        ("PE", 0),
        ("PE", 1),
        ("PE", 2),
        ("PE", 3),
        ("ADDR", 0),
        ("ADDR", 1),
    ];
    for (i, (p, idx)) in clk_to.iter().enumerate() {
        let n = format!("CLK_{i}");
        g.port(&n, "U8", "CLK_OUT", Some(i as i64));
        g.port(&n, "U3", p, Some(*idx));
    }
    for i in 0..4 {
        let n = format!("EXP_B{i}");
        g.port(&n, "U7", "EXP_OUT", Some(i));
        g.port(&n, "U5", "PE", Some(i));
    }
    let st: [(&str, &str); 4] = [
        ("U6", "IRQ_N"),
        ("U6", "READY"),
        ("U7", "IRQ_N"),
        ("U7", "READY"),
    ];
    for (i, (d, p)) in st.iter().enumerate() {
        let n = format!("EXST_{i}");
        g.port(&n, d, p, None);
        g.port(&n, "U5", "ADDR", Some(i as i64));
    }
    for i in 0..8 {
        let n = format!("PB_{i}");
        g.port(&n, "U3", "PB", Some(i));
        g.port(&n, "U4", "PB", Some(i));
    }
    // To the backplane P1 (pins 201 on): host data of U1 and U2, U5.PB.
    let mut p1 = 201;
    let mut to_p1 = |g: &mut Gen, n: &str| {
        g.pin(n, "P1", &p1.to_string());
        p1 += 1;
    };
    for d in ["U1", "U2"] {
        for i in 0..4 {
            let n = format!("{d}_HD{i}");
            g.port(&n, d, "HOST_D", Some(i));
            to_p1(&mut g, &n);
        }
    }
    for i in 0..8 {
        let n = format!("BP_PB{i}");
        g.port(&n, "U5", "PB", Some(i));
        to_p1(&mut g, &n);
    }
    // U6.LED_N straight to the front panel P2 (pins 101 on); U7.LED_N
    // through RN12 (elements as RN11) to LEDs D1..D8 (cathode 2, anode 1 on +3V3).
    for i in 0..8 {
        let n = format!("FP_LED{i}");
        g.port(&n, "U6", "LED_N", Some(i));
        g.pin(&n, "P2", &(101 + i).to_string());
        let (a, b) = (format!("ST_LED{i}"), format!("ST_LED{i}_K"));
        g.port(&a, "U7", "LED_N", Some(i));
        g.pin(&a, "RN12", &(i + 1).to_string());
        g.pin(&b, "RN12", &(16 - i).to_string());
        let d = format!("D{}", i + 1);
        g.pin(&b, &d, "2");
        g.pin("+3V3", &d, "1");
    }
    // H: bussed packs, common pin 1. RN13 on +3V3: U6/U7 ADDR(0..2) and
    // EXP_MODE, then TMS_C. RN14 on GND: BRG_MODE of U1 and U2, four spares.
    // RN15 on +3V3: RST_N of U3, U4, U5, HOST_RESET_N of U1, U2, XCVR_DIR,
    // TMS_A, TMS_B; one spare.
    g.pin("+3V3", "RN13", "1");
    let mut k = 2;
    for d in ["U6", "U7"] {
        for i in 0..3 {
            let n = format!("{d}_ADDR{i}");
            g.port(&n, d, "ADDR", Some(i));
            g.pin(&n, "RN13", &k.to_string());
            k += 1;
        }
        let n = format!("{d}_MODE");
        g.port(&n, d, "EXP_MODE", None);
        g.pin(&n, "RN13", &k.to_string());
        k += 1;
    }
    g.pin("TMS_C", "RN13", "10");
    g.pin("GND", "RN14", "1");
    let mut k = 2;
    for d in ["U1", "U2"] {
        for i in 0..2 {
            let n = format!("{d}_BRG{i}");
            g.port(&n, d, "BRG_MODE", Some(i));
            g.pin(&n, "RN14", &k.to_string());
            k += 1;
        }
    }
    g.pin("+3V3", "RN15", "1");
    let mut k = 2;
    for d in ["U3", "U4", "U5"] {
        let n = format!("{d}_RST_N");
        g.port(&n, d, "RST_N", None);
        g.pin(&n, "RN15", &k.to_string());
        k += 1;
    }
    for d in ["U1", "U2"] {
        let n = format!("{d}_RST_N");
        g.port(&n, d, "HOST_RESET_N", None);
        g.pin(&n, "RN15", &k.to_string());
        k += 1;
    }
    for n in ["XCVR_DIR", "TMS_A", "TMS_B"] {
        g.pin(n, "RN15", &k.to_string());
        k += 1;
    }
    // The non-scan controller U30 and everything around it.
    let mut u30 = 1;
    let mut next = || {
        u30 += 1;
        u30.to_string()
    };
    for (bus, width, part, from) in [
        ("BPD", 96, "P1", 1),
        ("BPA", 32, "P1", 97),
        ("BPC", 16, "P1", 129),
        ("FPD", 32, "P2", 1),
    ] {
        for i in 0..width {
            let n = format!("{bus}{i}");
            let p = next();
            g.pin(&n, "U30", &p);
            g.pin(&n, part, &(from + i).to_string());
        }
    }
    for (mem, a_bits, d_bits, ctl) in [("U31", 19, 16, 5), ("U32", 23, 16, 5), ("U33", 19, 16, 5)] {
        let mut pin = 0;
        for (what, count) in [("A", a_bits), ("D", d_bits), ("C", ctl)] {
            for i in 0..count {
                pin += 1;
                let n = format!("{mem}_{what}{i}");
                let p = next();
                g.pin(&n, "U30", &p);
                g.pin(&n, mem, &pin.to_string());
            }
        }
        g.pin("+3V3", mem, &(pin + 1).to_string());
        g.pin("GND", mem, &(pin + 2).to_string());
    }
    for i in 0..20 {
        let n = format!("PHY_{i}");
        let p = next();
        g.pin(&n, "U30", &p);
        g.pin(&n, "U34", &(i + 1).to_string());
    }
    for i in 0..8 {
        let (n, m) = (format!("MDI_{i}"), format!("LINE_{i}"));
        g.pin(&n, "U34", &(21 + i).to_string());
        g.pin(&n, "T1", &(i + 1).to_string());
        g.pin(&m, "T1", &(16 - i).to_string());
        g.pin(&m, "J20", &(i + 1).to_string());
    }
    for i in 0..32 {
        let (n, m) = (format!("ACT{i}"), format!("ACT{i}_K"));
        let p = next();
        g.pin(&n, "U30", &p);
        g.pin(&n, &format!("R{}", 101 + i), "1");
        g.pin(&m, &format!("R{}", 101 + i), "2");
        g.pin(&m, &format!("D{}", 9 + i), "2");
        g.pin("+3V3", &format!("D{}", 9 + i), "1");
    }
    let (x1, x2) = (next(), next());
    g.pin("XTAL_IN", "U30", &x1);
    g.pin("XTAL_IN", "Y1", "1");
    g.pin("XTAL_OUT", "U30", &x2);
    g.pin("XTAL_OUT", "Y1", "2");
    for p in ["401", "402", "403", "404"] {
        g.pin("+3V3", "U30", p);
    }
    for p in ["405", "406", "407", "408", "409"] {
        g.pin("GND", "U30", p);
    }
    for (p, net) in [
        ("145", "+5V"),
        ("146", "+5V"),
        ("147", "GND"),
        ("148", "GND"),
    ] {
        g.pin(net, "P1", p);
    }
    for c in 1..=40 {
        let d = format!("C{c}");
        g.pin("+3V3", &d, "1");
        g.pin("GND", &d, "2");
    }
    write_ipc356(&g)
}

/// IPC-D-356A records (the layout `harness/src/import/ipc356.rs` reads,
/// from memory of IPC's published description, not checked against the
/// text): op code 327, net name in columns 4–17, designator 21–26, `-`, pin
/// 28–31, access side, and a pad centre in 0.0001 inch (`UNITS CUST 0`)
/// made up from the designator's place and the pin's number.
fn write_ipc356(g: &Gen) -> String {
    let mut t = String::new();
    t.push_str("C  QD-640 quay data concentrator, rev A: an invented board (demo data).\n");
    t.push_str("C  Written by harness/tests/second_demo_board.rs; do not edit by hand.\n");
    t.push_str("P  JOB   QD-640\nP  UNITS CUST 0\nP  IMAGE PRIMARY\n");
    let mut place: BTreeMap<&str, (i64, i64)> = BTreeMap::new();
    for (_, pins) in &g.nets {
        for (d, _) in pins {
            let k = place.len() as i64;
            place
                .entry(d.as_str())
                .or_insert((1000 + (k % 10) * 3000, 1000 + (k / 10) * 2500));
        }
    }
    for (net, pins) in &g.nets {
        for (d, p) in pins {
            let (ox, oy) = place[d.as_str()];
            let n: i64 = p
                .chars()
                .filter(char::is_ascii_digit)
                .collect::<String>()
                .parse()
                .unwrap_or(0);
            let row = p
                .chars()
                .next()
                .filter(char::is_ascii_alphabetic)
                .map_or(0, |c| c as i64 - 'A' as i64);
            let (x, y) = (ox + (n % 50) * 50, oy + (n / 50) * 100 + row * 50);
            let _ = writeln!(t, "327{net:<14}   {d:<6}-{p:<4}      A01X{x:+07}Y{y:+07}");
        }
    }
    t.push_str("999\n");
    t
}

#[test]
fn committed_netlist_is_the_generators() {
    let want = generate();
    let path = repo().join(NETLIST);
    if std::env::var_os("BOARDTWIN_WRITE_NETLIST").is_some() {
        std::fs::create_dir_all(path.parent().unwrap()).unwrap();
        std::fs::write(&path, &want).unwrap();
    }
    let got = std::fs::read_to_string(&path).unwrap_or_default();
    assert!(
        got == want,
        "{NETLIST} is not what the generator writes; rewrite it with BOARDTWIN_WRITE_NETLIST=1 cargo test -p harness --test second_demo_board committed"
    );
}

#[test]
fn imports_with_three_chains_found_and_the_worked_figures() {
    let dir = std::env::temp_dir().join(format!("boardtwin-qd640-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let got = import::import(
        &repo().join(NETLIST),
        NetlistFormat::Ipc356,
        &repo().join(ASSEMBLY),
        &dir.join("qd640.yaml"),
    )
    .unwrap();
    let r = &got.report;
    // Chains: followed from each connector's TDI (see the design above).
    let chains: Vec<(&str, Vec<&str>, bool)> = r
        .chains
        .iter()
        .map(|c| {
            (
                c.name.as_str(),
                c.chain.iter().map(String::as_str).collect(),
                c.trst,
            )
        })
        .collect();
    assert_eq!(
        chains,
        [
            ("TAP_A", vec!["U2", "U1"], true),
            ("TAP_B", vec!["U5", "U3", "U4"], true),
            ("TAP_C", vec!["U7", "U8", "U6"], false),
        ]
    );
    assert!(r.netlist_nets >= 600, "{} nets", r.netlist_nets);
    // Nets by scan access, worked out from the design:
    // driven and read: A 8 (U1 OUTPUT3 → U3 BIDIR); D's A side 8 (U5 PA
    //   BIDIR); HA_B 8, HSTB 4, CKCFG 4, CLK 6, EXP_B 4, EXST 4, PB 8,
    //   U1/U2 host data 8, BP_PB 8 → 70.
    // driven only: LBB 8 (U2 outputs before RN11), LOC 8 (before U21),
    //   XCVR_OE_N 1, INV 6, AND inputs 8, FP_LED 8, ST_LED 8 → 47.
    // read only: SW_C 8 (after RN11), LOC_BUF 8, XB 8, INV_N 6, AND_Y 4,
    //   strapped inputs on packs: U6/U7 ADDR 6 + MODE 2, BRG 4, RST_N 5 → 51.
    // no scan access: ST_LED_K 8 (after RN12, only LEDs), XCVR_DIR (a pull
    //   and U22's dir) → 9.
    assert_eq!(
        (r.nets_driven_and_read, r.nets_driven_only, r.nets_read_only),
        (70, 47, 51)
    );
    assert_eq!(
        r.nets_without_scan_access.len(),
        9,
        "{:?}",
        r.nets_without_scan_access
    );
    // Clusters: U21 8 gates, U22 8, U23 6, U24 4, RN11 8 and RN12 8 series
    // elements → 42. Pulls: RN13 8, RN14 4, RN15 6 (TMS pulls are TAP
    // wiring) → 18.
    assert_eq!(r.clusters.len(), 42);
    assert_eq!(r.pulls.len(), 18);
    // The largest part left unmodelled is the controller U30.
    assert_eq!(r.unmodelled[0].designator, "U30");
    assert_eq!(r.unmodelled[0].part.as_deref(), Some("QC7100"));
}
