//! The HTML report of a campaign on a generated 5,000-net board: written (sections,
//! rendering and the atomic write) and opened in headless Chromium (load to the end of the
//! page's script). The aims: under 1 s to write, under 3 s to open.
//!
//! `cargo bench -p harness --bench html_report`

use std::time::Instant;

use criterion::{criterion_group, criterion_main, Criterion};
use harness::campaign::{run_campaign, universe, UniverseOptions};
use harness::html::{campaign_sections, Meta, Report};
use harness::write_atomic;

#[path = "../../virtual_board/benches/support/generated_board.rs"]
#[allow(dead_code)]
mod generated_board;

#[path = "support/board_5000.rs"]
mod board_5000;

use board_5000::{board, counting};

#[path = "../tests/support/browser.rs"]
mod browser;

fn bench(c: &mut Criterion) {
    let (loaded, dir) = board("html");
    let program = counting(&loaded);
    let faults = universe(&loaded, &UniverseOptions::default());
    let result = run_campaign(&loaded, &program, &faults, 2, (1, 1), &|_| {})
        .unwrap_or_else(|e| panic!("{e}"));
    let meta = Meta::now("generated.yaml", "counting sequence");
    let path = dir.join("campaign.html");
    let write = || {
        let report = Report {
            title: "campaign".into(),
            meta: meta.clone(),
            verdict: format!("{} detected", result.detected),
            passed: result.undetected == 0,
            sections: campaign_sections(&result, &loaded.board),
        };
        write_atomic(&path, report.render().as_bytes()).unwrap_or_else(|e| panic!("{e}"));
    };
    write();
    println!(
        "{} nets, {} faults, report {} bytes",
        loaded.board.nets().len(),
        result.faults,
        std::fs::metadata(&path).map(|m| m.len()).unwrap_or(0)
    );
    let mut g = c.benchmark_group("html_report");
    g.sample_size(10);
    g.bench_function("write, 5000-net campaign", |b| b.iter(write));
    if let Some(chromium) = browser::launch() {
        // The same open on an empty page: what the browser's tab and load cost alone.
        let blank = dir.join("blank.html");
        std::fs::write(&blank, "<!doctype html><title>blank</title><p>blank</p>")
            .unwrap_or_else(|e| panic!("{e}"));
        let blank_url = browser::file_url(&blank);
        g.bench_function("open in chromium, an empty page", |b| {
            b.iter(|| {
                let page = browser::Chromium::open(&chromium, &blank_url);
                assert_eq!(page.count("p"), 1);
                let _ = page.tab().close(false);
            })
        });
        let url = browser::file_url(&path);
        // The browser's own navigation timing: from the start of the navigation to the end
        // of the load event (the page's script has run), in ms.
        let loads = std::cell::RefCell::new(Vec::new());
        g.bench_function("open in chromium, 5000-net campaign", |b| {
            b.iter(|| {
                let started = Instant::now();
                let page = browser::Chromium::open(&chromium, &url);
                // The table script runs last: it has run once the page answers.
                assert!(page.count(".netmap a") > 0);
                page.assert_no_problems();
                let load = page.eval(
                    "(e => e.loadEventEnd - e.startTime)(performance.getEntriesByType('navigation')[0])",
                );
                loads.borrow_mut().push(load.as_f64().unwrap_or(f64::NAN));
                let _ = page.tab().close(false);
                started.elapsed()
            })
        });
        let mut loads = loads.into_inner();
        loads.sort_by(f64::total_cmp);
        if !loads.is_empty() {
            println!(
                "navigation start to load end, 5000-net campaign report: min {:.0} ms, median {:.0} ms, max {:.0} ms ({} opens)",
                loads[0],
                loads[loads.len() / 2],
                loads[loads.len() - 1],
                loads.len()
            );
        }
    }
    g.finish();
    let _ = std::fs::remove_dir_all(dir);
}

criterion_group!(benches, bench);
criterion_main!(benches);
