//! The browser test support itself, on a page written here: it loads, its elements are found,
//! a click and typing reach its script, and its console errors and exceptions are caught.

#[path = "support/browser.rs"]
mod browser;

use std::io::Write;

fn page_file(html: &str) -> tempfile::NamedTempFile {
    let mut f = tempfile::Builder::new().suffix(".html").tempfile().unwrap();
    f.write_all(html.as_bytes()).unwrap();
    f
}

#[test]
#[cfg_attr(
    not(has_chromium),
    ignore = "chromium not found on PATH (Debian package chromium)"
)]
fn a_clean_page_loads_and_answers_queries_clicks_and_typing() {
    let file = page_file(
        r#"<!doctype html><html><head><meta charset="utf-8"><title>t</title></head><body>
<ul><li class="n">one</li><li class="n">two</li><li class="n" hidden>three</li></ul>
<button id="b" onclick="document.getElementById('out').textContent = 'clicked'">go</button>
<input id="i" oninput="document.getElementById('echo').textContent = this.value">
<p id="out"></p><p id="echo"></p></body></html>"#,
    );
    let Some(page) = browser::open(&browser::file_url(file.path())) else {
        return;
    };
    assert_eq!(page.count("li.n"), 3);
    assert_eq!(page.visible_count("li.n"), 2);
    assert_eq!(page.texts("li.n"), ["one", "two", "three"]);
    assert_eq!(page.attrs("input", "id"), ["i"]);
    page.click("#b");
    assert_eq!(page.texts("#out"), ["clicked"]);
    page.type_into("#i", "TDO");
    assert_eq!(page.texts("#echo"), ["TDO"]);
    assert_eq!(page.eval("1 + 2"), serde_json::json!(3));
    assert!(page.fetched_resources().is_empty());
    let shot = page.screenshot("browser_support_clean");
    let png = std::fs::read(&shot).unwrap();
    // The PNG signature (RFC 2083 section 3.1).
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    page.assert_no_problems();
}

#[test]
#[cfg_attr(
    not(has_chromium),
    ignore = "chromium not found on PATH (Debian package chromium)"
)]
fn console_errors_and_uncaught_exceptions_are_caught() {
    let file = page_file(
        r#"<!doctype html><html><body><script>
console.error("bad bit", 7);
window.setTimeout(() => { throw new Error("no such net"); }, 0);
</script></body></html>"#,
    );
    let Some(page) = browser::open(&browser::file_url(file.path())) else {
        return;
    };
    // The timer fires after the load; wait for it through the page itself.
    page.eval("new Promise(r => setTimeout(r, 50))");
    let problems = page.problems();
    assert!(
        problems.iter().any(|p| p.contains("bad bit")),
        "{problems:?}"
    );
    assert!(
        problems.iter().any(|p| p.contains("no such net")),
        "{problems:?}"
    );
}
