//! A real headless Chromium for page tests: launch it, open a `file://` or `http://` page,
//! collect every console error, uncaught exception and error log entry, query and click
//! elements, type, evaluate JavaScript and keep a screenshot under `target/test-artifacts/`.
//!
//! The browser is the system's `chromium` (the Debian package of that name) driven over the
//! DevTools protocol; nothing is ever downloaded. Set `BOARDTWIN_CHROMIUM` to use another
//! binary. When no browser is found the test is skipped with a notice on stderr, or fails when
//! `BOARDTWIN_REQUIRE_TOOLS=1` or `CI=true`, like every other outside-tool check; page tests
//! also carry `#[cfg_attr(not(has_chromium), ignore = "...")]` so they show as ignored.
//!
//! Include it with `#[path = "support/browser.rs"] mod browser;`; it brings its own copy of
//! `support/tools.rs`.
#![allow(dead_code)]

#[path = "tools.rs"]
mod tools;

use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};
use std::time::Duration;

use headless_chrome::protocol::cdp::types::Event;
use headless_chrome::protocol::cdp::{Page as Cdp, Runtime};
use headless_chrome::{Browser, LaunchOptions, Tab};

/// Names another browser binary instead of `chromium` on PATH.
pub const CHROMIUM_ENV: &str = "BOARDTWIN_CHROMIUM";

/// The window every page is opened in, in CSS pixels.
pub const WINDOW: (u32, u32) = (1280, 1000);

/// How long a page may take to load or an element to appear.
const TIMEOUT: Duration = Duration::from_secs(30);

/// A running headless browser. Dropping it ends the browser process.
pub struct Chromium {
    browser: Browser,
}

/// One open page, with the problems its scripts reported since it was opened.
pub struct Page {
    tab: Arc<Tab>,
    problems: Arc<Mutex<Vec<String>>>,
    // Keeps the browser alive as long as the page.
    _browser: Arc<Chromium>,
}

/// Launches headless Chromium, or returns `None` after printing a skip notice (the test
/// should return early). Panics when the browser is found but will not start.
pub fn launch() -> Option<Arc<Chromium>> {
    let path = match std::env::var_os(CHROMIUM_ENV) {
        Some(p) => PathBuf::from(p),
        None => tools::require_tool(
            "chromium",
            "the chromium package (apt-get install chromium)",
        )?,
    };
    let options = LaunchOptions::default_builder()
        .path(Some(path.clone()))
        .headless(true)
        // Chromium's sandbox refuses to run as root; a test browser only opens local pages.
        .sandbox(!running_as_root())
        .window_size(Some(WINDOW))
        .idle_browser_timeout(Duration::from_secs(120))
        .build()
        .expect("browser launch options");
    let browser = Browser::new(options)
        .unwrap_or_else(|e| panic!("{} would not start: {e:#}", path.display()));
    Some(Arc::new(Chromium { browser }))
}

/// Launches a browser and opens `url` in it: the usual one-line start of a page test.
pub fn open(url: &str) -> Option<Page> {
    launch().map(|chromium| Chromium::open(&chromium, url))
}

/// The `file://` URL of a local file (made absolute first).
pub fn file_url(path: &Path) -> String {
    let abs = std::fs::canonicalize(path)
        .unwrap_or_else(|e| panic!("{} cannot be opened: {e}", path.display()));
    let mut url = String::from("file://");
    for byte in abs.to_string_lossy().bytes() {
        match byte {
            b'A'..=b'Z' | b'a'..=b'z' | b'0'..=b'9' | b'/' | b'-' | b'_' | b'.' | b'~' => {
                url.push(byte as char)
            }
            _ => url.push_str(&format!("%{byte:02X}")),
        }
    }
    url
}

/// `target/test-artifacts/` (under `CARGO_TARGET_DIR` when set), created on demand.
pub fn artifact_dir() -> PathBuf {
    let target = std::env::var_os("CARGO_TARGET_DIR")
        .map(PathBuf::from)
        .unwrap_or_else(|| {
            Path::new(env!("CARGO_MANIFEST_DIR"))
                .join("..")
                .join("target")
        });
    let dir = target.join("test-artifacts");
    std::fs::create_dir_all(&dir)
        .unwrap_or_else(|e| panic!("cannot create {}: {e}", dir.display()));
    dir
}

impl Chromium {
    /// Opens `url` in a new tab and waits for it to load. Console errors, uncaught exceptions
    /// and error log entries (a failed load, a blocked fetch) are collected from the start.
    pub fn open(this: &Arc<Chromium>, url: &str) -> Page {
        let tab = this.browser.new_tab().expect("a new browser tab");
        tab.set_default_timeout(TIMEOUT);
        let problems = Arc::new(Mutex::new(Vec::new()));
        let sink = Arc::clone(&problems);
        tab.add_event_listener(Arc::new(move |event: &Event| {
            if let Some(problem) = problem_of(event) {
                sink.lock().expect("problem list").push(problem);
            }
        }))
        .expect("an event listener");
        tab.enable_runtime().expect("the Runtime domain");
        tab.enable_log().expect("the Log domain");
        tab.navigate_to(url)
            .and_then(|t| t.wait_until_navigated())
            .unwrap_or_else(|e| panic!("{url} did not load: {e:#}"));
        Page {
            tab,
            problems,
            _browser: Arc::clone(this),
        }
    }
}

/// The text of a console error, an uncaught exception or an error log entry; `None` for
/// anything else.
fn problem_of(event: &Event) -> Option<String> {
    match event {
        Event::RuntimeExceptionThrown(e) => {
            let d = &e.params.exception_details;
            let what = d
                .exception
                .as_ref()
                .and_then(|x| x.description.clone())
                .unwrap_or_else(|| d.text.clone());
            Some(format!(
                "uncaught exception at {}:{}: {what}",
                d.line_number, d.column_number
            ))
        }
        Event::RuntimeConsoleAPICalled(e)
            if matches!(
                e.params.Type,
                Runtime::ConsoleAPICalledEventTypeOption::Error
                    | Runtime::ConsoleAPICalledEventTypeOption::Assert
            ) =>
        {
            let args: Vec<String> = e
                .params
                .args
                .iter()
                .map(|a| {
                    a.value
                        .as_ref()
                        .map(|v| v.to_string())
                        .or_else(|| a.description.clone())
                        .unwrap_or_default()
                })
                .collect();
            Some(format!("console.error: {}", args.join(" ")))
        }
        Event::LogEntryAdded(e)
            if matches!(
                e.params.entry.level,
                headless_chrome::protocol::cdp::Log::LogEntryLevel::Error
            ) =>
        {
            let entry = &e.params.entry;
            Some(format!(
                "log error: {} {}",
                entry.text,
                entry.url.clone().unwrap_or_default()
            ))
        }
        _ => None,
    }
}

fn running_as_root() -> bool {
    #[cfg(target_os = "linux")]
    {
        use std::os::unix::fs::MetadataExt;
        // The owner of the process's own /proc entry is its effective user.
        std::fs::metadata("/proc/self").is_ok_and(|m| m.uid() == 0)
    }
    #[cfg(not(target_os = "linux"))]
    {
        false
    }
}

impl Page {
    /// The underlying DevTools tab, for anything this module does not wrap.
    pub fn tab(&self) -> &Tab {
        &self.tab
    }

    /// Console errors, uncaught exceptions and error log entries seen so far.
    pub fn problems(&self) -> Vec<String> {
        self.problems.lock().expect("problem list").clone()
    }

    /// Fails the test when the page reported any problem so far.
    pub fn assert_no_problems(&self) {
        let problems = self.problems();
        assert!(
            problems.is_empty(),
            "the page reported {} problem(s):\n{}",
            problems.len(),
            problems.join("\n")
        );
    }

    /// The URLs of every resource the page fetched after its own document (images, style
    /// sheets, scripts, fetch and XHR calls), from the page's resource timing entries.
    pub fn fetched_resources(&self) -> Vec<String> {
        let v = self.eval("performance.getEntriesByType('resource').map(e => e.name)");
        strings(&v)
    }

    /// Evaluates `expression` in the page and returns its value as JSON. Panics, with the
    /// exception text, when the expression throws.
    pub fn eval(&self, expression: &str) -> serde_json::Value {
        let wrapped = format!("JSON.stringify(({expression}) ?? null)");
        let reply = self
            .tab
            .call_method(Runtime::Evaluate {
                expression: wrapped,
                return_by_value: Some(true),
                await_promise: Some(true),
                object_group: None,
                include_command_line_api: None,
                silent: None,
                context_id: None,
                generate_preview: None,
                user_gesture: Some(true),
                throw_on_side_effect: None,
                timeout: None,
                disable_breaks: None,
                repl_mode: None,
                allow_unsafe_eval_blocked_by_csp: None,
                unique_context_id: None,
                serialization_options: None,
            })
            .unwrap_or_else(|e| panic!("evaluating {expression}: {e:#}"));
        if let Some(d) = reply.exception_details {
            let what = d.exception.and_then(|x| x.description).unwrap_or(d.text);
            panic!("evaluating {expression} threw: {what}");
        }
        let text = reply
            .result
            .value
            .and_then(|v| v.as_str().map(str::to_owned))
            .unwrap_or_else(|| "null".to_owned());
        serde_json::from_str(&text).expect("JSON.stringify gives JSON")
    }

    /// How many elements match the CSS `selector`.
    pub fn count(&self, selector: &str) -> usize {
        let v = self.eval(&format!(
            "document.querySelectorAll({}).length",
            js_string(selector)
        ));
        v.as_u64().expect("a count") as usize
    }

    /// The trimmed text content of every element matching `selector`, in document order.
    pub fn texts(&self, selector: &str) -> Vec<String> {
        let v = self.eval(&format!(
            "Array.from(document.querySelectorAll({}), e => e.textContent.trim())",
            js_string(selector)
        ));
        strings(&v)
    }

    /// The value of attribute `name` on every element matching `selector` (empty when absent).
    pub fn attrs(&self, selector: &str, name: &str) -> Vec<String> {
        let v = self.eval(&format!(
            "Array.from(document.querySelectorAll({}), e => e.getAttribute({}) ?? '')",
            js_string(selector),
            js_string(name)
        ));
        strings(&v)
    }

    /// How many elements matching `selector` are displayed (not `display: none`, not hidden).
    pub fn visible_count(&self, selector: &str) -> usize {
        let v = self.eval(&format!(
            "Array.from(document.querySelectorAll({})).filter(e => e.getClientRects().length > 0).length",
            js_string(selector)
        ));
        v.as_u64().expect("a count") as usize
    }

    /// Clicks the first element matching `selector` with a real mouse event at its middle.
    pub fn click(&self, selector: &str) {
        self.tab
            .wait_for_element(selector)
            .and_then(|e| e.click().map(|_| ()))
            .unwrap_or_else(|e| panic!("clicking {selector}: {e:#}"));
    }

    /// Focuses the first element matching `selector` and types `text` into it, key by key.
    pub fn type_into(&self, selector: &str, text: &str) {
        self.tab
            .wait_for_element(selector)
            .and_then(|e| e.type_into(text).map(|_| ()))
            .unwrap_or_else(|e| panic!("typing into {selector}: {e:#}"));
    }

    /// Saves a PNG of the whole page (beyond the window too) as
    /// `target/test-artifacts/<name>.png` and returns its path.
    pub fn screenshot(&self, name: &str) -> PathBuf {
        let png = self
            .tab
            .call_method(Cdp::CaptureScreenshot {
                format: Some(Cdp::CaptureScreenshotFormatOption::Png),
                quality: None,
                clip: None,
                from_surface: Some(true),
                capture_beyond_viewport: Some(true),
                optimize_for_speed: None,
            })
            .map(|r| r.data)
            .unwrap_or_else(|e| panic!("screenshot {name}: {e:#}"));
        let bytes = decode_base64(&png);
        let path = artifact_dir().join(format!("{name}.png"));
        std::fs::write(&path, bytes)
            .unwrap_or_else(|e| panic!("cannot write {}: {e}", path.display()));
        path
    }
}

/// A JavaScript string literal holding `s`.
fn js_string(s: &str) -> String {
    serde_json::to_string(s).expect("a string is JSON")
}

fn strings(v: &serde_json::Value) -> Vec<String> {
    v.as_array()
        .expect("an array")
        .iter()
        .map(|s| s.as_str().unwrap_or_default().to_owned())
        .collect()
}

/// Standard base64 (RFC 4648 section 4), as the DevTools protocol sends binary data.
fn decode_base64(text: &str) -> Vec<u8> {
    let value = |c: u8| -> u32 {
        match c {
            b'A'..=b'Z' => u32::from(c - b'A'),
            b'a'..=b'z' => u32::from(c - b'a') + 26,
            b'0'..=b'9' => u32::from(c - b'0') + 52,
            b'+' => 62,
            b'/' => 63,
            _ => panic!("not base64: {c}"),
        }
    };
    let clean: Vec<u8> = text.bytes().filter(|c| !c.is_ascii_whitespace()).collect();
    let mut out = Vec::with_capacity(clean.len() / 4 * 3);
    for chunk in clean.chunks(4) {
        let data: Vec<u8> = chunk.iter().copied().filter(|&c| c != b'=').collect();
        let mut acc = 0u32;
        for &c in &data {
            acc = acc << 6 | value(c);
        }
        acc <<= 6 * (4 - data.len() as u32);
        let bytes = [(acc >> 16) as u8, (acc >> 8) as u8, acc as u8];
        out.extend_from_slice(&bytes[..data.len().saturating_sub(1)]);
    }
    out
}
