//! Property test: random and mutated case text never makes the reader, the validator or the
//! generator panic.

use std::path::PathBuf;

use glam::{DVec2, DVec3};
use lamella_case::{Case, generate, parse_str};
use proptest::prelude::*;

fn seeds() -> Vec<String> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../../cases");
    let mut files: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|e| e == "ron"))
        .collect();
    files.sort();
    files
        .iter()
        .map(|p| std::fs::read_to_string(p).unwrap())
        .collect()
}

/// One edit of the text: delete, insert or replace a character at a position.
#[derive(Clone, Debug)]
enum Edit {
    Delete(usize),
    Insert(usize, char),
    Replace(usize, char),
}

fn edit() -> impl Strategy<Value = Edit> {
    let glyph = prop_oneof![
        proptest::char::range(' ', '~'),
        Just('\n'),
        Just('é'),
        Just('\u{0}'),
        Just('-'),
        Just('0'),
        Just('9'),
    ];
    prop_oneof![
        any::<usize>().prop_map(Edit::Delete),
        (any::<usize>(), glyph.clone()).prop_map(|(i, c)| Edit::Insert(i, c)),
        (any::<usize>(), glyph).prop_map(|(i, c)| Edit::Replace(i, c)),
    ]
}

fn apply(text: &str, edits: &[Edit]) -> String {
    let mut chars: Vec<char> = text.chars().collect();
    for e in edits {
        let len = chars.len().max(1);
        match *e {
            Edit::Delete(i) if !chars.is_empty() => {
                chars.remove(i % len);
            }
            Edit::Insert(i, c) => chars.insert(i % (chars.len() + 1), c),
            Edit::Replace(i, c) if !chars.is_empty() => chars[i % len] = c,
            _ => {}
        }
    }
    chars.into_iter().collect()
}

/// Generates the particles of a valid case when it is small enough to do so quickly.
fn generate_if_small(case: &Case) {
    let sites: f64 = case.lattice_counts().iter().map(|&n| n as f64).product();
    if sites < 2.0e4 {
        if case.dimension == 3 {
            let g = generate::<DVec3>(case);
            assert_eq!(g.position.len(), g.is_wall.len());
        } else {
            let g = generate::<DVec2>(case);
            assert_eq!(g.position.len(), g.interface_marker.len());
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 768, ..ProptestConfig::default() })]

    #[test]
    fn mutated_cases_never_panic(seed in 0usize..7, edits in prop::collection::vec(edit(), 1..8)) {
        let seeds = seeds();
        let text = apply(&seeds[seed % seeds.len()], &edits);
        match parse_str(&text, "mutated") {
            Ok(case) => generate_if_small(&case),
            Err(err) => {
                prop_assert!(!err.problems.is_empty());
                prop_assert!(!err.to_string().is_empty());
            }
        }
    }

    #[test]
    fn arbitrary_text_never_panics(text in "\\PC{0,200}") {
        let _ = parse_str(&text, "random");
    }

    #[test]
    fn numbers_swapped_for_extremes_never_panic(
        seed in 0usize..7,
        pick in any::<usize>(),
        value in prop_oneof![
            Just("0.0"), Just("-1.0"), Just("1.0e308"), Just("-1.0e308"), Just("1.0e-308"),
            Just("inf"), Just("NaN"), Just("1"), Just("4294967295"), Just("0"),
        ],
    ) {
        let seeds = seeds();
        let text = &seeds[seed % seeds.len()];
        // Replace one number literal (found by a simple scan) with an extreme value.
        let spans: Vec<(usize, usize)> = number_spans(text);
        prop_assume!(!spans.is_empty());
        let (start, end) = spans[pick % spans.len()];
        let mutated = format!("{}{}{}", &text[..start], value, &text[end..]);
        if let Ok(case) = parse_str(&mutated, "extreme") {
            generate_if_small(&case);
        }
    }
}

/// Byte spans of number literals outside comments.
fn number_spans(text: &str) -> Vec<(usize, usize)> {
    let mut spans = Vec::new();
    for (offset, line) in line_starts(text) {
        let code = line.split("//").next().unwrap_or("");
        let bytes = code.as_bytes();
        let mut i = 0;
        while i < bytes.len() {
            let starts_number = bytes[i].is_ascii_digit()
                && (i == 0 || !(bytes[i - 1].is_ascii_alphanumeric() || bytes[i - 1] == b'_'));
            if starts_number {
                let start = i;
                while i < bytes.len()
                    && (bytes[i].is_ascii_digit() || matches!(bytes[i], b'.' | b'e' | b'-'))
                {
                    i += 1;
                }
                spans.push((offset + start, offset + i));
            } else {
                i += 1;
            }
        }
    }
    spans
}

fn line_starts(text: &str) -> Vec<(usize, &str)> {
    let mut offset = 0;
    text.split_inclusive('\n')
        .map(|line| {
            let here = offset;
            offset += line.len();
            (here, line)
        })
        .collect()
}
