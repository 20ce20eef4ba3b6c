//! `--html` reports opened in a real headless Chromium: no console errors, no outside
//! fetches, the pictures and tables present and placed, links and table controls working,
//! and a screenshot kept under `target/test-artifacts/`.

#[path = "support/browser.rs"]
mod browser;
#[path = "support/demo.rs"]
#[allow(dead_code)]
mod demo;

use std::path::Path;
use std::process::Command;

fn boardtwin(args: &[&str], dir: &Path) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_boardtwin"))
        .args(args)
        .current_dir(dir)
        .output()
        .expect("boardtwin runs")
}

/// The number of the boundary cell reading `port` as an input, read from the BSDL text's
/// BOUNDARY_REGISTER entries `"num (cell, port, INPUT, safe)"` (IEEE 1149.1 annex B,
/// the boundary register description).
fn input_cell(bsdl: &str, port: &str) -> usize {
    bsdl.lines()
        .find(|l| {
            l.contains(&format!(", {port},")) && l.contains("INPUT") || {
                let squeezed: String = l.split_whitespace().collect();
                squeezed.contains(&format!(",{port},INPUT"))
            }
        })
        .and_then(|l| l.trim().trim_start_matches('"').split_whitespace().next())
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("no input cell for {port}"))
}

/// `attribute BOUNDARY_LENGTH of E : entity is N;` from the BSDL text.
fn boundary_length(bsdl: &str) -> usize {
    bsdl.lines()
        .find(|l| l.contains("attribute BOUNDARY_LENGTH"))
        .and_then(|l| l.split("entity is").nth(1))
        .and_then(|n| n.trim().trim_end_matches(';').trim().parse().ok())
        .expect("BOUNDARY_LENGTH")
}

/// The TAP state after one TCK rising edge with `tms`, by the state diagram of IEEE 1149.1
/// (figure 6-1), written out as a table here, apart from the model's own.
fn next_state(state: &str, tms: bool) -> &'static str {
    match (state, tms) {
        ("Test-Logic-Reset", false) => "Run-Test/Idle",
        ("Test-Logic-Reset", true) => "Test-Logic-Reset",
        ("Run-Test/Idle", false) => "Run-Test/Idle",
        ("Run-Test/Idle", true) => "Select-DR-Scan",
        ("Select-DR-Scan", false) => "Capture-DR",
        ("Select-DR-Scan", true) => "Select-IR-Scan",
        ("Capture-DR", false) | ("Shift-DR", false) | ("Exit2-DR", false) => "Shift-DR",
        ("Capture-DR", true) | ("Shift-DR", true) => "Exit1-DR",
        ("Exit1-DR", false) | ("Pause-DR", false) => "Pause-DR",
        ("Exit1-DR", true) | ("Exit2-DR", true) => "Update-DR",
        ("Pause-DR", true) => "Exit2-DR",
        ("Update-DR", false) | ("Update-IR", false) => "Run-Test/Idle",
        ("Update-DR", true) | ("Update-IR", true) => "Select-DR-Scan",
        ("Select-IR-Scan", false) => "Capture-IR",
        ("Select-IR-Scan", true) => "Test-Logic-Reset",
        ("Capture-IR", false) | ("Shift-IR", false) | ("Exit2-IR", false) => "Shift-IR",
        ("Capture-IR", true) | ("Shift-IR", true) => "Exit1-IR",
        ("Exit1-IR", false) | ("Pause-IR", false) => "Pause-IR",
        ("Exit1-IR", true) | ("Exit2-IR", true) => "Update-IR",
        ("Pause-IR", true) => "Exit2-IR",
        _ => panic!("no state {state}"),
    }
}

/// TMS at each TCK rising edge of the port whose TCK and TMS wires are `tck` and `tms`,
/// read from a VCD file (IEEE 1364 clause 18: `$var` lines name identifier codes, `#t`
/// lines set the time, `0c`/`1c` lines change a scalar).
fn tms_at_rising_edges(vcd: &str, tck: &str, tms: &str) -> Vec<bool> {
    let mut code_of = std::collections::HashMap::new();
    let mut scope = Vec::new();
    for line in vcd.lines() {
        let w: Vec<&str> = line.split_whitespace().collect();
        match w.as_slice() {
            ["$scope", _, name, "$end"] => scope.push(name.to_string()),
            ["$upscope", "$end"] => {
                scope.pop();
            }
            ["$var", _, "1", code, name, "$end"] => {
                let full = format!("{}.{name}", scope.join("."));
                code_of.insert(full, code.to_string());
            }
            _ => {}
        }
    }
    let find = |suffix: &str| {
        code_of
            .iter()
            .find(|(name, _)| name.ends_with(suffix))
            .map(|(_, c)| c.clone())
            .unwrap_or_else(|| panic!("no wire {suffix} in {:?}", code_of.keys()))
    };
    let (tck_code, tms_code) = (find(tck), find(tms));
    let body = vcd.split("$enddefinitions").nth(1).expect("a VCD body");
    let (mut tck_level, mut tms_level) = (false, false);
    let mut edges = Vec::new();
    // Values change at a time step all together; TMS is read as it stands before the edge.
    let mut pending_rise = false;
    let mut tms_before = false;
    for line in body.lines() {
        let line = line.trim();
        if line.starts_with('#') {
            if pending_rise {
                edges.push(tms_before);
                pending_rise = false;
            }
            tms_before = tms_level;
            continue;
        }
        let (value, code) = line.split_at(line.len().min(1));
        if code == tck_code {
            let rise = value == "1" && !tck_level;
            tck_level = value == "1";
            pending_rise |= rise;
        } else if code == tms_code {
            tms_level = value == "1";
        }
    }
    if pending_rise {
        edges.push(tms_before);
    }
    edges
}

#[test]
#[cfg_attr(
    not(has_chromium),
    ignore = "chromium not found on PATH (Debian package chromium)"
)]
fn a_failing_play_report_opens_clean_with_chains_waveform_and_links() {
    let dir = tempfile::tempdir().unwrap();
    let repo = demo::repo();
    let board = repo.join("scenarios/boards/harbor_controller.yaml");
    let program = repo.join("scenarios/programs/interconnect.yaml");
    let html = dir.path().join("play.html");
    let vcd = dir.path().join("play.vcd");
    // The demo's stuck-at-0 case: HOST_A6 stuck at 0 fails scan 20 (scenarios/cases).
    let out = boardtwin(
        &[
            "play",
            "--board",
            board.to_str().unwrap(),
            "--defect",
            "{stuck: HOST_A6, value: 0}",
            "--html",
            html.to_str().unwrap(),
            "--vcd",
            vcd.to_str().unwrap(),
            program.to_str().unwrap(),
        ],
        dir.path(),
    );
    assert_eq!(
        out.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );

    // Where the failing bit must be, worked out apart from the tool. HOST_A6 is read by U1's
    // input cell for HOST_A(6); J1_MAIN's chain is TDI → U1 → U3 → TDO, so with both in
    // their boundary registers the first bits out of TDO are U3's 50 cells (cell 0 first),
    // then U1's (IEEE 1149.1: the register nearest TDO shifts out first, bit 0 first).
    let u1 = std::fs::read_to_string(repo.join("scenarios/devices/qm7420_bus_bridge.bsd")).unwrap();
    let u3 =
        std::fs::read_to_string(repo.join("scenarios/devices/qm5508_port_controller.bsd")).unwrap();
    let bit = boundary_length(&u3) + input_cell(&u1, "HOST_A(6)");
    // The TCK count: walk the recorded TMS of J1_MAIN through the state diagram; scan 20's
    // bit k leaves TDO at the k-th rising edge spent in Shift-DR of that port's DR scan.
    let vcd_text = std::fs::read_to_string(&vcd).unwrap();
    let tms = tms_at_rising_edges(&vcd_text, "J1_MAIN_TCK", "J1_MAIN_TMS");
    let mut state = "Test-Logic-Reset";
    let mut starts = Vec::new();
    let mut in_shift = false;
    let mut walked = Vec::new();
    for (k, &t) in tms.iter().enumerate() {
        walked.push(state);
        let shifting = state == "Shift-DR" || state == "Shift-IR";
        if shifting && !in_shift {
            starts.push(k);
        }
        in_shift = shifting;
        state = next_state(state, t);
    }

    let Some(page) = browser::open(&browser::file_url(&html)) else {
        return;
    };
    page.assert_no_problems();
    assert!(
        page.fetched_resources().is_empty(),
        "{:?}",
        page.fetched_resources()
    );
    assert_eq!(page.texts("#meta-program"), [program.display().to_string()]);

    // One box per device, in chain order (the board file's tap_ports).
    assert_eq!(
        page.attrs("g.chain[data-port='J1_MAIN'] g.chain-dev", "data-device"),
        ["U1", "U3"]
    );
    assert_eq!(
        page.attrs("g.chain[data-port='J2_AUX'] g.chain-dev", "data-device"),
        ["U2", "U5", "U4"]
    );
    // The instructions, worked out by hand from the program and the BSDL files. Every one of
    // the five devices drives or receives one of the twelve nets, so the program's last IR
    // scan on each port loads EXTEST into all of them (the opcodes 0000, 00000000, 000000
    // and 00000 of their INSTRUCTION_OPCODE tables); then it ends with a TMS reset of each
    // port, and Test-Logic-Reset makes IDCODE the instruction of a device with an
    // identification register and BYPASS of one without (IEEE 1149.1 clauses 6 and 8, from
    // memory): U1, U3 and U4 have IDCODE_REGISTER, the two QM3310s (U2, U5) have none.
    assert_eq!(page.attrs("g.chain-dev", "data-loaded"), ["EXTEST"; 5]);
    assert_eq!(
        page.attrs("g.chain-dev", "data-instruction"),
        ["IDCODE", "IDCODE", "BYPASS", "BYPASS", "IDCODE"]
    );
    assert_eq!(
        page.attrs("g.chain-dev", "data-register"),
        ["DEVICE_ID", "DEVICE_ID", "BYPASS", "BYPASS", "DEVICE_ID"]
    );
    assert_eq!(page.attrs("g.chain-dev", "data-by-reset"), ["true"; 5]);
    assert_eq!(
        page.texts("g.chain-dev[data-device='U1'] text.held"),
        ["IDCODE (reset)"]
    );

    // The waveform of scan 20 marks bit `bit` at its TCK count.
    assert_eq!(page.attrs("#wave-20", "data-port"), ["J1_MAIN"]);
    let shift_tck: usize = page.attrs("#wave-20", "data-shift-tck")[0].parse().unwrap();
    assert!(
        starts.contains(&shift_tck),
        "{shift_tck} not a shift start of {starts:?}"
    );
    let marked = page.attrs("#wave-20 g.fail-bit", "data-tck");
    assert_eq!(marked, [(shift_tck + bit).to_string()]);
    assert_eq!(
        page.attrs("#wave-20 g.fail-bit", "data-bit"),
        [bit.to_string()]
    );
    assert_eq!(
        page.attrs(
            &format!("#wave-20 g.period[data-tck='{}']", shift_tck + bit),
            "data-state"
        ),
        ["Shift-DR"]
    );
    // By the independent walk too: a DR scan (Capture-DR just before its first shift) and
    // still shifting at the marked period.
    assert_eq!(walked[shift_tck - 1], "Capture-DR");
    assert_eq!(walked[shift_tck + bit], "Shift-DR");

    // The failing bit links to its net, and the net's row lists its pins.
    let row = format!("#bit-20-{bit}");
    assert_eq!(page.count(&row), 1);
    page.click(&format!("{row} a[href='#net-HOST_A6']"));
    assert_eq!(
        page.eval("location.hash"),
        serde_json::json!("#net-HOST_A6")
    );
    let net_row = page.texts("#net-HOST_A6 td");
    assert_eq!(net_row[0], "HOST_A6");
    assert!(
        net_row[1].contains("U5.F1") && net_row[1].contains("U1.3"),
        "{net_row:?}"
    );

    // Sorting and filtering the nets table.
    let nets = page.count("#nets-table tbody tr");
    page.type_into("input[data-table='nets-table']", "HOST_A6");
    assert_eq!(page.visible_count("#nets-table tbody tr"), 1);
    page.tab().press_key("Backspace").unwrap();
    assert!(page.visible_count("#nets-table tbody tr") > 1);
    assert_eq!(page.count("#nets-table tbody tr"), nets);
    page.click("#nets-table th:nth-child(1)");
    let first = page.texts("#nets-table tbody tr:first-child td:first-child");
    page.click("#nets-table th:nth-child(1)");
    let first_desc = page.texts("#nets-table tbody tr:first-child td:first-child");
    assert_ne!(first, first_desc);

    page.eval("(location.hash = '', window.scrollTo(0, 0))");
    let shot = page.screenshot("html_report_play");
    assert!(std::fs::metadata(shot).unwrap().len() > 10_000);
    page.assert_no_problems();
}

#[test]
#[cfg_attr(
    not(has_chromium),
    ignore = "chromium not found on PATH (Debian package chromium)"
)]
fn a_campaign_report_draws_every_class_net_and_group_size() {
    let dir = tempfile::tempdir().unwrap();
    let repo = demo::repo();
    let board = repo.join("scenarios/boards/harbor_controller.yaml");
    let program = repo.join("scenarios/programs/interconnect.yaml");
    let html = dir.path().join("campaign.html");
    let json = dir.path().join("campaign.json");
    let out = boardtwin(
        &[
            "campaign",
            "--board",
            board.to_str().unwrap(),
            "--report",
            json.to_str().unwrap(),
            "--html",
            html.to_str().unwrap(),
            "--program",
            program.to_str().unwrap(),
        ],
        dir.path(),
    );
    assert!(
        out.status.code().is_some_and(|c| c <= 1),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // Round trip: the page against the same run's JSON result.
    let result: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(&json).unwrap()).unwrap();

    let Some(page) = browser::open(&browser::file_url(&html)) else {
        return;
    };
    page.assert_no_problems();
    assert!(page.fetched_resources().is_empty());
    let classes: Vec<String> = result["by_class"]
        .as_object()
        .unwrap()
        .keys()
        .cloned()
        .collect();
    assert_eq!(page.attrs("g.bar", "data-class"), classes);
    for c in &classes {
        let sel = format!("g.bar[data-class='{c}']");
        assert_eq!(
            page.attrs(&sel, "data-detected"),
            [result["by_class"][c]["detected"].to_string()]
        );
    }
    let sizes = result["ambiguity_groups"]["sizes"].as_object().unwrap();
    assert_eq!(page.count("g.hist-bar"), sizes.len());
    let undetected = result["results"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|r| r["verdict"] != "detected")
        .count();
    assert_eq!(page.count("#undetected-table tbody tr"), undetected);
    // Every square of the net map links to a row of the nets table.
    let links = page.attrs(".netmap a", "href");
    assert!(!links.is_empty());
    for l in &links {
        assert_eq!(page.count(&format!("tr[id='{}']", &l[1..])), 1, "{l}");
    }
    page.screenshot("html_report_campaign");
}

#[test]
#[cfg_attr(
    not(has_chromium),
    ignore = "chromium not found on PATH (Debian package chromium)"
)]
fn diagnose_and_compare_reports_place_the_break_and_the_differences() {
    let dir = tempfile::tempdir().unwrap();
    let repo = demo::repo();
    let board = repo.join("scenarios/boards/harbor_controller.yaml");
    let program = repo.join("scenarios/programs/infrastructure.yaml");
    let (board, program) = (board.to_str().unwrap(), program.to_str().unwrap());
    // The demo's broken-chain case: the link from U1's TDO to U3's TDI is broken.
    let out = boardtwin(
        &[
            "play",
            "--board",
            board,
            "--defect",
            "{broken_link: U1}",
            "--log",
            "cap.jsonl",
            program,
        ],
        dir.path(),
    );
    assert_eq!(out.status.code(), Some(1));
    let out = boardtwin(
        &[
            "diagnose",
            "--board",
            board,
            "--program",
            program,
            "--real",
            "cap.jsonl",
            "--html",
            "d.html",
        ],
        dir.path(),
    );
    assert_eq!(
        out.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let out = boardtwin(
        &[
            "compare",
            "--board",
            board,
            "--program",
            program,
            "--real",
            "cap.jsonl",
            "--html",
            "c.html",
        ],
        dir.path(),
    );
    assert_eq!(
        out.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );

    let Some(chromium) = browser::launch() else {
        return;
    };
    let page = browser::Chromium::open(&chromium, &browser::file_url(&dir.path().join("d.html")));
    page.assert_no_problems();
    assert!(page.fetched_resources().is_empty());
    // Data stops at U1 (IR capture and IDCODE of U1 read all ones, U3 reads right): the
    // chain is marked broken at U1 on J1_MAIN, nowhere else.
    assert_eq!(
        page.attrs("g.chain[data-port='J1_MAIN'] g.chain-break", "data-device"),
        ["U1"]
    );
    assert_eq!(page.count("g.chain-break"), 1);
    assert!(page.count("li.explanation") >= 1);
    assert_eq!(page.attrs("li.explanation", "data-distance")[0], "0");
    page.screenshot("html_report_diagnose");

    let page = browser::Chromium::open(&chromium, &browser::file_url(&dir.path().join("c.html")));
    page.assert_no_problems();
    // The capture against the good board's run: every differing bit is in a register of U1
    // or unplaced, and the per-device bars add up to the table's rows.
    let counts: usize = page
        .attrs(".per-device g.count-bar", "data-count")
        .iter()
        .map(|n| n.parse::<usize>().unwrap())
        .sum();
    assert_eq!(counts, page.count("#differences-table tbody tr"));
    assert!(page
        .attrs(".per-device g.count-bar", "data-name")
        .iter()
        .all(|d| d == "U1" || d == "(unplaced)"));
    page.screenshot("html_report_compare");
}

fn write(dir: &Path, name: &str, text: &str) -> std::path::PathBuf {
    let p = dir.join(name);
    std::fs::write(&p, text).unwrap();
    p
}

#[test]
fn each_chain_box_names_the_instruction_its_device_holds() {
    let dir = tempfile::tempdir().unwrap();
    let repo = demo::repo();
    let board = repo.join("scenarios/boards/harbor_controller.yaml");
    // J1_MAIN is TDI -> U1 (IR 4 bits) -> U3 (IR 8 bits) -> TDO, so of the 12 bits of an SIR
    // (SVF Rev E, SIR: the rightmost hex digit holds the first bits shifted) bits 7..0 end in
    // U3's register and bits 11..8 in U1's. 0xB07: U1 gets 1011, which the QM7420's
    // INSTRUCTION_OPCODE table does not list (a BYPASS-like code: IEEE 1149.1 clause 8, from
    // memory); U3 gets 00000111, HIGHZ's second opcode in the QM5508 table. Both then select
    // BYPASS: the DR path is two bits, each capturing 0 (IEEE 1149.1 clause 10, from memory).
    let svf = write(
        dir.path(),
        "odd.svf",
        "! an unlisted opcode and a second opcode\nSTATE RESET;\nSIR 12 TDI(B07);\nSDR 2 TDI(0) TDO(0) MASK(3);\n",
    );
    let html = dir.path().join("odd.html");
    let out = boardtwin(
        &[
            "play",
            "--board",
            board.to_str().unwrap(),
            "--port",
            "J1_MAIN",
            "--html",
            html.to_str().unwrap(),
            svf.to_str().unwrap(),
        ],
        dir.path(),
    );
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    let Some(page) = browser::open(&browser::file_url(&html)) else {
        return;
    };
    page.assert_no_problems();
    let dev = |d: &str, a: &str| page.attrs(&format!("g.chain-dev[data-device='{d}']"), a);
    assert_eq!(dev("U1", "data-instruction"), ["unlisted 0b1011"]);
    assert_eq!(dev("U1", "data-opcode"), ["1011"]);
    assert_eq!(dev("U1", "data-register"), ["BYPASS"]);
    assert_eq!(dev("U1", "data-by-reset"), ["false"]);
    assert_eq!(dev("U3", "data-instruction"), ["HIGHZ"]);
    assert_eq!(dev("U3", "data-opcode"), ["00000111"]);
    assert_eq!(dev("U3", "data-register"), ["BYPASS"]);
    assert_eq!(
        page.texts("g.chain-dev[data-device='U1'] text.held"),
        ["unlisted 0b1011"]
    );
    // J2_AUX was never clocked: each device holds what Test-Logic-Reset gave it at power-up
    // (IDCODE where the BSDL has IDCODE_REGISTER: U4 only; IEEE 1149.1 clause 6, from
    // memory), and nothing was loaded.
    assert_eq!(
        page.attrs(
            "g.chain[data-port='J2_AUX'] g.chain-dev",
            "data-instruction"
        ),
        ["BYPASS", "BYPASS", "IDCODE"]
    );
    assert_eq!(
        page.attrs("g.chain[data-port='J2_AUX'] g.chain-dev", "data-loaded"),
        ["", "", ""]
    );
    page.screenshot("html_report_instructions");
}

#[test]
fn the_waveforms_say_where_they_stop_and_the_table_keeps_every_bit() {
    let dir = tempfile::tempdir().unwrap();
    let repo = demo::repo();
    let board = repo.join("scenarios/boards/harbor_controller.yaml");
    // 30 two-bit DR scans through U1's and U3's BYPASS registers, each expecting 00, with
    // U3's TDO (the chain's last) stuck at 1: every scan fails in both bits.
    let mut text = String::from("STATE RESET;\nSIR 12 TDI(FFF);\n");
    for _ in 0..30 {
        text.push_str("SDR 2 TDI(0) TDO(0) MASK(3);\n");
    }
    let svf = write(dir.path(), "many.svf", &text);
    let html = dir.path().join("many.html");
    let out = boardtwin(
        &[
            "play",
            "--board",
            board.to_str().unwrap(),
            "--port",
            "J1_MAIN",
            "--defect",
            "{tdo_stuck: U3, value: 1}",
            "--html",
            html.to_str().unwrap(),
            svf.to_str().unwrap(),
        ],
        dir.path(),
    );
    assert_eq!(
        out.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let Some(page) = browser::open(&browser::file_url(&html)) else {
        return;
    };
    page.assert_no_problems();
    assert_eq!(page.texts("#failed-scans"), ["30"]);
    assert_eq!(page.count("#failing-bits-table tbody tr"), 60);
    assert_eq!(page.count("figure.scan-wave"), 24);
    let cap = page.texts("#waveforms p.wave-cap");
    assert_eq!(cap.len(), 1);
    assert!(
        cap[0].starts_with("24 of 30 failing scans drawn"),
        "{cap:?}"
    );
    // The first 24 failing scans are the ones drawn: scans 1 to 24 (scan 0 is the SIR).
    let drawn: Vec<String> = (1..=24).map(|k| k.to_string()).collect();
    assert_eq!(page.attrs("figure.scan-wave", "data-scan"), drawn);
    // The break the defect makes: after U3 on J1_MAIN.
    assert_eq!(
        page.attrs("g.chain[data-port='J1_MAIN'] g.chain-break", "data-device"),
        ["U3"]
    );
}

#[test]
fn the_run_page_has_each_scenario_with_its_chains_and_failing_scans() {
    let dir = tempfile::tempdir().unwrap();
    let repo = demo::repo();
    let cases = repo.join("scenarios/cases");
    // One scenario of our own that cannot hold: the broken link fails scans 0, 1 and 2 of the
    // infrastructure program (scenarios/cases/broken_chain.yaml says so), not scan 0 alone.
    let unmet = write(
        dir.path(),
        "unmet.yaml",
        &format!(
            "description: an expectation that does not hold\nboard: {}\ndefects:\n  - {{ broken_link: U1 }}\nprograms:\n  - file: {}\n    result: fail\n    failing_scans: [0]\n",
            repo.join("scenarios/boards/harbor_controller.yaml").display(),
            repo.join("scenarios/programs/infrastructure.yaml").display()
        ),
    );
    let html = dir.path().join("run.html");
    let out = boardtwin(
        &[
            "run",
            "--json",
            "--html",
            html.to_str().unwrap(),
            cases.to_str().unwrap(),
            unmet.to_str().unwrap(),
        ],
        dir.path(),
    );
    assert_eq!(
        out.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // Round trip: the page's verdicts against the same run's JSON.
    let json: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let listed = json["scenarios"].as_array().unwrap();
    let files = std::fs::read_dir(&cases)
        .unwrap()
        .filter(|e| {
            e.as_ref()
                .unwrap()
                .path()
                .extension()
                .is_some_and(|x| x == "yaml")
        })
        .count();
    assert!(files > 0, "no scenario in {}", cases.display());
    assert_eq!(listed.len(), files + 1);

    let Some(page) = browser::open(&browser::file_url(&html)) else {
        return;
    };
    page.assert_no_problems();
    assert!(
        page.fetched_resources().is_empty(),
        "{:?}",
        page.fetched_resources()
    );
    // One section per scenario, in the table's order, each with its verdict and chains.
    let names: Vec<String> = listed
        .iter()
        .map(|s| s["scenario"].as_str().unwrap().to_string())
        .collect();
    assert_eq!(page.attrs("details.scenario", "data-scenario"), names);
    let verdicts: Vec<&str> = listed
        .iter()
        .map(|s| if s["met"] == true { "ok" } else { "UNMET" })
        .collect();
    assert_eq!(page.attrs("details.scenario", "data-verdict"), verdicts);
    assert_eq!(page.count("details.scenario svg.chains"), files + 1);
    // `run` names a file below the current folder relative to it.
    let unmet_name = unmet
        .strip_prefix(dir.path())
        .unwrap_or(&unmet)
        .display()
        .to_string();
    assert_eq!(unmet_name, "unmet.yaml");
    assert_eq!(
        page.attrs(
            &format!("details.scenario[data-scenario='{unmet_name}']"),
            "data-verdict"
        ),
        ["UNMET"]
    );
    // The demo's cases all hold.
    assert_eq!(
        verdicts.iter().filter(|v| **v == "ok").count(),
        files,
        "{verdicts:?}"
    );

    // broken_chain.yaml: `broken_link: U1` breaks the link from U1's TDO to the next TDI on
    // J1_MAIN (TDI -> U1 -> U3 -> TDO in the board file), so the cross stands between the
    // U1 and U3 boxes of that chain, and nowhere else.
    // `run` shows the path it was given without its `..` steps.
    let broken = names
        .iter()
        .find(|n| n.ends_with("/scenarios/cases/broken_chain.yaml"))
        .expect("broken_chain.yaml is listed");
    assert!(!broken.contains(".."), "{broken}");
    let sec = format!("details.scenario[data-scenario='{broken}']");
    assert_eq!(page.count(&sec), 1);
    assert_eq!(
        page.attrs(&format!("{sec} g.chain-break"), "data-device"),
        ["U1"]
    );
    assert_eq!(
        page.attrs(&format!("{sec} g.chain-break"), "data-device")
            .len(),
        1
    );
    let id = page.attrs(&sec, "id")[0].clone();
    let between = page.eval(&format!(
        "(function () {{ var s = document.getElementById('{id}'); s.open = true; \
         var b = s.querySelector('g.chain[data-port=\"J1_MAIN\"] g.chain-break').getBBox(); \
         var u1 = s.querySelector('g.chain-dev[data-device=\"U1\"] rect').getBBox(); \
         var u3 = s.querySelector('g.chain-dev[data-device=\"U3\"] rect').getBBox(); \
         return [u1.x + u1.width <= b.x, b.x + b.width <= u3.x, b.width > 0]; }})()"
    ));
    assert_eq!(between, serde_json::json!([true, true, true]));
    // Its failing scans 0, 1 and 2 (the scenario file's `failing_scans`) are drawn.
    assert_eq!(
        page.attrs(&format!("{sec} figure.scan-wave"), "data-scan"),
        ["0", "1", "2"]
    );
    page.eval(&format!("document.getElementById('{id}').open = false"));

    // The table links to each section, and following a link unfolds it.
    let link = format!("#scenarios-table a[href='#{id}']");
    assert_eq!(page.count(&link), 1);
    page.click(&link);
    assert_eq!(
        page.eval("location.hash"),
        serde_json::json!(format!("#{id}"))
    );
    assert_eq!(
        page.eval(&format!("document.getElementById('{id}').open")),
        serde_json::json!(true)
    );
    page.eval("(location.hash = '', window.scrollTo(0, 0))");
    page.screenshot("html_report_run");
    page.assert_no_problems();
}

#[test]
fn the_compare_page_counts_the_differing_bits_the_program_compares() {
    let dir = tempfile::tempdir().unwrap();
    let repo = demo::repo();
    let board = repo.join("scenarios/boards/harbor_controller.yaml");
    let program = repo.join("scenarios/programs/interconnect.yaml");
    // The demo's logic-analyzer recording of J2_AUX on a board with LB_D0 and LB_D1 shorted
    // (scenarios/cases/real_capture_compare.yaml).
    let real = repo.join("scenarios/captures/j2_aux_lb_d0_d1_short.vcd");
    let html = dir.path().join("c.html");
    let out = boardtwin(
        &[
            "compare",
            "--board",
            board.to_str().unwrap(),
            "--program",
            program.to_str().unwrap(),
            "--real",
            real.to_str().unwrap(),
            "--port",
            "J2_AUX",
            "--tck",
            "ch0_tck",
            "--tms",
            "ch1_tms",
            "--tdi",
            "ch2_tdi",
            "--tdo",
            "ch3_tdo",
            "--html",
            html.to_str().unwrap(),
        ],
        dir.path(),
    );
    assert_eq!(
        out.status.code(),
        Some(1),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let Some(page) = browser::open(&browser::file_url(&html)) else {
        return;
    };
    page.assert_no_problems();
    // Worked by hand as in capture_compare.rs (the modified counting sequence of P. Goel and
    // M. T. McMahon, ITC 1982, gives LB_D0 code 1 and LB_D1 code 2; the short is wired-AND):
    // each net reads 0 in the one vector where it alone is high, and J2_AUX reads each
    // vector's response twice (run scans 7 + 4k with nothing expected, 9 + 4k compared). So
    // 4 TDO bits differ and the program compares 2 of them (scans 9 and 13).
    assert_eq!(page.attrs("#compare-bits", "data-bits"), ["4"]);
    assert_eq!(page.attrs("#compare-bits", "data-in-program"), ["2"]);
    assert_eq!(
        page.texts("#compare-bits"),
        ["4 TDO bits differ (2 of them compared by the program)"]
    );
    assert!(page.texts("#verdict")[0].contains("(2 of them compared by the program)"));
    let col = |n: usize| page.texts(&format!("#differences-table tbody td:nth-child({n})"));
    let heads = page.texts("#differences-table thead th");
    assert_eq!(heads.last().map(String::as_str), Some("in program"));
    assert_eq!(col(2), ["7", "9", "11", "13"]);
    assert_eq!(col(4), ["33", "33", "34", "34"]);
    assert_eq!(col(heads.len()), ["no", "yes", "no", "yes"]);
    assert_eq!(col(12), ["LB_D0", "LB_D0", "LB_D1", "LB_D1"]);
    page.screenshot("html_report_compare_counts");
}
