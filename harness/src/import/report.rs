//! `ImportReport`: what `boardtwin import` says — scan devices and chains
//! found, nets by scan access, parts left unmodelled, every guess and warning.

use std::fmt;

use serde::Serialize;

use super::part_clusters::PlannedCluster;
use super::plan::{ImportPlan, PlannedPort, PlannedPull, PlannedRail, UnmodelledPart};
use crate::board_summary::BoardSummary;
use crate::report::table::TextTable;

/// One scan device found.
#[derive(Clone, Debug, Serialize)]
pub struct FoundDevice {
    /// Designator.
    pub designator: String,
    /// BSDL entity.
    pub entity: String,
    /// Package used.
    pub package: String,
    /// Where its BSDL file came from.
    pub origin: String,
}

/// The import report.
#[derive(Clone, Debug, Serialize)]
pub struct ImportReport {
    /// Board name.
    pub board: String,
    /// Netlist nets and pin records read.
    pub netlist_nets: usize,
    /// Pin records read.
    pub netlist_pins: usize,
    /// Scan devices.
    pub devices: Vec<FoundDevice>,
    /// TAP ports and their chains.
    pub chains: Vec<PlannedPort>,
    /// Rails.
    pub rails: Vec<PlannedRail>,
    /// Pulls.
    pub pulls: Vec<PlannedPull>,
    /// Nets of the board file.
    pub nets: usize,
    /// Nets a scan cell drives and reads.
    pub nets_driven_and_read: usize,
    /// Nets a scan cell drives only.
    pub nets_driven_only: usize,
    /// Nets a scan cell reads only.
    pub nets_read_only: usize,
    /// Nets no scan cell reaches (rails excluded).
    pub nets_without_scan_access: Vec<String>,
    /// Clusters made from the part table.
    pub clusters: Vec<PlannedCluster>,
    /// Parts left unmodelled, most nets first.
    pub unmodelled: Vec<UnmodelledPart>,
    /// Every guess made.
    pub guesses: Vec<String>,
    /// Warnings, each placed.
    pub warnings: Vec<String>,
}

impl ImportReport {
    /// The report of `plan`, with scan access read from the board it gave.
    pub fn new(
        plan: &ImportPlan,
        netlist_nets: usize,
        netlist_pins: usize,
        summary: &BoardSummary,
    ) -> ImportReport {
        ImportReport {
            board: plan.name.clone(),
            netlist_nets,
            netlist_pins,
            devices: plan
                .devices
                .iter()
                .map(|d| FoundDevice {
                    designator: d.designator.clone(),
                    entity: d.model.entity.clone(),
                    package: d.model.package.clone(),
                    origin: d.origin.clone(),
                })
                .collect(),
            chains: plan.ports.clone(),
            rails: plan.rails.clone(),
            pulls: plan.pulls.values().cloned().collect(),
            nets: summary.nets,
            nets_driven_and_read: summary.nets_driven_and_read,
            nets_driven_only: summary.nets_driven_only,
            nets_read_only: summary.nets_read_only,
            nets_without_scan_access: summary.nets_without_scan_access.clone(),
            clusters: plan.clusters.clone(),
            unmodelled: plan.unmodelled.clone(),
            guesses: plan.guesses.clone(),
            warnings: plan.warnings.iter().map(ToString::to_string).collect(),
        }
    }
}

impl fmt::Display for ImportReport {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(
            f,
            "board {}: {} netlist nets, {} pin records read",
            self.board, self.netlist_nets, self.netlist_pins
        )?;
        writeln!(f, "\nScan devices")?;
        let mut t = TextTable::new(2);
        t.row(["device", "entity", "package", "BSDL from"]);
        for d in &self.devices {
            t.row(vec![
                d.designator.clone(),
                d.entity.clone(),
                d.package.clone(),
                d.origin.clone(),
            ]);
        }
        write!(f, "{t}")?;
        writeln!(f, "\nTAP ports")?;
        let mut t = TextTable::new(2);
        t.row(["port", "chain (TDI to TDO)", "TRST*", "how"]);
        for p in &self.chains {
            t.row(vec![
                p.name.clone(),
                p.chain.join(" → "),
                if p.trst { "wired" } else { "-" }.into(),
                p.origin.clone(),
            ]);
        }
        write!(f, "{t}")?;
        writeln!(
            f,
            "\nNets: {} on the board; {} driven and read, {} driven only, {} read only, {} without scan access",
            self.nets,
            self.nets_driven_and_read,
            self.nets_driven_only,
            self.nets_read_only,
            self.nets_without_scan_access.len()
        )?;
        writeln!(
            f,
            "Rails: {}; pulls: {}",
            self.rails
                .iter()
                .map(|r| r.net.as_str())
                .collect::<Vec<_>>()
                .join(", "),
            self.pulls.len()
        )?;
        if !self.clusters.is_empty() {
            // Part number → (designators, clusters).
            let mut by_part: std::collections::BTreeMap<&str, (Vec<&str>, usize)> =
                std::collections::BTreeMap::new();
            for c in &self.clusters {
                let e = by_part.entry(c.part.as_str()).or_default();
                if e.0.last() != Some(&c.designator.as_str()) {
                    e.0.push(c.designator.as_str());
                }
                e.1 += 1;
            }
            writeln!(
                f,
                "\nClusters from the part table: {} from {} parts",
                self.clusters.len(),
                by_part.values().map(|(d, _)| d.len()).sum::<usize>()
            )?;
            let mut t = TextTable::new(2);
            t.row(["part number", "fitted as", "clusters"]);
            for (part, (des, n)) in &by_part {
                t.row(vec![part.to_string(), des.join(", "), n.to_string()]);
            }
            write!(f, "{t}")?;
        }
        if !self.unmodelled.is_empty() {
            writeln!(
                f,
                "\nParts left unmodelled, most nets first (part numbers from the assembly file's part_numbers or the netlist)"
            )?;
            let mut t = TextTable::new(2);
            t.row(["part", "part number", "nets", "touches", "note"]);
            for u in &self.unmodelled {
                let mut touches = u
                    .nets
                    .iter()
                    .take(6)
                    .cloned()
                    .collect::<Vec<_>>()
                    .join(", ");
                if u.nets.len() > 6 {
                    touches.push_str(", …");
                }
                t.row(vec![
                    u.designator.clone(),
                    u.part.clone().unwrap_or_else(|| "-".into()),
                    u.nets.len().to_string(),
                    touches,
                    u.note.clone(),
                ]);
            }
            write!(f, "{t}")?;
        }
        writeln!(f, "\nGuesses ({})", self.guesses.len())?;
        for g in &self.guesses {
            writeln!(f, "  {g}")?;
        }
        writeln!(f, "\nWarnings ({})", self.warnings.len())?;
        for w in &self.warnings {
            writeln!(f, "  {w}")?;
        }
        Ok(())
    }
}
