//! The scenario regression suite: every scenario file under scenarios/ is one
//! test case named after its path (`scenarios/cases/short_wired_and`), so
//! `cargo test scenarios` replays them all and `cargo test -- NAME` filters.

use std::path::Path;
use std::process::ExitCode;

use libtest_mimic::{Arguments, Failed, Trial};

fn main() -> ExitCode {
    let args = Arguments::from_args();
    let repo = Path::new(env!("CARGO_MANIFEST_DIR"));
    let trials: Vec<Trial> = harness::scenario::find_all(&repo.join("scenarios"))
        .into_iter()
        .map(|p| {
            let name = p
                .strip_prefix(repo)
                .unwrap_or(&p)
                .with_extension("")
                .display()
                .to_string();
            Trial::test(name, move || check(&p))
        })
        .collect();
    if trials.is_empty() {
        // A suite of no scenarios would pass while proving nothing.
        eprintln!("no scenario files under scenarios/: the demo files are missing");
        return ExitCode::FAILURE;
    }
    libtest_mimic::run(&args, trials).exit_code()
}

/// Replays one scenario; a mismatch fails the case with the mismatch list and the run reports.
fn check(path: &Path) -> Result<(), Failed> {
    let outcome = harness::scenario::replay(path).map_err(Failed::from)?;
    if outcome.met() {
        Ok(())
    } else {
        Err(outcome.report().into())
    }
}
