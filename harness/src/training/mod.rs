//! Training on hidden faulted boards (`boardtwin exercise`): an instructor
//! draws defects from a board's fault universe by level and seals them;
//! a class serves the faulted board to each trainee, records what they ran,
//! grades their diagnosis and writes score sheets and debriefs.
//!
//! # Layout
//! - `key`: the instructor's key (a file or an environment variable, never
//!   the command line).
//! - `seal`: the sealed exercise file (XChaCha20-Poly1305).
//! - `level`: the levels an exercise is drawn at, in our own names.
//! - `draw`: drawing defects from the fault universe for a seed.
//! - `exercise`: what a sealed file holds.
//! - `desk`: one trainee's faulted board, its twin as designed, and the record.
//! - `grade`: grading a diagnosis against the answer and the record.
//! - `sheet`: score sheets (CSV, JSON) and the debrief.
//! - `class`: the `Classroom` behind `exercise serve`.
//! - `safety`: what the same actions mean on a powered board.
//! - `desk_target`: a desk as a `TapTarget`, for the page's runs.
//! - `http`: a minimal HTTP/1.1 server on tokio.
//! - `web`: the trainee's page (`page.html`, all inline) and its JSON calls.

mod class;
mod desk;
mod desk_target;
mod draw;
mod error;
mod exercise;
mod grade;
mod http;
mod key;
mod level;
mod safety;
mod seal;
mod sheet;
mod web;

pub use class::Class;
pub use desk::{Costs, Desk};
pub use desk_target::DeskTarget;
pub use draw::{draw, names_in};
pub use error::{KeyError, SealError, TrainingError};
pub use exercise::Exercise;
pub use grade::{grade, Grade, Verdict};
pub use http::{serve_http, Handler, HttpRequest, HttpResponse, MAX_BODY};
pub use key::{new_key_hex, read_key, ExerciseKey, KEY_VARIABLE};
pub use level::Level;
pub use safety::SAFETY;
pub use seal::{open, seal, MAGIC};
pub use sheet::{debrief, score_csv, Score};
pub use web::{Web, PAGE};
