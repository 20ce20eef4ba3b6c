//! Defects: what production gets wrong on a board, as data in our own words.
//!
//! A `DefectSpec` is one entry of a defect list (YAML), checked against the
//! board when applied; `LoadedBoard::with_defects` builds the faulty board.
//!
//! ```yaml
//! - { short: [LB_D0, LB_D1], behaviour: wired-and }   # or wired-or; or dominant: LB_D0
//! - { open: LB_A0 }                 # the net cut from its drivers: output pins
//!                                   # go, pulls, inputs and bidirectional pins
//!                                   # (their input side) stay
//! - { open: U5.A3 }                 # one device pin lifted: alone, floating;
//!                                   # the net keeps its pulls and other pins
//! - { open: U20.y }                 # a cluster pin open
//! - { stuck: HOST_A6, value: 0 }    # a net stuck at 0 or 1
//! - { stuck: U20.a, value: 1 }      # a cluster pin stuck
//! - { broken_link: U1 }             # the TDO of U1 no longer reaches the next TDI
//! - { tdo_stuck: U3, value: 1 }
//! - { tms_open: U2 }                # reads TMS 1 through its pull-up
//! - { tck_open: U2 }                # frozen
//! - { trst_stuck: J1_MAIN }         # TRST* stuck active
//! - { wrong_device: U4, idcode: 0x22040A01 }   # or: bsdl: other.bsd
//! - { dead: U5 }                    # its TDO never drives, its pins drive nothing
//! ```

mod conflict;
mod on_board;

use std::path::PathBuf;

use serde::{Deserialize, Serialize};

use crate::board::ShortRule;
use crate::board_file::{
    assemble, pins_named, BoardErrorKind, BsdlSource, LoadedBoard, NetEdits, ShortSpec,
};

/// One defect as written.
#[derive(Clone, Debug, Default, Deserialize, Serialize, PartialEq, Eq)]
#[serde(deny_unknown_fields)]
pub struct DefectSpec {
    /// Nets shorted together.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub short: Option<Vec<String>>,
    /// How a short resolves: wired-and (default: the board's `shorts`) or wired-or.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub behaviour: Option<ShortRule>,
    /// A short where this net's drivers win.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dominant: Option<String>,
    /// A net, a device pin (`U1.17`) or a cluster pin (`U20.y`) open.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub open: Option<String>,
    /// A net or a cluster pin stuck at `value`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub stuck: Option<String>,
    /// 0 or 1, for `stuck` and `tdo_stuck`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub value: Option<u8>,
    /// The link from this device's TDO to the next TDI is broken.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub broken_link: Option<String>,
    /// This device's TDO is stuck at `value`.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tdo_stuck: Option<String>,
    /// TMS open at this device.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tms_open: Option<String>,
    /// TCK open at this device.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub tck_open: Option<String>,
    /// TRST* of this TAP port stuck active.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub trst_stuck: Option<String>,
    /// Another part fitted in this position.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub wrong_device: Option<String>,
    /// The wrong part's BSDL file (resolved by the caller's BSDL source).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub bsdl: Option<PathBuf>,
    /// The wrong part's IDCODE.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub idcode: Option<u64>,
    /// A dead device.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub dead: Option<String>,
}

impl DefectSpec {
    /// How many defect kinds (short, open, stuck, broken_link, tdo_stuck,
    /// tms_open, tck_open, trst_stuck, wrong_device, dead) this entry
    /// gives: a well-formed entry gives exactly one.
    pub(crate) fn kinds_given(&self) -> usize {
        [
            self.short.is_some(),
            self.open.is_some(),
            self.stuck.is_some(),
        ]
        .iter()
        .filter(|k| **k)
        .count()
            + self.devices_named().count()
    }

    /// The device the defect names, for the kinds that name a device (a
    /// broken link after it, a stuck TDO, TMS, TCK or TRST* at it, a wrong
    /// or dead part): at most one for a well-formed entry.
    pub fn devices_named(&self) -> impl Iterator<Item = &String> {
        self.chain_fields()
            .into_iter()
            .chain([&self.trst_stuck, &self.wrong_device])
            .flatten()
    }

    /// The device a chain or device defect names (`broken_link`,
    /// `tdo_stuck`, `tms_open`, `tck_open`, `dead`), if any.
    pub fn chain_device(&self) -> Option<&str> {
        self.chain_fields()
            .into_iter()
            .flatten()
            .next()
            .map(String::as_str)
    }

    /// The fields of the defects that cut or hold a device's place in its
    /// chain.
    fn chain_fields(&self) -> [&Option<String>; 5] {
        [
            &self.broken_link,
            &self.tdo_stuck,
            &self.tms_open,
            &self.tck_open,
            &self.dead,
        ]
    }

    /// A short description in repair words.
    pub fn describe(&self) -> String {
        if let Some(nets) = &self.short {
            let how = match (&self.dominant, self.behaviour) {
                (Some(d), _) => format!("{d} dominant"),
                (None, Some(ShortRule::WiredOr)) => "wired-OR".into(),
                (None, _) => "wired-AND".into(),
            };
            return format!("short between nets {} ({how})", nets.join(" and "));
        }
        let v = self.value.unwrap_or(0);
        let named = [
            (&self.open, "open at"),
            (&self.broken_link, "chain breaks after"),
            (&self.tms_open, "TMS open at"),
            (&self.tck_open, "TCK open at"),
            (&self.trst_stuck, "TRST* stuck active on"),
            (&self.dead, "dead device"),
        ];
        if let Some(s) = &self.stuck {
            return format!("{s} stuck at {v}");
        }
        if let Some(d) = &self.tdo_stuck {
            return format!("TDO of {d} stuck at {v}");
        }
        if let Some(d) = &self.wrong_device {
            return format!("wrong device fitted at {d}");
        }
        named
            .iter()
            .find_map(|(x, words)| x.as_ref().map(|x| format!("{words} {x}")))
            .unwrap_or_else(|| "no defect".into())
    }
}

/// A defect that does not fit the board.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
pub struct DefectError {
    /// Position in the list, from 1; 0 when no one defect is to blame (the
    /// board rebuilt with all of them failed).
    pub index: usize,
    /// What is wrong.
    pub message: String,
}

impl std::fmt::Display for DefectError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self.index {
            0 => write!(f, "the defects together: {}", self.message),
            n => write!(f, "defect {n}: {}", self.message),
        }
    }
}

impl LoadedBoard {
    /// The board with these defects, powered up. The BSDL source reads the
    /// files of wrong devices.
    ///
    /// # Errors
    /// An unknown net, pin, device, cluster or port; a value other than 0 or
    /// 1; a defect entry without exactly one kind.
    pub fn with_defects(
        &self,
        defects: &[DefectSpec],
        bsdl: &mut BsdlSource<'_>,
    ) -> Result<LoadedBoard, DefectError> {
        conflict::check_consistent(defects)?;
        let file = &self.file;
        let board = &self.board;
        let mut edits = NetEdits::default();
        let mut new_file = file.clone();
        let mut after: Vec<(usize, &DefectSpec)> = Vec::new();
        // (index, designator) of each wrong device given by its BSDL file.
        let mut replaced: Vec<(usize, &str)> = Vec::new();
        for (k, d) in defects.iter().enumerate() {
            let index = k + 1;
            let fail = |message: String| DefectError { index, message };
            if d.kinds_given() != 1 {
                return Err(fail("give exactly one of short, open, stuck, broken_link, tdo_stuck, tms_open, tck_open, trst_stuck, wrong_device, dead".into()));
            }
            let net_known = |n: &str| file.nets.contains_key(n);
            let value = || match d.value {
                Some(0) => Ok(false),
                Some(1) => Ok(true),
                Some(v) => Err(fail(format!("value {v} is not 0 or 1"))),
                None => Err(fail("needs `value: 0` or `value: 1`".into())),
            };
            let device = |name: &str| {
                board
                    .device_index(name)
                    .ok_or_else(|| fail(format!("unknown device `{name}`")))
            };
            if let Some(nets) = &d.short {
                if nets.len() < 2 {
                    return Err(fail("a short joins two or more nets".into()));
                }
                if let Some(n) = nets.iter().find(|n| !net_known(n)) {
                    return Err(fail(format!("unknown net `{n}`")));
                }
                let spec = match &d.dominant {
                    Some(dom) if nets.contains(dom) => ShortSpec::Dominant(dom.clone()),
                    Some(dom) => {
                        return Err(fail(format!(
                            "dominant net `{dom}` is not one of the shorted nets"
                        )))
                    }
                    None => ShortSpec::Wired(d.behaviour.unwrap_or(file.shorts)),
                };
                edits.shorts.push((nets.clone(), spec));
            } else if let Some(what) = &d.open {
                if net_known(what) {
                    edits.open_nets.push(what.clone());
                } else if let Some((owner, pin)) = what.split_once('.') {
                    if file.clusters.contains_key(owner) {
                        after.push((index, d));
                    } else {
                        let dev = device(owner)?;
                        let m = board.devices()[dev].model();
                        let pins = pins_named(m, &m.pin_map(), pin).ok_or_else(|| {
                            fail(format!("device {owner} has no pin or port `{pin}`"))
                        })?;
                        edits.open_pins.extend(pins.into_iter().map(|p| (dev, p)));
                    }
                } else {
                    return Err(fail(format!(
                        "unknown net `{what}` (a pin is designator.pin)"
                    )));
                }
            } else if let Some(what) = &d.stuck {
                let v = value()?;
                if net_known(what) {
                    edits.stuck.push((what.clone(), v));
                } else if what
                    .split_once('.')
                    .is_some_and(|(c, _)| file.clusters.contains_key(c))
                {
                    after.push((index, d));
                } else {
                    return Err(fail(format!("unknown net or cluster pin `{what}`")));
                }
            } else if let Some(dev) = &d.wrong_device {
                let i = device(dev)?;
                if let Some(code) = d.idcode.filter(|c| *c > u64::from(u32::MAX)) {
                    return Err(fail(format!(
                        "idcode {code:#X} is wider than 32 bits (an IDCODE register holds 32)"
                    )));
                }
                match (&d.bsdl, d.idcode) {
                    (Some(path), _) => {
                        replaced.push((index, dev.as_str()));
                        if let Some(entry) = new_file.devices.get_mut(dev) {
                            entry.bsdl = path.clone();
                            entry.package = None;
                            entry.idcode = d.idcode;
                            entry.usercode = None;
                        }
                    }
                    (None, Some(_)) => after.push((index, d)),
                    (None, None) => {
                        return Err(fail("wrong_device needs `bsdl:` or `idcode:`".into()))
                    }
                }
                let _ = i;
            } else {
                if let Some(p) = &d.trst_stuck {
                    board
                        .port_index(p)
                        .ok_or_else(|| fail(format!("unknown TAP port `{p}`")))?;
                }
                if let Some(name) = d.chain_device() {
                    device(name)?;
                }
                if d.tdo_stuck.is_some() {
                    value()?;
                }
                after.push((index, d));
            }
        }
        // The board as designed assembled, and the net edits were checked
        // above: a rebuild that fails is a replaced BSDL file's doing.
        let mut loaded = assemble(
            new_file,
            &self.source,
            &self.path,
            bsdl,
            &edits,
            &self.known_models(),
        )
        .map_err(|e| {
            let named = match &*e.kind {
                BoardErrorKind::Bsdl { device, .. }
                | BoardErrorKind::Device { device, .. }
                | BoardErrorKind::UnknownPin { device, .. }
                | BoardErrorKind::NotAnOutput { device, .. } => Some(device.as_str()),
                _ => None,
            };
            let index = replaced
                .iter()
                .find(|(_, d)| Some(*d) == named)
                .or(replaced.first())
                .map_or(0, |(i, _)| *i);
            DefectError {
                index,
                message: e.to_string(),
            }
        })?;
        let b = &mut loaded.board;
        for (index, d) in after {
            on_board::apply(b, index, d)?;
        }
        b.refresh();
        Ok(loaded)
    }
}
