//! The trainee's page and its JSON calls: the board (TAP ports, devices,
//! nets), the programs on offer, a run (bundled, generated or uploaded) on
//! the trainee's own desk with failing bits placed and hazards said as what
//! they would do on a real board, and the submission and grade.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::path::{Path, PathBuf};
use std::sync::Arc;

use serde_json::{json, Value};
use virtual_board::{DefectSpec, LoadedBoard};

use super::class::{refuse_name, Class};
use super::http::{Handler, HttpRequest, HttpResponse};
use super::safety::{on_a_real_board, SAFETY};
use crate::campaign::electrical_nets;
use crate::generate::{infrastructure_program, interconnect_test, Method};
use crate::program::native::{load_program, parse_native};
use crate::program::Program;
use crate::run::failures_of;

/// The page (HTML, CSS and script inline; it fetches nothing from outside).
pub const PAGE: &str = include_str!("page.html");

/// Failing bits a run reply lists at most.
const FAILURES_SHOWN: usize = 200;

/// The page's server side.
#[derive(Debug)]
pub struct Web {
    class: Arc<Class>,
    design: LoadedBoard,
    programs: Vec<(String, Program)>,
}

impl Web {
    /// The page for `class` on `design`, offering the generated
    /// infrastructure and interconnect tests and every `.yaml` and `.svf`
    /// program in `bundled` that loads on the board.
    pub fn new(class: Arc<Class>, design: LoadedBoard, bundled: Option<&Path>) -> Web {
        let mut programs = vec![(
            "generated: infrastructure".to_string(),
            infrastructure_program(&design.board),
        )];
        if let Ok(test) = interconnect_test(&design.board, Method::ModifiedCounting) {
            if let Ok(p) = test.program(&design) {
                programs.push(("generated: interconnect (modified counting)".into(), p));
            }
        }
        if let Some(dir) = bundled {
            let mut files: Vec<PathBuf> = std::fs::read_dir(dir)
                .map(|d| d.filter_map(|e| e.ok().map(|e| e.path())).collect())
                .unwrap_or_default();
            files.sort();
            for f in files {
                let ext = f.extension().and_then(|e| e.to_str()).unwrap_or("");
                if !matches!(ext, "yaml" | "svf") {
                    continue;
                }
                match load_program(&f, &design, None) {
                    Ok(p) => programs.push((
                        format!(
                            "bundled: {}",
                            f.file_name()
                                .map(|n| n.to_string_lossy())
                                .unwrap_or_default()
                        ),
                        p,
                    )),
                    Err(e) => tracing::warn!("{} is not offered: {e}", f.display()),
                }
            }
        }
        Web {
            class,
            design,
            programs,
        }
    }

    fn board(&self) -> Value {
        let b = &self.design.board;
        let ports: Vec<Value> = b
            .ports()
            .iter()
            .map(|p| {
                json!({
                    "name": p.name,
                    "devices": p.chain.iter().map(|&d| {
                        let dev = &b.devices()[d];
                        json!({"designator": dev.designator(), "part": dev.model().entity})
                    }).collect::<Vec<_>>(),
                })
            })
            .collect();
        let nets: Vec<String> = electrical_nets(&self.design)
            .into_iter()
            .map(|n| n.name)
            .collect();
        json!({
            "board": b.name(),
            "ports": ports,
            "nets": nets,
            "programs": self.programs.iter().map(|(n, _)| n).collect::<Vec<_>>(),
            "safety": SAFETY,
        })
    }

    fn run(&self, body: &Value) -> Result<Value, String> {
        let trainee = trainee_of(body)?;
        let uploaded;
        let program = match (
            body.get("program").and_then(Value::as_str),
            body.get("upload"),
        ) {
            (Some(name), _) => self
                .programs
                .iter()
                .find(|(n, _)| n == name)
                .map(|(_, p)| p)
                .ok_or_else(|| format!("no program named `{}`", virtual_board::clip(name)))?,
            (None, Some(up)) => {
                uploaded = self.upload(up)?;
                &uploaded
            }
            _ => return Err("name a `program` or give an `upload`".into()),
        };
        let report = self.class.run_program(&trainee, program);
        let failing: Vec<Value> = report
            .scans
            .iter()
            .flat_map(failures_of)
            .take(FAILURES_SHOWN)
            .map(|f| {
                json!({
                    "port": f.tap_port, "device": f.device, "register": f.register,
                    "cell": f.register_bit, "function": f.function, "pin": f.pin, "net": f.net,
                    "expected": u8::from(f.expected), "captured": u8::from(f.captured),
                })
            })
            .collect();
        let hazards: Vec<Value> = report
            .hazards
            .iter()
            .map(|h| {
                let kind = h.event.kind();
                json!({"kind": kind, "on_a_real_board": on_a_real_board(kind), "event": h.event})
            })
            .collect();
        Ok(json!({
            "program": report.program,
            "passed": report.passed(),
            "scans": report.scans.len(),
            "failed_scans": report.failed_scans(),
            "tck": report.tck_cycles,
            "error": report.error,
            "failing": failing,
            "hazards": hazards,
        }))
    }

    /// An uploaded program: `{"text", "svf": bool, "port"}`.
    fn upload(&self, up: &Value) -> Result<Program, String> {
        let text = up
            .get("text")
            .and_then(Value::as_str)
            .ok_or("an upload needs `text`")?;
        let svf = up.get("svf").and_then(Value::as_bool).unwrap_or(false);
        if !svf {
            return parse_native(text, Path::new("uploaded.yaml"), &self.design)
                .map_err(|e| e.to_string());
        }
        // SVF goes through the file loader (its port from `port` or the
        // file's header), from a private temporary file removed at once.
        let port = up.get("port").and_then(Value::as_str);
        let mut path = std::env::temp_dir();
        let unique: u64 = getrandom::u64().unwrap_or(0);
        path.push(format!("boardtwin-upload-{unique:016x}.svf"));
        std::fs::write(&path, text).map_err(|e| format!("cannot keep the upload: {e}"))?;
        let loaded = load_program(&path, &self.design, port).map_err(|e| {
            e.to_string()
                .replace(&path.display().to_string(), "uploaded.svf")
        });
        let _ = std::fs::remove_file(&path);
        loaded
    }

    fn submit(&self, body: &Value) -> Result<Value, String> {
        let trainee = trainee_of(body)?;
        let defects: Vec<DefectSpec> =
            serde_json::from_value(body.get("defects").cloned().unwrap_or(Value::Null))
                .map_err(|e| format!("`defects` is not a defect list: {e}"))?;
        if defects.is_empty() {
            return Err("a diagnosis names at least one defect".into());
        }
        self.class
            .submit_value(&trainee, &defects)
            .map_err(|e| e.to_string())
    }
}

fn trainee_of(body: &Value) -> Result<String, String> {
    let name = body
        .get("trainee")
        .and_then(Value::as_str)
        .unwrap_or("")
        .trim()
        .to_string();
    match refuse_name(&name) {
        Some(why) => Err(why),
        None => Ok(name),
    }
}

impl Handler for Web {
    fn handle(&self, request: &HttpRequest) -> HttpResponse {
        let path = request.path.split('?').next().unwrap_or("");
        let body = || {
            serde_json::from_slice::<Value>(&request.body)
                .map_err(|e| format!("the body is not JSON: {e}"))
        };
        let result = match (request.method.as_str(), path) {
            ("GET", "/") => {
                return HttpResponse {
                    status: 200,
                    content_type: "text/html; charset=utf-8",
                    body: PAGE.as_bytes().to_vec(),
                }
            }
            ("GET", "/api/board") => Ok(self.board()),
            ("POST", "/api/run") => body().and_then(|b| self.run(&b)),
            ("POST", "/api/submit") => body().and_then(|b| self.submit(&b)),
            _ => return HttpResponse::json(404, &json!({"error": "no such page"})),
        };
        match result {
            Ok(v) => HttpResponse::json(200, &v),
            Err(e) => HttpResponse::json(400, &json!({"error": e})),
        }
    }
}
