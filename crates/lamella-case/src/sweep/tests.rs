//! Sweep expansion: grids, zips, zipped groups, lists and ranges, and the problems of a bad
//! sweep file.

use std::path::PathBuf;

use proptest::prelude::*;

use super::*;

const BASE: &str = include_str!("../../tests/base.ron");

fn base() -> Case {
    crate::parse_str(BASE, "base.ron").expect("valid base")
}

fn sweep(text: &str) -> Result<Sweep, CaseError> {
    let file = parse_str(text, "s.ron")?;
    expand(&file, &base(), "s.ron", PathBuf::from("base.ron"))
}

fn problems(text: &str) -> Vec<String> {
    let err = sweep(text).expect_err("a bad sweep");
    assert_eq!(err.origin, "s.ron");
    err.to_string().lines().map(str::to_string).collect()
}

const MU: &str = "phases[0].viscosity_law.viscosity";

#[test]
fn a_grid_has_every_combination_the_first_parameter_slowest() {
    let s = sweep(&format!(
        r#"(base: "base.ron", parameters: [
            (path: "{MU}", values: List([2e-3, 4e-3])),
            (path: "body_force[0]", values: Linear(start: 0.01, end: 0.03, count: 3)),
        ])"#
    ))
    .unwrap();
    let values: Vec<Vec<f64>> = s.members.iter().map(|m| m.values.clone()).collect();
    assert_eq!(
        values,
        [
            [2e-3, 0.01],
            [2e-3, 0.02],
            [2e-3, 0.03],
            [4e-3, 0.01],
            [4e-3, 0.02],
            [4e-3, 0.03]
        ]
    );
    for (i, m) in s.members.iter().enumerate() {
        assert_eq!(m.index, i);
        let viscosity = m.case.phases[0].viscosity_law.newtonian_viscosity();
        assert_eq!(viscosity, Some(m.values[0]));
        assert_eq!(m.case.body_force.as_ref().unwrap()[0], m.values[1]);
        // Nothing else changed.
        let mut back = m.case.clone();
        back.phases[0] = base().phases[0].clone();
        back.body_force = base().body_force;
        assert_eq!(back, base());
    }
    assert_eq!(
        s.label(4, &s.members[4].values),
        format!("member 4 ({MU} = 0.004, body_force[0] = 0.02)")
    );
}

#[test]
fn zip_moves_parameters_together_and_needs_equal_lengths() {
    let s = sweep(&format!(
        r#"(base: "base.ron", combine: Zip, parameters: [
            (path: "{MU}", values: Log(start: 1e-3, end: 1e-1, count: 3)),
            (path: "time.end", values: List([0.1, 0.2, 0.3])),
        ])"#
    ))
    .unwrap();
    let values: Vec<Vec<f64>> = s.members.iter().map(|m| m.values.clone()).collect();
    assert_eq!(values.len(), 3);
    assert!((values[1][0] - 1e-2).abs() < 1e-15, "{values:?}");
    assert_eq!(values[2], [1e-1, 0.3]);
    let found = problems(&format!(
        r#"(base: "base.ron", combine: Zip, parameters: [
            (path: "{MU}", values: List([1e-3, 2e-3])),
            (path: "time.end", values: List([0.1, 0.2, 0.3])),
        ])"#
    ));
    assert_eq!(found.len(), 1, "{found:?}");
    assert!(
        found[0].starts_with("s.ron: parameters[1].values: bad value 3 values")
            && found[0].contains("as many values as parameters[0]"),
        "{found:?}"
    );
}

#[test]
fn a_group_moves_a_layer_boundary_on_both_sides_within_a_grid() {
    let s = sweep(&format!(
        r#"(base: "base.ron", parameters: [
            (path: "{MU}", values: List([2e-3, 8e-3])),
            (path: "regions[0].top", values: List([4e-4, 6e-4]), group: "interface"),
            (path: "regions[1].bottom", values: List([4e-4, 6e-4]), group: "interface"),
        ])"#
    ))
    .unwrap();
    assert_eq!(s.members.len(), 4);
    for m in &s.members {
        assert_eq!(m.values[1], m.values[2]);
        let pair = m.case.layer_pairs()[0].clone();
        assert!((pair.interface - m.values[1]).abs() < 1e-15);
    }
}

#[test]
fn an_unknown_path_names_the_parameter_and_the_fields_there() {
    let found = problems(
        r#"(base: "base.ron", parameters: [
            (path: "phases[0].viscosty", values: List([1.0])),
            (path: "particles.kernel", values: List([1.0])),
            (path: "phases[5].density", values: List([1.0])),
        ])"#,
    );
    assert_eq!(found.len(), 3, "{found:?}");
    assert!(
        found[0].starts_with("s.ron: parameters[0].path: bad value \"phases[0].viscosty\"")
            && found[0].contains("`phases[0]` has no field `viscosty`; its fields are: ")
            && found[0].contains("viscosity_law"),
        "{}",
        found[0]
    );
    assert!(found[1].contains("not a number"), "{}", found[1]);
    assert!(found[2].contains("has 2 entries"), "{}", found[2]);
}

#[test]
fn empty_and_bad_ranges_are_refused() {
    let found = problems(&format!(
        r#"(base: "base.ron", parameters: [
            (path: "{MU}", values: Linear(start: 1.0, end: 2.0, count: 0)),
            (path: "time.end", values: Log(start: 0.0, end: 1.0, count: 3)),
            (path: "body_force[0]", values: List([])),
        ])"#
    ));
    assert_eq!(found.len(), 3, "{found:?}");
    assert!(
        found[0].ends_with("bad value Linear(start:1.0,end:2.0,count:0); expected count ≥ 1 (count: 0 makes an empty range)"),
        "{}",
        found[0]
    );
    assert!(
        found[1].contains("a positive start and end"),
        "{}",
        found[1]
    );
    assert!(found[2].contains("the list is empty"), "{}", found[2]);
}

#[test]
fn bad_members_are_named_with_their_values() {
    let found = problems(
        r#"(base: "base.ron", parameters: [
            (path: "phases[1].density", values: List([1000.0, -5.0])),
        ])"#,
    );
    assert_eq!(found.len(), 1, "{found:?}");
    assert!(
        found[0]
            .starts_with("s.ron: member 1 (phases[1].density = -5): phases[1].density: bad value"),
        "{}",
        found[0]
    );
}

#[test]
fn syntax_and_unknown_fields_of_the_sweep_file_are_reported_with_their_place() {
    let found = problems("(base: \"base.ron\", parameters: [], extra: 1)");
    assert!(found[0].starts_with("s.ron:1:"), "{found:?}");
    assert!(found[0].contains("extra"), "{found:?}");
    let found = problems("(base: \"base.ron\", parameters: [])");
    assert!(found[0].contains("at least one parameter"), "{found:?}");
    let found = problems(&format!(
        r#"(base: "base.ron", parameters: [(path: "{MU}", values: List(["a"]))])"#
    ));
    assert!(found[0].starts_with("s.ron:1:"), "{found:?}");
}

proptest! {
    #[test]
    fn ranges_have_their_count_their_ends_and_go_one_way(
        start in 1e-6f64..1e3, end in 1e-6f64..1e3, count in 1usize..40, log in any::<bool>()
    ) {
        let values = if log {
            Values::Log { start, end, count }
        } else {
            Values::Linear { start, end, count }
        };
        let v = values.expand().unwrap();
        prop_assert_eq!(v.len(), count);
        prop_assert_eq!(v[0], start);
        if count > 1 {
            prop_assert_eq!(v[count - 1], end);
        }
        let up = end >= start;
        for w in v.windows(2) {
            prop_assert!(if up { w[1] >= w[0] } else { w[1] <= w[0] }, "{:?}", v);
        }
    }

    #[test]
    fn a_grid_of_groups_lists_every_combination_once(lengths in prop::collection::vec(1usize..5, 1..4)) {
        let values: Vec<Vec<f64>> = lengths
            .iter()
            .enumerate()
            .map(|(p, &n)| (0..n).map(|k| (10 * p + k) as f64).collect())
            .collect();
        let groups: Vec<Vec<usize>> = (0..lengths.len()).map(|p| vec![p]).collect();
        let total: usize = lengths.iter().product();
        let mut seen: Vec<Vec<f64>> = (0..total).map(|i| member_values(&groups, &values, i)).collect();
        seen.sort_by(|a, b| a.partial_cmp(b).unwrap());
        seen.dedup();
        prop_assert_eq!(seen.len(), total);
    }
}
