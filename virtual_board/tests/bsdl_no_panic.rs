//! Property tests: the BSDL reader never panics, whatever the input (that its errors are placed is checked in `bsdl_rules.rs`, case by case, and in `harness/tests/reader_sweep.rs`).
//!
//! Inputs are random bytes, random BSDL-like token soup, and random mutations
//! (deleted, duplicated and swapped tokens, truncation, replaced characters)
//! of valid files: the base text of `bsdl_rules.rs` and every
//! `scenarios/devices/*.bsd` of the workspace.

use std::panic::{catch_unwind, AssertUnwindSafe};
use std::path::Path;

use proptest::prelude::*;
use proptest::sample::{select, Index};
use virtual_board::parse_bsdl;

/// The `BASE` text of `bsdl_rules.rs`, cut out of that file's source.
fn rules_base() -> String {
    let source = include_str!("bsdl_rules.rs");
    let open = "const BASE: &str = r#\"";
    let start = source.find(open).expect("bsdl_rules.rs defines BASE") + open.len();
    let len = source[start..].find("\"#;").expect("BASE is closed");
    source[start..start + len].to_string()
}

/// The valid texts mutations start from: the rules base, then the scenario
/// devices sorted by file name (at least one: a sweep that silently lost
/// the demo files would mutate the rules base alone).
fn seeds() -> Vec<(String, String)> {
    let mut seeds = vec![("bsdl_rules.rs BASE".to_string(), rules_base())];
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../scenarios/devices");
    let mut files: Vec<_> = std::fs::read_dir(&dir)
        .map(|entries| {
            entries
                .filter_map(|e| e.ok().map(|e| e.path()))
                .filter(|p| p.extension().is_some_and(|x| x == "bsd"))
                .collect()
        })
        .unwrap_or_default();
    files.sort();
    assert!(!files.is_empty(), "no demo BSDL file in {}", dir.display());
    for path in files {
        let text = std::fs::read_to_string(&path).expect("a readable scenario device");
        seeds.push((path.display().to_string(), text));
    }
    seeds
}

/// Feeds `text` to the reader; a panic fails the property with the input.
fn never_panics(text: &str) -> Result<(), TestCaseError> {
    match catch_unwind(AssertUnwindSafe(|| parse_bsdl(text))) {
        Ok(_) => Ok(()),
        Err(panic) => {
            let why = panic
                .downcast_ref::<String>()
                .cloned()
                .or_else(|| panic.downcast_ref::<&str>().map(|s| s.to_string()))
                .unwrap_or_default();
            Err(TestCaseError::fail(format!(
                "parse_bsdl panicked ({why}) on this input:\n<<<\n{text}\n>>>\n{text:?}"
            )))
        }
    }
}

/// Splits text into words (runs of letters, digits and `_`), single
/// punctuation characters and runs of white space; joined they give the text.
fn tokens(text: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let mut start = 0;
    let class = |c: char| {
        if c.is_alphanumeric() || c == '_' {
            0
        } else if c.is_whitespace() {
            1
        } else {
            2
        }
    };
    let mut prev = None;
    for (i, c) in text.char_indices() {
        let k = class(c);
        if i > start && (k == 2 || Some(k) != prev) {
            out.push(&text[start..i]);
            start = i;
        }
        prev = Some(k);
    }
    if start < text.len() {
        out.push(&text[start..]);
    }
    out
}

/// One change to a text.
#[derive(Clone, Debug)]
enum Mutation {
    Delete(Index),
    Duplicate(Index),
    Swap(Index, Index),
    Truncate(Index),
    Replace(Index, char),
}

/// Characters that matter to BSDL, plus a few that do not.
fn interesting_char() -> impl Strategy<Value = char> {
    prop_oneof![
        select(vec![
            '"', '-', '(', ')', ',', ';', ':', '&', '*', '[', ']', '=', '.', '_', '0', '1', '9',
            'X', 'e', ' ', '\n', '\t', '\'', '$', '\u{e9}', '\u{2013}', '\0',
        ]),
        any::<char>(),
    ]
}

fn mutation() -> impl Strategy<Value = Mutation> {
    prop_oneof![
        3 => any::<Index>().prop_map(Mutation::Delete),
        2 => any::<Index>().prop_map(Mutation::Duplicate),
        2 => (any::<Index>(), any::<Index>()).prop_map(|(a, b)| Mutation::Swap(a, b)),
        1 => any::<Index>().prop_map(Mutation::Truncate),
        3 => (any::<Index>(), interesting_char()).prop_map(|(i, c)| Mutation::Replace(i, c)),
    ]
}

fn apply(text: &str, m: &Mutation) -> String {
    let toks = tokens(text);
    if toks.is_empty() {
        return text.to_string();
    }
    match m {
        Mutation::Delete(i) => {
            let k = i.index(toks.len());
            [&toks[..k], &toks[k + 1..]].concat().concat()
        }
        Mutation::Duplicate(i) => {
            let k = i.index(toks.len());
            [&toks[..=k], &toks[k..]].concat().concat()
        }
        Mutation::Swap(a, b) => {
            let mut toks = toks;
            let (a, b) = (a.index(toks.len()), b.index(toks.len()));
            toks.swap(a, b);
            toks.concat()
        }
        Mutation::Truncate(i) => {
            let cut = i.index(text.len() + 1);
            let cut = (0..=cut)
                .rev()
                .find(|&c| text.is_char_boundary(c))
                .unwrap_or(0);
            text[..cut].to_string()
        }
        Mutation::Replace(i, ch) => {
            let chars: Vec<char> = text.chars().collect();
            let k = i.index(chars.len());
            chars[..k]
                .iter()
                .chain([ch])
                .chain(&chars[k + 1..])
                .collect()
        }
    }
}

/// Pieces of BSDL for the token-soup property.
fn bsdl_piece() -> impl Strategy<Value = &'static str> {
    select(vec![
        "entity",
        "E",
        "is",
        "end",
        "E;",
        "generic",
        "PHYSICAL_PIN_MAP",
        "string",
        ":=",
        "\"P\"",
        "port",
        "(",
        ")",
        ":",
        ";",
        ",",
        "in",
        "out",
        "inout",
        "linkage",
        "bit",
        "bit_vector",
        "0",
        "3",
        "to",
        "downto",
        "-",
        "use",
        "STD_1149_1_2001.all",
        "attribute",
        "of",
        "entity",
        "signal",
        "true",
        "constant",
        "P",
        "PIN_MAP_STRING",
        "\"A:1, B:(2,3)\"",
        "&",
        "INSTRUCTION_LENGTH",
        "INSTRUCTION_OPCODE",
        "\"BYPASS (11), EXTEST (0X)\"",
        "INSTRUCTION_CAPTURE",
        "\"01\"",
        "IDCODE_REGISTER",
        "\"XXXX0000000000000000000000000001\"",
        "BOUNDARY_LENGTH",
        "BOUNDARY_REGISTER",
        "\"0 (BC_1, A, INPUT, X)\"",
        "\"1 (BC_1, *, CONTROL, 0), 2 (BC_7, B(1), BIDIR, X, 1, 0, Z)\"",
        "REGISTER_ACCESS",
        "\"BOUNDARY (EXTEST), R[4] (X CAPTURES 0101)\"",
        "TAP_SCAN_CLOCK",
        "(1.0e6, BOTH)",
        "TDI",
        "TCK",
        "-- comment\n",
        "\n",
        " ",
        "\"",
        "'",
        "4294967296",
        "-9223372036854775807",
    ])
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: 300,
        failure_persistence: None,
        ..ProptestConfig::default()
    })]

    // Random bytes, read as (lossy) UTF-8.
    #[test]
    fn random_bytes_never_panic(bytes in prop::collection::vec(any::<u8>(), 0..600)) {
        never_panics(&String::from_utf8_lossy(&bytes))?;
    }

    // Random sequences of BSDL words and strings: they get past the lexer
    // and reach the parser and the rule checks.
    #[test]
    fn token_soup_never_panics(pieces in prop::collection::vec(bsdl_piece(), 0..120)) {
        never_panics(&pieces.join(" "))?;
    }

    // Valid files with a few random changes: they reach every rule check.
    #[test]
    fn mutated_files_never_panic(
        seed in any::<Index>(),
        changes in prop::collection::vec(mutation(), 1..6),
    ) {
        let seeds = seeds();
        let (_, text) = &seeds[seed.index(seeds.len())];
        let mutated = changes.iter().fold(text.clone(), |t, m| apply(&t, m));
        never_panics(&mutated)?;
    }
}

// The seeds are valid, so the mutations start from files that pass every
// check and the properties above reach deep into the reader.
#[test]
fn every_seed_is_valid() {
    for (name, text) in seeds() {
        if let Err(e) = parse_bsdl(&text) {
            panic!("seed {name} does not read: {e}");
        }
    }
}

// The tokenizer used for mutations loses nothing.
#[test]
fn tokens_join_back_to_the_text() {
    for (_, text) in seeds() {
        assert_eq!(tokens(&text).concat(), text);
    }
    assert_eq!(
        tokens("ab (c1, \"d\")\n"),
        ["ab", " ", "(", "c1", ",", " ", "\"", "d", "\"", ")", "\n"]
    );
}

// Regression (found by reading the reader): a bit_vector range too wide for
// an i64 width once overflowed in the reader.
#[test]
fn regression_huge_range() {
    let text =
        "entity E is port (A : in bit_vector(-9223372036854775807 to 9223372036854775807)); end E;";
    assert!(never_panics(text).is_ok());
    assert!(parse_bsdl(text).is_err());
}
