//! Embeds the bundled demo (scenarios/) in the binary, so `boardtwin run`
//! with no path works from any folder on a fresh machine.

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

fn main() {
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
