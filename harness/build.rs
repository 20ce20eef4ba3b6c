//! Embeds the bundled demo (scenarios/) in the binary, so `boardtwin run`
//! with no path works from any folder on a fresh machine; and finds the
//! outside tools the cross-check tests need, so a test whose tool is missing
//! shows as ignored (`has_sigrok_cli`, `has_chromium`, `has_gnu_parallel`).

use std::path::{Path, PathBuf};

fn walk(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for e in entries.flatten() {
        let p = e.path();
        if p.is_dir() {
            walk(&p, out);
        } else {
            out.push(p);
        }
    }
}

/// The outside tools of the cross-check tests: (cfg name, program on PATH).
const TOOLS: &[(&str, &str)] = &[
    ("has_sigrok_cli", "sigrok-cli"),
    ("has_chromium", "chromium"),
    ("has_gnu_parallel", "parallel"),
];

/// Sets one cfg per outside tool found on PATH. Under `CI=true` or
/// `BOARDTWIN_REQUIRE_TOOLS=1` every cfg is set, so a test whose tool is
/// missing runs and fails (tests/support/tools.rs) instead of being ignored.
fn probe_tools() {
    for (cfg, _) in TOOLS {
        println!("cargo:rustc-check-cfg=cfg({cfg})");
    }
    for var in [
        "PATH",
        "CI",
        "BOARDTWIN_REQUIRE_TOOLS",
        "BOARDTWIN_CHROMIUM",
    ] {
        println!("cargo:rerun-if-env-changed={var}");
    }
    let required = std::env::var("CI").is_ok_and(|v| v == "true" || v == "1")
        || std::env::var("BOARDTWIN_REQUIRE_TOOLS").is_ok_and(|v| v == "1");
    let dirs: Vec<PathBuf> = std::env::var_os("PATH")
        .map(|p| std::env::split_paths(&p).collect())
        .unwrap_or_default();
    for (cfg, tool) in TOOLS {
        let chosen = (*tool == "chromium")
            .then(|| std::env::var_os("BOARDTWIN_CHROMIUM").map(PathBuf::from))
            .flatten();
        let found = chosen.or_else(|| dirs.iter().map(|d| d.join(tool)).find(|p| p.is_file()));
        match &found {
            // Removing the tool makes the test fail rather than skip until the next build.
            Some(p) => println!("cargo:rerun-if-changed={}", p.display()),
            // Installing it later changes a PATH folder: probe again then.
            None => {
                for d in dirs.iter().filter(|d| d.is_dir()) {
                    println!("cargo:rerun-if-changed={}", d.display());
                }
            }
        }
        if found.is_some() || required {
            println!("cargo:rustc-cfg={cfg}");
        }
    }
}

fn main() {
    probe_tools();
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios");
    println!("cargo:rerun-if-changed={}", root.display());
    let mut files = Vec::new();
    walk(&root, &mut files);
    files.sort();
    let mut code = String::from("/// The bundled demo: (path below scenarios/, contents).\npub static FILES: &[(&str, &[u8])] = &[\n");
    for f in &files {
        if let (Ok(rel), Ok(abs)) = (f.strip_prefix(&root), f.canonicalize()) {
            println!("cargo:rerun-if-changed={}", f.display());
            code.push_str(&format!(
                "    ({:?}, include_bytes!({:?})),\n",
                rel.display().to_string(),
                abs.display().to_string()
            ));
        }
    }
    code.push_str("];\n");
    let out =
        PathBuf::from(std::env::var("OUT_DIR").unwrap_or_else(|_| ".".into())).join("embedded.rs");
    if let Err(e) = std::fs::write(&out, code) {
        println!("cargo:warning=cannot write {}: {e}", out.display());
    }
}
