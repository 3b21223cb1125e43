//! The solver sections of a case (`[[material]]`, `[[winding]]`, `[[boundary]]`) are read
//! with the rest of the file: every error names the entry (counted from 1) and gives the line
//! and column of the offending key or value, in the case file's words.

use coercive::case::{Case, CaseError, Position};

/// The steel-ring case of meshes/ with solver sections appended.
fn ring(sections: &str) -> String {
    let base = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes/steel_ring_conductor.toml"
    ))
    .unwrap()
    .replace("material = \"steel-c10\"", "material = \"ring_steel\"");
    format!("{base}\n{sections}")
}

const GOOD: &str = r#"
[[material]]
name = "ring_steel"
saturating = { js = 1.8, h0 = 200 }

[[winding]]
name = "bar"
turns = 1
current = 1000
positive = ["conductor"]

[[boundary]]
kind = "fixed"
curve = "outer"
"#;

/// Line and column (1-based) of the first occurrence of `needle` in `text`.
fn where_is(text: &str, needle: &str) -> Position {
    Position::of_offset(
        text,
        text.find(needle).unwrap_or_else(|| panic!("{needle}")),
    )
}

/// Reads `text`, expects an error inside entry `index` of `section` named `name`, at the
/// position of `at`, whose message contains every one of `words`.
fn expect_entry_error(
    text: &str,
    section: &str,
    index: usize,
    name: &str,
    at: &str,
    words: &[&str],
) {
    let err = Case::from_toml_str(text).unwrap_err();
    let message = err.to_string();
    match &err {
        CaseError::Entry {
            section: s,
            index: i,
            name: n,
            position,
            ..
        } => {
            assert_eq!((*s, *i), (section, index), "{message}");
            assert_eq!(n.as_deref(), Some(name), "{message}");
            assert_eq!(*position, where_is(text, at), "{message}");
        }
        other => panic!("expected an entry error, got {other:?}"),
    }
    for w in words {
        assert!(message.contains(w), "`{w}` missing from: {message}");
    }
    let p = where_is(text, at);
    assert!(
        message.contains(&format!("line {}, column {}", p.line, p.column)),
        "{message}"
    );
    for rust_name in ["f64", "i64", "Raw", "struct", "Spanned", "sequence"] {
        assert!(!message.contains(rust_name), "Rust name in: {message}");
    }
}

#[test]
fn the_good_sections_read() {
    let case = Case::from_toml_str(&ring(GOOD)).unwrap();
    assert_eq!(case.materials().len(), 1);
    assert_eq!(case.windings().len(), 1);
    assert_eq!(case.boundaries().len(), 1);
}

#[test]
fn unknown_key_in_a_winding_has_line_column_and_the_entry_name() {
    let text = ring(&GOOD.replace("turns = 1\n", "turn = 1\n"));
    expect_entry_error(
        &text,
        "winding",
        1,
        "bar",
        "turn = 1",
        &["[[winding]] entry 1 `bar`", "unknown field `turn`"],
    );
}

#[test]
fn a_value_of_the_wrong_type_is_described_in_the_files_words() {
    let text = ring(&GOOD.replace("current = 1000", "current = \"high\""));
    expect_entry_error(
        &text,
        "winding",
        1,
        "bar",
        "\"high\"",
        &["expected a number"],
    );
}

#[test]
fn two_laws_in_one_entry_name_both() {
    // The issue's example: a linear, a saturating and a magnet law in one entry.
    let text = ring(&GOOD.replace(
        "saturating = { js = 1.8, h0 = 200 }",
        "relative_permeability = 1000\nsaturating = { js = 1.8, h0 = 200 }\nremanence = 1.2",
    ));
    expect_entry_error(
        &text,
        "material",
        1,
        "ring_steel",
        "{ js = 1.8",
        &[
            "two material laws",
            "`relative_permeability`",
            "`saturating`",
        ],
    );
    // `remanence` overrides a magnet preset but is a second law beside a steel preset.
    let text = ring(&GOOD.replace(
        "saturating = { js = 1.8, h0 = 200 }",
        "preset = \"steel-c10\"\nremanence = 1.2",
    ));
    expect_entry_error(
        &text,
        "material",
        1,
        "ring_steel",
        "1.2\n",
        &["two material laws", "preset `steel-c10`", "`remanence`"],
    );
    let text = ring(&GOOD.replace(
        "saturating = { js = 1.8, h0 = 200 }",
        "preset = \"ndfeb-n42\"\nremanence = 1.2\ndirection_deg = 0",
    ));
    assert!(Case::from_toml_str(&text).is_ok());
}

#[test]
fn no_law_and_a_modifier_of_another_law_are_errors() {
    let text = ring(&GOOD.replace("saturating = { js = 1.8, h0 = 200 }\n", ""));
    expect_entry_error(
        &text,
        "material",
        1,
        "ring_steel",
        "\"ring_steel\"\n\n[[winding]]",
        &["no material law"],
    );
    let text = ring(&GOOD.replace(
        "saturating = { js = 1.8, h0 = 200 }",
        "saturating = { js = 1.8, h0 = 200 }\nrecoil_permeability = 1.05",
    ));
    expect_entry_error(
        &text,
        "material",
        1,
        "ring_steel",
        "1.05",
        &["`recoil_permeability` applies to magnets", "`saturating`"],
    );
    let text = ring(&GOOD.replace(
        "saturating = { js = 1.8, h0 = 200 }",
        "relative_permeability = 1000\nstacking_factor = 0.95",
    ));
    expect_entry_error(
        &text,
        "material",
        1,
        "ring_steel",
        "0.95",
        &["`stacking_factor` applies to B-H curves"],
    );
}

#[test]
fn unknown_preset_is_located_at_its_value() {
    let text = ring(&GOOD.replace(
        "saturating = { js = 1.8, h0 = 200 }",
        "preset = \"steel-c11\"",
    ));
    expect_entry_error(
        &text,
        "material",
        1,
        "ring_steel",
        "\"steel-c11\"",
        &["unknown material preset", "steel-c10"],
    );
}

#[test]
fn bh_points_count_from_one_and_point_at_the_pair() {
    let text = ring(&GOOD.replace(
        "saturating = { js = 1.8, h0 = 200 }",
        "bh = [[100, 0.8], [300, 1.3], [250, 1.4]]",
    ));
    expect_entry_error(
        &text,
        "material",
        1,
        "ring_steel",
        "[250, 1.4]",
        &["B-H point 3 "],
    );
}

#[test]
fn unknown_winding_region_and_boundary_curve() {
    let text = ring(&GOOD.replace("positive = [\"conductor\"]", "positive = [\"conductr\"]"));
    expect_entry_error(
        &text,
        "winding",
        1,
        "bar",
        "\"conductr\"",
        &["unknown region `conductr`"],
    );
    let text = ring(&GOOD.replace("curve = \"outer\"", "curve = \"rim\""));
    expect_entry_error(
        &text,
        "boundary",
        1,
        "fixed",
        "\"rim\"",
        &["unknown curve `rim`"],
    );
    let text = ring(&GOOD.replace("curve = \"outer\"", "curve = \"outer\"\nfirst = \"side\""));
    expect_entry_error(
        &text,
        "boundary",
        1,
        "fixed",
        "\"side\"",
        &["`first` does not apply to kind \"fixed\""],
    );
    let text = ring(&GOOD.replace("kind = \"fixed\"", "kind = \"fixd\""));
    expect_entry_error(
        &text,
        "boundary",
        1,
        "fixd",
        "\"fixd\"",
        &["unknown kind `fixd`"],
    );
}

#[test]
fn second_entries_are_counted_from_one() {
    let text = ring(&format!(
        "{GOOD}\n[[winding]]\nname = \"spare\"\nturns = 0\ncurrent = 1\npositive = [\"conductor\"]\n"
    ));
    expect_entry_error(
        &text,
        "winding",
        2,
        "spare",
        "0\ncurrent = 1",
        &[
            "[[winding]] entry 2 `spare`",
            "`turns` must be finite and non-zero",
        ],
    );
    let text = ring(&format!(
        "{GOOD}\n[[material]]\nname = \"ring_steel\"\nrelative_permeability = 2\n"
    ));
    assert!(matches!(
        Case::from_toml_str(&text),
        Err(CaseError::DuplicateName {
            kind: "material",
            ..
        })
    ));
}

#[test]
fn unknown_region_material_is_located_in_the_region() {
    let text = ring(GOOD).replace("material = \"ring_steel\"", "material = \"unobtainium\"");
    let err = Case::from_toml_str(&text).unwrap_err();
    let message = err.to_string();
    assert!(
        message.contains("region `ring`: unknown material `unobtainium`"),
        "{message}"
    );
    let p = where_is(&text, "\"unobtainium\"");
    assert!(
        message.contains(&format!("line {}, column {}", p.line, p.column)),
        "{message}"
    );
}

#[test]
fn retired_preset_names_say_what_to_write_instead() {
    // A `[[material]]` preset of the earlier library.
    let text = ring(&GOOD.replace("saturating = { js = 1.8, h0 = 200 }", "preset = \"m-19\""));
    expect_entry_error(
        &text,
        "material",
        1,
        "ring_steel",
        "\"m-19\"",
        &["`m-19` is not a preset", "EN 10106", "m400-50a"],
    );
    // A region's material naming a retired preset directly.
    let base = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes/steel_ring_conductor.toml"
    ))
    .unwrap()
    .replace("material = \"steel-c10\"", "material = \"steel-1010\"");
    let message = Case::from_toml_str(&base).unwrap_err().to_string();
    assert!(
        message.contains("region `ring`")
            && message
                .contains("`steel-1010` is not a preset; for a low carbon steel write `steel-c10`"),
        "{message}"
    );
}

#[test]
fn a_winding_states_its_parallel_paths_and_end_windings() {
    let text = ring(&GOOD.replace(
        "turns = 1\n",
        "turns = 1\nparallel_paths = 2\nend_winding_inductance_mh = 0.25\n",
    ));
    let case = Case::from_toml_str(&text).unwrap();
    let w = &case.windings()[0];
    assert_eq!(w.parallel_paths, 2);
    assert!((w.end_turn_inductance_h - 0.25e-3).abs() < 1e-18);
    for (bad, at, word) in [
        ("parallel_paths = 0\n", "0\ncurrent", "parallel_paths"),
        (
            "end_winding_inductance_mh = -1\n",
            "-1\ncurrent",
            "end_winding_inductance_mh",
        ),
    ] {
        let text = ring(&GOOD.replace("turns = 1\n", &format!("turns = 1\n{bad}")));
        expect_entry_error(&text, "winding", 1, "bar", at, &[word]);
    }
}
