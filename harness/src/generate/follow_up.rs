//! The follow-up test as a native program: other vectors over the nets and
//! drivers of the interconnect test, written as `generate` writes it.

use std::fmt::Write as _;

use super::interconnect::{wrap, InterconnectTest, CAUTION};
use super::native_write::comment;
use crate::program::net_level::PatternSet;

impl InterconnectTest {
    /// `patterns` over this test's nets and drivers as a native program:
    /// `notes` as comment paragraphs at its head (what the vectors tell
    /// apart), the caution for real hardware, a TMS reset per TAP port,
    /// then the `patterns:` block.
    pub fn follow_up_yaml(&self, name: &str, notes: &[String], patterns: &PatternSet) -> String {
        let mut t = String::new();
        let _ = writeln!(t, "# {}", comment(name));
        for note in notes {
            let _ = writeln!(t, "#");
            for line in note.lines() {
                // A note's own indented lines (a table) stay as they are.
                if line.starts_with(' ') {
                    let _ = writeln!(t, "#{}", comment(line));
                    continue;
                }
                for piece in wrap(line, 88) {
                    let _ = writeln!(t, "# {}", comment(&piece));
                }
            }
        }
        t.push_str(CAUTION);
        self.write_body(&mut t, name, patterns);
        t
    }
}
