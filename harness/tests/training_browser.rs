//! The trainees' page in a real headless Chromium: load it, give a name,
//! run the bundled interconnect test, see the failing nets, build and
//! submit a diagnosis, see the grade; no console error, nothing fetched
//! from anywhere but the exercise server; a screenshot kept as an artifact.

#[path = "support/browser.rs"]
mod browser;
#[path = "support/class.rs"]
#[allow(dead_code)]
mod class;
#[path = "support/demo.rs"]
mod demo;

use virtual_board::DefectSpec;

use demo::{demo, repo};

/// Waits (up to 30 s) until `selector` matches on `page` (the page's
/// fetches are asynchronous; a click returns before they answer).
fn until(page: &browser::Page, selector: &str) {
    let start = std::time::Instant::now();
    while page.count(selector) == 0 {
        assert!(start.elapsed().as_secs() < 30, "no {selector} on the page");
        std::thread::sleep(std::time::Duration::from_millis(50));
    }
}

#[test]
#[cfg_attr(
    not(has_chromium),
    ignore = "chromium not found on PATH (Debian package chromium)"
)]
fn a_trainee_runs_a_program_sees_the_failing_nets_and_gets_graded() {
    let answer: DefectSpec = serde_yaml::from_str("{short: [LB_D0, LB_D1]}").unwrap();
    let address = class::page_server(demo(), vec![answer], &repo().join("scenarios/programs"));
    let origin = format!("http://{address}/");
    let Some(page) = browser::open(&origin) else {
        return;
    };
    until(&page, "#program option");
    assert_eq!(
        page.texts("#board-name"),
        ["HC-210 harbor controller, rev B"]
    );
    assert!(page.texts("#safety")[0].contains("current-limited supply"));
    assert!(page.count("#nets span") > 20);
    page.type_into("#trainee", "Ada");
    page.eval("document.getElementById('program').value = 'bundled: interconnect.yaml'");
    page.click("#run");
    until(&page, "#failing-nets");
    let failing = page.texts("#failing-nets");
    assert!(
        failing[0].contains("LB_D0") && failing[0].contains("LB_D1"),
        "{failing:?}"
    );
    assert!(page.texts("#result p")[0].starts_with("FAILED"));
    assert_eq!(page.texts("#nets span.failing"), ["LB_D0", "LB_D1"]);
    // Nothing of the answer on the page before the grade.
    let before = page.eval("document.body.innerText").to_string();
    assert!(!before.contains("short between nets LB_D0"), "{before}");
    page.type_into("#where", "LB_D1, LB_D0");
    page.click("#add");
    assert_eq!(
        page.texts("#diagnosis li"),
        [r#"{"short":["LB_D1","LB_D0"]}"#]
    );
    page.click("#submit");
    until(&page, "#grade pre");
    assert_eq!(page.texts("#grade p"), ["Grade: exact (100 points)"]);
    assert!(page.texts("#grade pre")[0].contains("The answer: short between nets LB_D0 and LB_D1"));
    let shot = page.screenshot("exercise_page_graded");
    assert!(std::fs::metadata(&shot).unwrap().len() > 1000);
    for url in page.fetched_resources() {
        assert!(url.starts_with(&origin), "the page fetched {url}");
    }
    page.assert_no_problems();
}
