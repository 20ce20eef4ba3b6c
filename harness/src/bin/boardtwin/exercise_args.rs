//! Raw arguments of `boardtwin exercise` and its subcommands.

use std::path::PathBuf;

use clap::Subcommand;

/// Arguments of `boardtwin exercise`.
#[derive(Debug, clap::Args)]
pub struct ExerciseArgs {
    /// What to do.
    #[command(subcommand)]
    pub action: ExerciseAction,
}

/// The subcommands of `exercise`.
#[derive(Debug, Subcommand)]
pub enum ExerciseAction {
    /// Print a fresh key (64 hex digits) for sealing exercises; keep it
    /// in a file only you can read, or in BOARDTWIN_EXERCISE_KEY.
    Key,
    /// Draw hidden defects from the board's fault universe and seal them.
    New(NewArgs),
    /// Open a sealed exercise with the key and print the answer.
    Show(ShowArgs),
    /// Host an exercise: each trainee who connects (name given at connect,
    /// tcp://NAME@HOST:PORT) gets their own copy of the faulted board.
    Serve(ClassArgs),
    /// Send a diagnosis to an exercise server and print the grade and debrief.
    Submit(SubmitArgs),
}

/// Where the key comes from: a file, or the environment variable.
#[derive(Debug, clap::Args)]
pub struct KeyArgs {
    /// A file whose first line is the key (64 hex digits); without it, the
    /// BOARDTWIN_EXERCISE_KEY environment variable. Never on the command
    /// line itself, where other users of the machine can read it.
    #[arg(long, value_name = "FILE")]
    pub key_file: Option<PathBuf>,
}

/// Arguments of `exercise new`.
#[derive(Debug, clap::Args)]
pub struct NewArgs {
    /// The board file.
    #[arg(long)]
    pub board: PathBuf,
    /// Levels, joined by commas, one defect each: bridge, lifted-pin,
    /// cut-net, stuck-net, chain, wrong-part, behind-logic, double (two at once).
    #[arg(long, value_name = "SPEC")]
    pub draw: String,
    /// The seed: the same board, levels and seed draw the same defects.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// The sealed exercise file to write.
    #[arg(short, long, value_name = "FILE")]
    pub output: PathBuf,
    /// The key.
    #[command(flatten)]
    pub key: KeyArgs,
}

/// Arguments of `exercise show`.
#[derive(Debug, clap::Args)]
pub struct ShowArgs {
    /// The sealed exercise.
    pub file: PathBuf,
    /// The key.
    #[command(flatten)]
    pub key: KeyArgs,
    /// One JSON object instead of text.
    #[arg(long)]
    pub json: bool,
}

/// Arguments of `exercise serve`.
#[derive(Debug, clap::Args)]
pub struct ClassArgs {
    /// The sealed exercise.
    pub file: PathBuf,
    /// The key.
    #[command(flatten)]
    pub key: KeyArgs,
    /// The board file, when it is no longer where the exercise was made.
    #[arg(long)]
    pub board: Option<PathBuf>,
    /// Address to listen on (port 0: any free port; the address taken is printed).
    #[arg(long, value_name = "ADDR:PORT", default_value = "127.0.0.1:7150")]
    pub listen: String,
    /// Allow listening on an address other than loopback.
    #[arg(long)]
    pub allow_network: bool,
    /// Also serve the trainee's web page on this address (HTTP; loopback
    /// unless --allow-network).
    #[arg(long, value_name = "ADDR:PORT")]
    pub http: Option<String>,
    /// Offer the `.yaml` and `.svf` programs of this folder on the page
    /// (besides the generated infrastructure and interconnect tests).
    #[arg(long, value_name = "DIR")]
    pub programs: Option<PathBuf>,
    /// Folder for the instructor's score sheets (scores.csv and
    /// scores.json, rewritten after each grade).
    #[arg(long, value_name = "DIR")]
    pub scores: Option<PathBuf>,
}

/// Arguments of `exercise submit`.
#[derive(Debug, clap::Args)]
pub struct SubmitArgs {
    /// The exercise server, with your name: tcp://NAME@HOST:PORT.
    #[arg(long, value_name = "URL")]
    pub target: String,
    /// A defect of your diagnosis, in the defect-list format (repeat for
    /// several): '{short: [NET_A, NET_B]}', '{open: U5.A3}', '{stuck: NET,
    /// value: 0}', '{broken_link: U1}', '{wrong_device: U4}' …
    #[arg(long = "defect", value_name = "YAML")]
    pub defects: Vec<String>,
    /// Your diagnosis as a YAML defect list.
    #[arg(long, value_name = "FILE")]
    pub defects_file: Option<PathBuf>,
    /// Also write the debrief to this file.
    #[arg(long, value_name = "FILE")]
    pub debrief: Option<PathBuf>,
    /// The whole grade as one JSON object instead of the debrief.
    #[arg(long)]
    pub json: bool,
}
