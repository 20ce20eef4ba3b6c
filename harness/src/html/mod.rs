//! Self-contained HTML reports (`--html FILE`): one file with inline CSS, SVG pictures and a
//! little JavaScript for sorting and filtering tables; no outside fetches, printable.
//!
//! - `escape`: every string that comes from an input file goes through `esc` or `id_of`.
//! - `page`: the document around the sections (header with board, program, date, tool
//!   version and command line; the style sheet; the table script).
//! - `table`: `HtmlTable`, a sortable, filterable table whose cells may link.
//! - `chain`: the scan chains picture. `waveform`: a failing scan's TCK/TMS/TDI/TDO/TRST*
//!   lines with the TAP state names and the failing bit marked. `coverage`: bars per fault
//!   class, the per-net map and the ambiguity-group histogram.
//! - `run_report`, `campaign_report`, `compare_report`, `diagnose_report`, `scenario_report`: the sections of each command's report.
//!
//! **Invariant:** no function here reads a file or the clock except `page::Meta::now`; the
//! writers are pure, so they are tested on plain values.

mod campaign_report;
mod chain;
mod compare_report;
mod coverage;
mod diagnose_report;
mod escape;
mod page;
mod run_report;
mod scenario_report;
mod table;
mod waveform;

pub use campaign_report::{campaign_sections, net_coverage};
pub use chain::{breaks_of, chain_svg, instruction_words, ChainBreak};
pub use compare_report::compare_sections;
pub use coverage::{ambiguity_svg, class_bars_svg, net_map, NetCoverage};
pub use diagnose_report::diagnose_sections;
pub use escape::{esc, id_of};
pub use page::{utc_date, Meta, Report};
pub use run_report::{
    failing_waves, nets_section, run_sections, scan_waves, RunExtras, ScanWave, MAX_WAVES,
};
pub use scenario_report::{scenario_detail, scenario_sections, ScenarioRow, SCENARIO_WAVES};
pub use table::{link, HtmlTable};
pub use waveform::{shift_windows, states_of, waveform_svg, WaveWindow};
