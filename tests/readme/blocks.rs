//! The fenced blocks of a Markdown text, with the markers of their info strings.

/// What the README test does with a block.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Kind {
    /// A shell block to run; it must exit with this code.
    Run { exit: i32 },
    /// A shell block not meant to run here.
    Skip,
    /// A shell block that needs a tool on the PATH.
    Needs { tool: String, exit: i32 },
    /// A shell block started in the background (a server).
    Background,
    /// Text to write to a file, relative to the folder.
    File { path: String },
    /// Lines the last shell block must have printed.
    Output,
    /// An example to read.
    Example,
}

/// One fenced block.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Block {
    /// 1-based line of the opening fence.
    pub line: usize,
    /// What to do with it.
    pub kind: Kind,
    /// The text between the fences, each line ending in `\n`.
    pub text: String,
}

impl Block {
    /// A short name for the test case: the line and the first command or file.
    pub fn name(&self) -> String {
        let first = self
            .text
            .lines()
            .map(str::trim)
            .find(|l| !l.is_empty() && !l.starts_with('#'))
            .unwrap_or("");
        let first: String = first.chars().take(60).collect();
        match &self.kind {
            Kind::File { path } => format!("README line {:>4}: file {path}", self.line),
            Kind::Output => format!("README line {:>4}: output", self.line),
            _ => format!("README line {:>4}: {first}", self.line),
        }
    }
}

const SHELLS: [&str; 3] = ["sh", "bash", "shell"];

/// The blocks of `markdown`, in order; an error names the line of an
/// unknown marker or an unclosed fence.
pub fn blocks(markdown: &str) -> Result<Vec<Block>, String> {
    let mut out = Vec::new();
    let mut lines = markdown.lines().enumerate();
    while let Some((i, line)) = lines.next() {
        let trimmed = line.trim_start();
        let Some(fence) = fence_of(trimmed) else {
            continue;
        };
        let info = trimmed[fence.len()..].trim();
        let mut text = String::new();
        let mut closed = false;
        for (_, l) in lines.by_ref() {
            let t = l.trim_start();
            if t.starts_with(fence) && t[fence.len()..].trim().is_empty() {
                closed = true;
                break;
            }
            text.push_str(l);
            text.push('\n');
        }
        if !closed {
            return Err(format!("line {}: the block is never closed", i + 1));
        }
        let kind = kind_of(info).map_err(|e| format!("line {}: {e}", i + 1))?;
        out.push(Block {
            line: i + 1,
            kind,
            text,
        });
    }
    Ok(out)
}

/// The fence (three or more backticks or tildes) a line opens with.
fn fence_of(line: &str) -> Option<&str> {
    for c in ['`', '~'] {
        let n = line.chars().take_while(|&x| x == c).count();
        if n >= 3 {
            return Some(&line[..n]);
        }
    }
    None
}

/// The kind an info string gives: `LANG [marker ...]`.
fn kind_of(info: &str) -> Result<Kind, String> {
    let mut words = info.split_whitespace();
    let lang = words.next().unwrap_or("");
    let shell = SHELLS.contains(&lang);
    let mut exit = 0;
    let mut kind = None;
    for w in words {
        let (key, value) = w.split_once('=').unwrap_or((w, ""));
        let next = match (key, shell) {
            ("exit", true) => {
                exit = value
                    .parse()
                    .map_err(|_| format!("`{w}`: the exit code is a number"))?;
                continue;
            }
            ("skip", true) => Kind::Skip,
            ("background", true) => Kind::Background,
            ("needs", true) if !value.is_empty() => Kind::Needs {
                tool: value.to_string(),
                exit: 0,
            },
            ("file", _) if !value.is_empty() => Kind::File {
                path: value.to_string(),
            },
            ("output", _) => Kind::Output,
            _ => {
                return Err(format!(
                    "unknown marker `{w}` after `{lang}` (known: exit=N, skip, needs=TOOL, \
                     background on shell blocks; file=PATH, output on any block)"
                ))
            }
        };
        if kind.replace(next).is_some() {
            return Err(format!(
                "`{info}`: one marker of skip, needs, background, file, output"
            ));
        }
    }
    Ok(match kind {
        Some(Kind::Needs { tool, .. }) => Kind::Needs { tool, exit },
        Some(k) => k,
        None if shell => Kind::Run { exit },
        None => Kind::Example,
    })
}
