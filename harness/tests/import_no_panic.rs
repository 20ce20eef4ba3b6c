//! The import readers (CSV, IPC-D-356A, EDIF, assembly file) never panic: on
//! arbitrary text, and on valid files with random edits, each returns a
//! netlist or a placed error.

use std::path::Path;

use harness::import::{read_assembly, read_csv, read_edif, read_ipc356};
use proptest::prelude::*;

const IPC: &str = "\
C  comment
P  UNITS CUST 1
P  NNAME1     A_LONG_NET_NAME_FOR_THE_TEST
317NET_A            J1    -1    D0400PA00X+010000Y+020000X0600Y0600R000 S0
327NNAME1           U2    -A11        A01X-030000Y+021000X0300Y0100R000 S1
327NET_A            U2    -14         A01
378NET_A            trace record
999
";

const CSV: &str = "net,designator,pin,x,y\nA,U1,1,1.5,2\n\"B,C\",U2,A3,,\nA,U2,4,0,0\n";

const EDIF: &str = r#"(edif x (edifVersion 2 0 0) (edifLevel 0) (keywordMap (keywordLevel 0))
 (library p (edifLevel 0) (technology (numberDefinition))
  (cell R (cellType GENERIC) (view v (viewType NETLIST)
   (interface (port &1) (port (rename P2 "2") (designator "2")) (port (array D 4))))))
 (library b (edifLevel 0)
  (cell top (cellType GENERIC) (view v (viewType NETLIST) (interface (port E))
   (contents
    (instance (rename R_1 "R-1") (viewRef v (cellRef R (libraryRef p))) (property REFDES (string "R1")))
    (instance R2 (viewRef v (cellRef R (libraryRef p))))
    (net (rename A "A%34%1") (joined (portRef &1 (instanceRef R_1)) (portRef (member D 2) (instanceRef R2))))
    (net B (joined (portList (portRef P2 (instanceRef R2)) (portRef E))))))))
 (design d (cellRef top (libraryRef b))))
"#;

const ASSEMBLY: &str = "\
devices:
  U1: { bsdl: a.bsd, idcode: 0x1 }
tap_ports:
  - { name: J, connector: J1, tdi: \"1\", tdo: \"2\", trst: \"5\" }
  - { name: K, chain: [U1], trst: true }
not_fitted: [R1]
clusters: { U9: { kind: buffer, a: A, y: B } }
";

/// Edits: (position, kind, byte) applied in turn.
fn mutate(text: &str, edits: &[(usize, u8, u8)]) -> String {
    let mut b: Vec<u8> = text.as_bytes().to_vec();
    for &(at, kind, byte) in edits {
        if b.is_empty() {
            b.push(byte);
            continue;
        }
        let i = at % b.len();
        match kind % 4 {
            0 => b[i] = byte,
            1 => {
                b.remove(i);
            }
            2 => b.insert(i, byte),
            _ => {
                let line: Vec<u8> = b[i..].iter().copied().take_while(|&c| c != b'\n').collect();
                b.splice(i..i, line.into_iter().chain([b'\n']));
            }
        }
    }
    String::from_utf8_lossy(&b).into_owned()
}

fn edits() -> impl Strategy<Value = Vec<(usize, u8, u8)>> {
    prop::collection::vec(
        (
            any::<usize>(),
            any::<u8>(),
            prop::sample::select(b" -+,\"\nXYPCN0123456789ANU9:{}[]()%&".to_vec()),
        ),
        0..12,
    )
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(600))]

    #[test]
    fn arbitrary_text_never_panics(s in "\\PC{0,300}") {
        let _ = read_csv(&s, Path::new("x.csv"));
        let _ = read_ipc356(&s, Path::new("x.ipc"));
        let _ = read_edif(&s, Path::new("x.edf"));
        let _ = read_assembly(&s, Path::new("x.yaml"));
    }

    #[test]
    fn edited_ipc356_never_panics_and_errors_are_placed(e in edits()) {
        let text = mutate(IPC, &e);
        if let Err(err) = read_ipc356(&text, Path::new("x.ipc")) {
            let lines = text.lines().count() as u32;
            prop_assert!(err.span.line <= lines.max(1), "{err}");
        }
    }

    #[test]
    fn edited_csv_never_panics_and_errors_are_placed(e in edits()) {
        let text = mutate(CSV, &e);
        if let Err(err) = read_csv(&text, Path::new("x.csv")) {
            let lines = text.lines().count() as u32;
            prop_assert!(err.span.line <= lines.max(1), "{err}");
        }
    }

    #[test]
    fn edited_edif_never_panics_and_errors_are_placed(e in edits()) {
        let text = mutate(EDIF, &e);
        if let Err(err) = read_edif(&text, Path::new("x.edf")) {
            let lines = text.lines().count() as u32;
            prop_assert!(err.span.line <= lines.max(1), "{err}");
        }
    }

    #[test]
    fn edif_of_random_brackets_never_panics(s in "[()\" a%&0-9\n]{0,400}") {
        let _ = read_edif(&format!("(edif x (library l (cell c (view v (contents {s}"), Path::new("x.edf"));
    }

    #[test]
    fn edited_assembly_never_panics(e in edits()) {
        let _ = read_assembly(&mutate(ASSEMBLY, &e), Path::new("x.yaml"));
    }
}
