//! The follow-up test in words: what each explanation of the group reads
//! in each vector, the paragraphs at the head of the program, and the
//! program text.

use std::collections::{BTreeMap, BTreeSet};

use virtual_board::{Bits, LoadedBoard};

use super::diagnosis::Candidate;
use super::follow_up::{vector_of_bits, FollowUp, Reading};
use super::net_view::NetView;
use crate::program::Program;

/// What each explanation makes each suspect net read in each vector.
pub(super) fn readings(
    loaded: &LoadedBoard,
    program: &Program,
    group: &[Candidate],
    responses: &[Option<Bits>],
    nets: &[String],
    count: usize,
) -> Vec<Reading> {
    let (_, view) = NetView::build(loaded, program);
    let of = vector_of_bits(program, count);
    let board = &loaded.board;
    group
        .iter()
        .zip(responses)
        .map(|(c, r)| Reading {
            explanation: c.words.clone(),
            reads: (0..count)
                .map(|v| {
                    let mut out = BTreeMap::new();
                    for name in nets {
                        let Some(i) = board.net_index(name) else {
                            continue;
                        };
                        let seen: BTreeSet<Option<bool>> = of
                            .iter()
                            .enumerate()
                            .filter(|(k, x)| {
                                **x == Some(v)
                                    && view.bits.get(*k).and_then(|b| b.as_ref()).map(|b| b.net)
                                        == Some(i)
                            })
                            .map(|(k, _)| r.as_ref().filter(|r| k < r.len()).map(|r| r.get(k)))
                            .collect();
                        let word = match seen.iter().collect::<Vec<_>>().as_slice() {
                            [] => continue,
                            [Some(b)] => u8::from(*b).to_string(),
                            _ => "mixed".to_string(),
                        };
                        out.insert(name.clone(), word);
                    }
                    out
                })
                .collect(),
        })
        .collect()
}

/// `NET=1 NET=0 …` in the order of `nets`.
fn levels(nets: &[String], values: &BTreeMap<String, impl std::fmt::Display>) -> String {
    nets.iter()
        .filter_map(|n| Some(format!("{n}={}", values.get(n)?)))
        .collect::<Vec<_>>()
        .join(" ")
}

/// The paragraphs at the head of the follow-up program.
pub(super) fn notes(f: &FollowUp) -> Vec<String> {
    let mut out = Vec::new();
    let mut group = format!(
        "The capture fits {} explanations exactly, an ambiguity group the first test's codes \
         cannot tell apart (aliasing or confounding: N. Jarwala and C. W. Yau, ITC 1989):",
        f.group.len()
    );
    for (k, g) in f.group.iter().enumerate() {
        group.push_str(&format!("\n   {}. {g}", k + 1));
    }
    out.push(group);
    let how = if f.tried == 1 << f.nets.len() {
        "every combination of their levels"
    } else {
        "all-0, all-1, walking ones and walking zeros over them"
    };
    let one = f.vectors.len() == 1;
    out.push(format!(
        "{} {} {} (every other net of the test is held at 0) and {} {} of the {} pairs \
         apart. {} chosen from {} vectors tried ({how}) by simulating every explanation on the \
         board: {}.",
        f.vectors.len(),
        if one { "vector sets" } else { "vectors set" },
        f.nets.join(", "),
        if one { "tells" } else { "tell" },
        f.told_apart,
        f.pairs,
        if one { "It was" } else { "They were" },
        f.tried,
        if f.fewest {
            "no fewer of them do"
        } else {
            "chosen by greedy set cover, not proven fewest"
        }
    ));
    for (a, b) in &f.alike {
        out.push(format!(
            "No vector tells these apart (every net-level test sees them alike): {a}; {b}."
        ));
    }
    let mut table = String::from("What the nets read under each explanation:");
    for (v, drive) in f.vectors.iter().enumerate() {
        table.push_str(&format!(
            "\n   follow-up {} drives {}",
            v + 1,
            levels(&f.nets, drive)
        ));
        for r in &f.readings {
            table.push_str(&format!(
                "\n     {}: {}",
                r.explanation,
                levels(&f.nets, &r.reads[v])
            ));
        }
    }
    out.push(table);
    out
}

impl FollowUp {
    /// The follow-up as a native program, `how_to_run` (the command that
    /// diagnoses again) among its head comments.
    pub fn text(&self, how_to_run: Option<&str>) -> String {
        let (Some(test), Some(set)) = (&self.test, &self.patterns) else {
            return String::new();
        };
        let mut notes = vec![
            "Written by `boardtwin diagnose --follow-up` after a diagnosis that several \
             explanations fit exactly. Run it on the same board, record the capture, and diagnose \
             again with both recordings: the first program and capture, then this program and \
             its capture."
                .to_string(),
        ];
        if let Some(cmd) = how_to_run {
            notes.push(format!("   {cmd}"));
        }
        notes.extend(self.notes.iter().cloned());
        let name = format!("{} follow-up test", test.board);
        test.follow_up_yaml(&name, &notes, set)
    }
}
