//! Every bundled case in `cases/` parses, validates, says what it shows and is documented.

use lamella_suite::{bundled_cases, cases_dir};

/// The scenarios the project promises to ship.
const EXPECTED: [&str; 7] = [
    "two-layer-channel.ron",
    "two-layer-channel-seeded.ron",
    "two-phase-cavity.ron",
    "poiseuille.ron",
    "couette.ron",
    "taylor-green.ron",
    "cavity-re100.ron",
];

#[test]
fn every_bundled_case_parses_and_validates() {
    let cases = bundled_cases();
    for name in EXPECTED {
        assert!(
            cases
                .iter()
                .any(|p| p.file_name().is_some_and(|f| f == name)),
            "cases/{name} is missing"
        );
    }
    for path in &cases {
        if let Err(err) = lamella_case::load(path) {
            panic!("bundled case is invalid:\n{err}");
        }
    }
}

#[test]
fn every_bundled_case_starts_with_a_comment_saying_what_it_shows() {
    for path in bundled_cases() {
        let text = std::fs::read_to_string(&path).unwrap();
        let first = text.lines().next().unwrap_or("");
        assert!(
            first.starts_with("// ") && first.len() > 20,
            "{} should open with a comment saying what it shows",
            path.display()
        );
    }
}

#[test]
fn the_cases_readme_lists_every_case_and_documents_every_field() {
    let readme = std::fs::read_to_string(cases_dir().join("README.md")).unwrap();
    for path in bundled_cases() {
        let name = path.file_name().unwrap().to_string_lossy().to_string();
        assert!(
            readme.contains(&name),
            "cases/README.md does not mention {name}"
        );
    }
    // Every field name the bundled cases use appears in the README, in backticks.
    for path in bundled_cases() {
        let text = std::fs::read_to_string(&path).unwrap();
        for field in field_names(&text) {
            assert!(
                readme.contains(&format!("`{field}`")),
                "cases/README.md does not document `{field}` (used in {})",
                path.display()
            );
        }
    }
}

/// Names written as `name:` outside comments and strings.
fn field_names(text: &str) -> Vec<String> {
    let mut names = Vec::new();
    for line in text.lines() {
        let code = line.split("//").next().unwrap_or("");
        let mut in_string = false;
        let mut word = String::new();
        for ch in code.chars() {
            if ch == '"' {
                in_string = !in_string;
                word.clear();
            } else if in_string {
                continue;
            } else if ch.is_ascii_alphanumeric() || ch == '_' {
                word.push(ch);
            } else {
                if ch == ':' && !word.is_empty() && !word.starts_with(|c: char| c.is_ascii_digit())
                {
                    names.push(word.clone());
                }
                word.clear();
            }
        }
    }
    names.sort();
    names.dedup();
    names
}
