//! `Class`: the [`Classroom`] behind `boardtwin exercise serve`. Each
//! trainee (the name their hello gave) has a desk of their own, kept
//! across connections; a submission is graded once, and only then does
//! the answer go to the trainee. Score sheets are written after each grade.

#![cfg_attr(not(test), deny(clippy::unwrap_used, clippy::panic))]

use std::collections::BTreeMap;
use std::path::PathBuf;
use std::sync::{Arc, Mutex, MutexGuard};

use virtual_board::{Board, DefectSpec, LoadedBoard};

use super::desk::Desk;
use super::error::TrainingError;
use super::exercise::Exercise;
use super::grade::grade;
use super::sheet::{debrief, score_csv, Score};
use crate::remote::{Classroom, ErrorCode, Reply, Request};

/// Longest trainee name, in characters.
pub const MAX_NAME: usize = 40;

/// One class on one exercise.
#[derive(Debug)]
pub struct Class {
    design: LoadedBoard,
    faulted: Board,
    answer: Vec<DefectSpec>,
    desks: Mutex<BTreeMap<String, Arc<Mutex<Desk>>>>,
    scores: Mutex<Vec<Score>>,
    /// Where the score sheets go (`scores.csv`, `scores.json`).
    sheets: Option<PathBuf>,
}

fn locked<T>(m: &Mutex<T>) -> MutexGuard<'_, T> {
    m.lock().unwrap_or_else(std::sync::PoisonError::into_inner)
}

impl Class {
    /// A class on `exercise`, whose board is `design` (as designed).
    ///
    /// # Errors
    /// The exercise's defects do not fit the board.
    pub fn new(
        design: LoadedBoard,
        exercise: &Exercise,
        sheets: Option<PathBuf>,
    ) -> Result<Class, TrainingError> {
        let mut source = virtual_board::bsdl_files_beside(&design.path);
        let faulted = design
            .with_defects(&exercise.defects, &mut source)
            .map_err(|e| TrainingError::Board(format!("the exercise does not fit the board: {e}")))?
            .board;
        Ok(Class {
            design,
            faulted,
            answer: exercise.defects.clone(),
            desks: Mutex::new(BTreeMap::new()),
            scores: Mutex::new(Vec::new()),
            sheets,
        })
    }

    /// Every graded submission so far, in the order they were graded.
    pub fn scores(&self) -> Vec<Score> {
        locked(&self.scores).clone()
    }

    fn desk(&self, trainee: &str) -> Arc<Mutex<Desk>> {
        let mut desks = locked(&self.desks);
        Arc::clone(desks.entry(trainee.to_string()).or_insert_with(|| {
            Arc::new(Mutex::new(Desk::new(
                self.faulted.clone(),
                self.design.board.clone(),
            )))
        }))
    }

    /// Runs `program` on `trainee`'s desk, as a run over the network would.
    pub fn run_program(
        &self,
        trainee: &str,
        program: &crate::program::Program,
    ) -> crate::run::RunReport {
        let desk = self.desk(trainee);
        let mut desk = locked(&desk);
        let mut target = super::desk_target::DeskTarget(&mut desk);
        crate::run::Runner::new(&mut target, crate::run::RunOptions::default()).run(program)
    }

    /// Grades `trainee`'s diagnosis: the grade as JSON, or why it was refused.
    ///
    /// # Errors
    /// [`TrainingError::Refused`]: a diagnosis that does not fit the board.
    pub fn submit_value(
        &self,
        trainee: &str,
        submitted: &[DefectSpec],
    ) -> Result<serde_json::Value, TrainingError> {
        match self.submit(trainee, submitted) {
            Reply::Grade(v) => Ok(v),
            Reply::Error { message, .. } => Err(TrainingError::Refused(message)),
            _ => Err(TrainingError::Refused(
                "the class answered without a grade".into(),
            )),
        }
    }

    fn submit(&self, trainee: &str, submitted: &[DefectSpec]) -> Reply {
        if let Some(done) = locked(&self.scores).iter().find(|s| s.trainee == trainee) {
            return graded(done);
        }
        // Check the diagnosis names things the board has, in the board's words.
        let mut source = virtual_board::bsdl_files_beside(&self.design.path);
        if let Err(e) = self.design.with_defects(submitted, &mut source) {
            return Reply::error(
                ErrorCode::BadDefect,
                false,
                format!("the diagnosis does not fit the board: {e}"),
            );
        }
        let desk = self.desk(trainee);
        let desk = locked(&desk);
        let g = grade(&self.design, &self.answer, submitted, &desk.record);
        let mut costs = desk.costs.clone();
        costs.seconds = desk.seconds();
        let score = Score {
            trainee: trainee.to_string(),
            verdict: g.verdict,
            points: g.verdict.points(),
            submitted: submitted.iter().map(DefectSpec::describe).collect(),
            answer: self.answer.iter().map(DefectSpec::describe).collect(),
            grade: g,
            costs,
            record_full: desk.record_full,
        };
        drop(desk);
        let reply = graded(&score);
        let all = {
            let mut scores = locked(&self.scores);
            scores.push(score);
            scores.clone()
        };
        if let Some(dir) = &self.sheets {
            if let Err(e) = write_sheets(dir, &all) {
                tracing::warn!("cannot write the score sheets in {}: {e}", dir.display());
            }
        }
        reply
    }
}

/// The grade reply: the score and its debrief.
fn graded(score: &Score) -> Reply {
    let mut value = serde_json::to_value(score).unwrap_or_default();
    if let Some(map) = value.as_object_mut() {
        map.insert("debrief".into(), serde_json::Value::String(debrief(score)));
    }
    Reply::Grade(value)
}

/// Writes `scores.csv` and `scores.json` in `dir`, each whole or not at all.
fn write_sheets(dir: &std::path::Path, scores: &[Score]) -> std::io::Result<()> {
    crate::report::atomic::write_atomic(&dir.join("scores.csv"), score_csv(scores).as_bytes())?;
    let json = serde_json::to_vec_pretty(scores).unwrap_or_default();
    crate::report::atomic::write_atomic(&dir.join("scores.json"), &json)
}

/// Why a hello's name cannot be a trainee's, if it cannot.
pub fn refuse_name(name: &str) -> Option<String> {
    if name.is_empty() || name.starts_with("boardtwin ") {
        return Some(
            "this server hosts an exercise: give your name when you connect (tcp://NAME@HOST:PORT)"
                .into(),
        );
    }
    let ok = name.chars().count() <= MAX_NAME
        && name
            .chars()
            .all(|c| c.is_alphanumeric() || matches!(c, ' ' | '-' | '_' | '.'));
    (!ok).then(|| {
        format!("a trainee's name is at most {MAX_NAME} letters, digits, spaces, `-`, `_` or `.`")
    })
}

impl Classroom for Class {
    fn handle(&self, trainee: &str, request: &Request) -> Reply {
        if let Some(why) = refuse_name(trainee) {
            return Reply::error(ErrorCode::Refused, false, why);
        }
        match request {
            Request::Submit { defects } => self.submit(trainee, defects),
            other => {
                let desk = self.desk(trainee);
                let mut desk = locked(&desk);
                desk.answer(other)
            }
        }
    }
}
