//! A gap declared in a case (`drawn_gap` of `[sweep]` and `[switching]`) is measured in the
//! drawing along the motion; a declaration that differs gets a warning naming both values.

use coercive::case::Case;
use coercive::solve::{drawn_gap_warnings, drawn_gaps};

const PAD: &str = include_str!("../meshes/switchable_pad.toml");

fn meshed(text: &str) -> (Case, coercive::mesh::Mesh) {
    let case = Case::from_toml_str(text).unwrap();
    let geometry = case.geometry().unwrap();
    let (mesh, _) = case.mesh_with_report(&geometry).unwrap();
    (case, mesh)
}

/// Replaces the `n`-th occurrence (from 0) of `from` in `text`.
fn replace_nth(text: &str, from: &str, to: &str, n: usize) -> String {
    let at = text
        .match_indices(from)
        .nth(n)
        .expect("the pattern occurs")
        .0;
    format!("{}{}{}", &text[..at], to, &text[at + from.len()..])
}

#[test]
fn the_pad_is_drawn_at_its_declared_gap() {
    let (case, mesh) = meshed(PAD);
    let gaps = drawn_gaps(&case, &mesh);
    assert_eq!(gaps.len(), 2);
    for g in &gaps {
        // The case file draws the plate 0.5 mm above the pad's poles.
        assert_eq!(g.declared_m, 0.5e-3);
        let measured = g.measured_m.unwrap();
        assert!(
            (measured - 0.5e-3).abs() < 1e-12,
            "{}: {measured}",
            g.section
        );
    }
    assert!(drawn_gap_warnings(&case, &mesh).is_empty());
}

#[test]
fn a_declared_gap_that_differs_from_the_drawing_is_reported() {
    let text = replace_nth(PAD, "drawn_gap = 0.5", "drawn_gap = 0.6", 0);
    let (case, mesh) = meshed(&text);
    let w = drawn_gap_warnings(&case, &mesh);
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].starts_with("WARNING [sweep] drawn_gap = 0.6 mm"),
        "{}",
        w[0]
    );
    assert!(w[0].contains("is 0.5 mm from `plate`"), "{}", w[0]);

    let text = replace_nth(PAD, "direction = [0, 1]", "direction = [0, -1]", 1);
    let (case, mesh) = meshed(&text);
    let w = drawn_gap_warnings(&case, &mesh);
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].starts_with("WARNING [switching] drawn_gap = 0.5 mm"),
        "{}",
        w[0]
    );
    assert!(w[0].contains("never reaches `plate`"), "{}", w[0]);
}

/// The solve summary prints the warning after the solve's own figures, and carries it in its
/// JSON form (`coercive solve` fills it from the case).
#[test]
fn the_solve_summary_prints_the_gap_warning() {
    let text = replace_nth(PAD, "drawn_gap = 0.5", "drawn_gap = 0.6", 0);
    let (case, mesh) = meshed(&text);
    let model = coercive::solve::model_from_case(&case, mesh).unwrap();
    let (_, mut summary) = coercive::solve::solve_and_summarise(&model).unwrap();
    assert!(summary.gap_warnings.is_empty());
    summary.gap_warnings = drawn_gap_warnings(&case, model.mesh());
    let printed = summary.to_string();
    let line = printed
        .lines()
        .find(|l| l.starts_with("WARNING [sweep]"))
        .unwrap_or_else(|| panic!("no gap warning in:\n{printed}"));
    assert!(line.contains("0.6 mm") && line.contains("0.5 mm"), "{line}");
    let json = serde_json::to_value(&summary).unwrap();
    assert_eq!(json["gap_warnings"][0].as_str(), Some(line));
}
