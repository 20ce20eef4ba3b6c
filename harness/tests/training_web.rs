//! The trainee's page over HTTP, without a browser: the page is served
//! whole (no outside fetch), the board's ports, devices and nets come as
//! designed, a run places the failing bits on the right nets without
//! naming the answer, an upload runs, and the grade names the answer.

#[path = "support/class.rs"]
#[allow(dead_code)]
mod class;
#[path = "support/demo.rs"]
mod demo;

use serde_json::{json, Value};
use std::io::{Read, Write};
use std::net::TcpStream;
use virtual_board::DefectSpec;

use demo::{demo, repo};

fn page_server(defects: Vec<DefectSpec>) -> String {
    class::page_server(demo(), defects, &repo().join("scenarios/programs"))
}

/// One HTTP/1.1 request; (status, body).
fn http(address: &str, method: &str, path: &str, body: Option<&Value>) -> (u16, Vec<u8>) {
    let mut s = TcpStream::connect(address).unwrap();
    let body = body
        .map(|b| serde_json::to_vec(b).unwrap())
        .unwrap_or_default();
    write!(
        s,
        "{method} {path} HTTP/1.1\r\nHost: {address}\r\nContent-Type: application/json\r\nContent-Length: {}\r\n\r\n",
        body.len()
    )
    .unwrap();
    s.write_all(&body).unwrap();
    let mut all = Vec::new();
    s.read_to_end(&mut all).unwrap();
    let end = all.windows(4).position(|w| w == b"\r\n\r\n").unwrap();
    let head = String::from_utf8_lossy(&all[..end]).to_string();
    let status: u16 = head.split(' ').nth(1).unwrap().parse().unwrap();
    (status, all[end + 4..].to_vec())
}

fn json_of(bytes: &[u8]) -> Value {
    serde_json::from_slice(bytes).unwrap()
}

fn find(hay: &[u8], needle: &str) -> bool {
    hay.windows(needle.len()).any(|w| w == needle.as_bytes())
}

#[test]
fn the_page_runs_programs_and_grades_without_telling_the_answer_first() {
    let answer: DefectSpec = serde_yaml::from_str("{short: [LB_D0, LB_D1]}").unwrap();
    let address = page_server(vec![answer.clone()]);
    let (status, page) = http(&address, "GET", "/", None);
    assert_eq!(status, 200);
    // Everything inline: no script, style or image from anywhere else.
    for outside in [
        "src=\"http",
        "href=\"http",
        "src=\"//",
        "@import",
        "url(http",
    ] {
        assert!(!find(&page, outside), "the page fetches `{outside}`");
    }
    let (status, board) = http(&address, "GET", "/api/board", None);
    assert_eq!(status, 200);
    let board = json_of(&board);
    assert_eq!(board["ports"][0]["name"], "J1_MAIN");
    assert!(board["nets"]
        .as_array()
        .unwrap()
        .iter()
        .any(|n| n == "LB_D0"));
    let programs: Vec<String> = board["programs"]
        .as_array()
        .unwrap()
        .iter()
        .map(|p| p.as_str().unwrap().to_string())
        .collect();
    assert!(
        programs.contains(&"bundled: interconnect.yaml".to_string()),
        "{programs:?}"
    );
    assert!(programs
        .iter()
        .any(|p| p.starts_with("generated: interconnect")));
    assert!(find(
        &serde_json::to_vec(&board).unwrap(),
        "current-limited supply"
    ));

    let (status, run) = http(
        &address,
        "POST",
        "/api/run",
        Some(&json!({"trainee": "web", "program": "bundled: interconnect.yaml"})),
    );
    assert_eq!(status, 200, "{}", String::from_utf8_lossy(&run));
    let giveaways = [
        answer.describe(),
        serde_json::to_string(&answer).unwrap(),
        "short between".into(),
    ];
    for g in &giveaways {
        assert!(!find(&run, g), "`{g}` in a run before grading");
    }
    // The page is the same bytes whatever the exercise (its form offers
    // every kind of defect), and holds neither the answer's words nor form.
    assert_eq!(page, harness::training::PAGE.as_bytes());
    assert!(!find(&page, &giveaways[0]) && !find(&page, &giveaways[1]));
    let run = json_of(&run);
    assert_eq!(run["passed"], false);
    let nets: std::collections::BTreeSet<&str> = run["failing"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|f| f["net"].as_str())
        .collect();
    assert!(nets.contains("LB_D0") || nets.contains("LB_D1"), "{nets:?}");

    // An upload: the infrastructure test as native YAML text.
    let text =
        std::fs::read_to_string(repo().join("scenarios/programs/infrastructure.yaml")).unwrap();
    let (status, up) = http(
        &address,
        "POST",
        "/api/run",
        Some(&json!({"trainee": "web", "upload": {"text": text, "svf": false}})),
    );
    assert_eq!(status, 200, "{}", String::from_utf8_lossy(&up));
    assert_eq!(
        json_of(&up)["passed"],
        true,
        "the short does not touch the chain"
    );
    // An SVF upload on a named port.
    let svf = std::fs::read_to_string(
        repo().join("scenarios/programs/exported/interconnect.J1_MAIN.svf"),
    )
    .unwrap();
    let (status, _) = http(
        &address,
        "POST",
        "/api/run",
        Some(&json!({"trainee": "web2", "upload": {"text": svf, "svf": true, "port": "J1_MAIN"}})),
    );
    assert_eq!(status, 200);
    // Bad input is refused, not a crash.
    let (status, _) = http(
        &address,
        "POST",
        "/api/run",
        Some(&json!({"trainee": "", "program": "x"})),
    );
    assert_eq!(status, 400);
    let (status, _) = http(
        &address,
        "POST",
        "/api/run",
        Some(&json!({"trainee": "web", "upload": {"text": "steps: [", "svf": false}})),
    );
    assert_eq!(status, 400);
    let (status, _) = http(&address, "GET", "/nothing", None);
    assert_eq!(status, 404);

    let (status, grade) = http(
        &address,
        "POST",
        "/api/submit",
        Some(&json!({"trainee": "web", "defects": [{"short": ["LB_D1", "LB_D0"]}]})),
    );
    assert_eq!(status, 200);
    let grade = json_of(&grade);
    assert_eq!(grade["verdict"], "exact");
    assert!(grade["debrief"]
        .as_str()
        .unwrap()
        .contains("short between nets LB_D0 and LB_D1"));
}
