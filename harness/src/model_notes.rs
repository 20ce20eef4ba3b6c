//! What a board's BSDL files say that the model does not simulate: the device makers' design warnings, and the attributes kept only by name.
//!
//! A DESIGN_WARNING is the device maker's instruction to the test engineer
//! (IEEE 1149.1-2001 Annex B, from memory): the commands that use a board
//! show each one once per device. Attributes the model does not use are
//! said once per file, at `-v`, with the file's path written without `..`
//! steps, so a path under a temporary folder can be cut off by the caller.

use std::fmt;
use std::path::{Component, Path, PathBuf};

use serde::Serialize;
use virtual_board::Board;

/// One device maker's DESIGN_WARNING and the devices of the board it is for.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct DesignWarning {
    /// The devices of that part, by designator, in board order.
    pub devices: Vec<String>,
    /// The part (BSDL entity).
    pub entity: String,
    /// The warning's text, white space collapsed.
    pub text: String,
}

impl fmt::Display for DesignWarning {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(
            f,
            "design warning for {} ({}): {}",
            self.devices.join(", "),
            self.entity,
            self.text
        )
    }
}

/// The design warnings of a board's devices: one per part and text, naming
/// every device of that part, in the order the devices are listed.
pub fn design_warnings(board: &Board) -> Vec<DesignWarning> {
    let mut out: Vec<DesignWarning> = Vec::new();
    for device in board.devices() {
        let m = device.model();
        let Some(text) = &m.design_warning else {
            continue;
        };
        let designator = device.designator().to_string();
        match out
            .iter_mut()
            .find(|w| w.entity == m.entity && &w.text == text)
        {
            Some(w) => w.devices.push(designator),
            None => out.push(DesignWarning {
                devices: vec![designator],
                entity: m.entity.clone(),
                text: text.clone(),
            }),
        }
    }
    out
}

/// Merges `more` into `all`: the same part and text once, its devices joined.
pub fn merge_design_warnings(all: &mut Vec<DesignWarning>, more: &[DesignWarning]) {
    for w in more {
        match all
            .iter_mut()
            .find(|a| a.entity == w.entity && a.text == w.text)
        {
            Some(a) => {
                for d in &w.devices {
                    if !a.devices.contains(d) {
                        a.devices.push(d.clone());
                    }
                }
            }
            None => all.push(w.clone()),
        }
    }
}

/// The attributes of one BSDL file that the model keeps only by name.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct UnmodelledAttributes {
    /// The BSDL file, without `.` and `..` steps (empty when the model has no file).
    pub file: PathBuf,
    /// The part (BSDL entity).
    pub entity: String,
    /// The attributes, in file order.
    pub attributes: Vec<String>,
}

impl UnmodelledAttributes {
    /// The line to log, with the file shown relative to `root` when it lies under it.
    pub fn line(&self, root: Option<&Path>) -> String {
        let file = root
            .and_then(|r| self.file.strip_prefix(tidy_path(r)).ok())
            .unwrap_or(&self.file);
        format!(
            "{}: {} attributes not modelled, kept by name: {}",
            file.display(),
            self.entity,
            self.attributes.join(", ")
        )
    }
}

/// One entry per BSDL file of the board with attributes the model does not use.
pub fn unmodelled_attributes(board: &Board) -> Vec<UnmodelledAttributes> {
    let mut out: Vec<UnmodelledAttributes> = Vec::new();
    for device in board.devices() {
        let m = device.model();
        if m.unmodelled_attributes.is_empty() {
            continue;
        }
        let file = m.source.as_deref().map(tidy_path).unwrap_or_default();
        if !out.iter().any(|u| u.file == file && u.entity == m.entity) {
            out.push(UnmodelledAttributes {
                file,
                entity: m.entity.clone(),
                attributes: m.unmodelled_attributes.clone(),
            });
        }
    }
    out
}

/// `path` with `.` steps dropped and each `..` taking away the step before it
/// (by the text alone, as a board file names its BSDL files).
pub fn tidy_path(path: &Path) -> PathBuf {
    let mut out = PathBuf::new();
    for c in path.components() {
        match c {
            Component::CurDir => {}
            Component::ParentDir => {
                if matches!(out.components().next_back(), Some(Component::Normal(_))) {
                    out.pop();
                } else {
                    out.push("..");
                }
            }
            other => out.push(other),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_lose_their_dot_steps() {
        let t = |p: &str| tidy_path(Path::new(p)).display().to_string();
        assert_eq!(
            t("scenarios/boards/../devices/a.bsd"),
            "scenarios/devices/a.bsd"
        );
        assert_eq!(t("./a/./b/../../c.bsd"), "c.bsd");
        assert_eq!(t("../x/../y.bsd"), "../y.bsd");
        assert_eq!(
            t("/unpacked/cases/../boards/../devices/a.bsd"),
            "/unpacked/devices/a.bsd"
        );
    }

    #[test]
    fn a_warning_seen_twice_is_merged() {
        let w = |d: &str, t: &str| DesignWarning {
            devices: vec![d.into()],
            entity: "E".into(),
            text: t.into(),
        };
        let mut all = vec![w("U1", "a")];
        merge_design_warnings(&mut all, &[w("U1", "a"), w("U2", "a"), w("U3", "b")]);
        assert_eq!(
            all,
            [
                DesignWarning {
                    devices: vec!["U1".into(), "U2".into()],
                    entity: "E".into(),
                    text: "a".into()
                },
                w("U3", "b")
            ]
        );
        assert_eq!(all[0].to_string(), "design warning for U1, U2 (E): a");
    }

    #[test]
    fn the_unmodelled_line_is_relative_to_the_root() {
        let u = UnmodelledAttributes {
            file: PathBuf::from("/unpacked/demo/devices/a.bsd"),
            entity: "A".into(),
            attributes: vec!["X".into(), "Y".into()],
        };
        assert_eq!(
            u.line(Some(Path::new("/unpacked/demo/cases/.."))),
            "devices/a.bsd: A attributes not modelled, kept by name: X, Y"
        );
        assert_eq!(
            u.line(None),
            "/unpacked/demo/devices/a.bsd: A attributes not modelled, kept by name: X, Y"
        );
    }
}
