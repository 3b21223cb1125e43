//! Mutated case files never panic the reader or the model builder: random edits of the cases
//! in meshes/ (deleted lines, swapped numbers, NaN, infinities, huge, zero and negative
//! values, replaced or swapped strings) either read and build a model, or fail with a typed
//! error (a reading error with its line and column).

use coercive::case::Case;
use proptest::prelude::*;

const CASES: [&str; 6] = [
    include_str!("../meshes/latching_actuator.toml"),
    include_str!("../meshes/peer_bench.toml"),
    include_str!("../meshes/srm_full.toml"),
    include_str!("../meshes/srm_sector.toml"),
    include_str!("../meshes/steel_ring_conductor.toml"),
    include_str!("../meshes/switchable_pad.toml"),
];

/// The byte ranges of the numbers in `text` (digits with sign, point and exponent).
fn numbers(text: &str) -> Vec<(usize, usize)> {
    let b = text.as_bytes();
    let mut out = Vec::new();
    let mut i = 0;
    while i < b.len() {
        if b[i].is_ascii_digit()
            && (i == 0 || !(b[i - 1].is_ascii_alphanumeric() || b[i - 1] == b'_'))
        {
            let start = if i > 0 && b[i - 1] == b'-' { i - 1 } else { i };
            let mut j = i;
            while j < b.len()
                && (b[j].is_ascii_digit() || matches!(b[j], b'.' | b'e' | b'E' | b'_'))
            {
                j += 1;
            }
            out.push((start, j));
            i = j;
        } else {
            i += 1;
        }
    }
    out
}

/// The byte ranges of the quoted strings' contents in `text` (comments skipped).
fn strings(text: &str) -> Vec<(usize, usize)> {
    let mut out = Vec::new();
    let mut offset = 0;
    for line in text.split_inclusive('\n') {
        let mut open: Option<usize> = None;
        for (i, c) in line.char_indices() {
            match (c, open) {
                ('#', None) => break,
                ('"', None) => open = Some(i + 1),
                ('"', Some(start)) => {
                    out.push((offset + start, offset + i));
                    open = None;
                }
                _ => {}
            }
        }
        offset += line.len();
    }
    out
}

/// One edit of a case file.
#[derive(Clone, Debug)]
enum Edit {
    DeleteLine(usize),
    SwapNumbers(usize, usize),
    ReplaceNumber(usize, &'static str),
    /// Replace the contents of the k-th quoted string.
    ReplaceString(usize, &'static str),
    /// Swap the contents of two quoted strings (a name where a kind was, a region for a curve).
    SwapStrings(usize, usize),
}

fn edit() -> impl Strategy<Value = Edit> {
    prop_oneof![
        any::<usize>().prop_map(Edit::DeleteLine),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Edit::SwapNumbers(a, b)),
        (
            any::<usize>(),
            prop::sample::select(vec![
                "nan",
                "inf",
                "-inf",
                "1e300",
                "-1e300",
                "0",
                "-1",
                "1e-300",
                "0.5",
                "3",
                "-0.0",
                "4294967296",
                "9223372036854775807",
            ])
        )
            .prop_map(|(a, v)| Edit::ReplaceNumber(a, v)),
        (
            any::<usize>(),
            prop::sample::select(vec![
                "",
                "nowhere",
                "air",
                "outer",
                "open",
                "ndfeb-n42",
                "\\u00e9",
                " "
            ])
        )
            .prop_map(|(a, v)| Edit::ReplaceString(a, v)),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Edit::SwapStrings(a, b)),
    ]
}

fn apply(text: &str, e: &Edit) -> String {
    match *e {
        Edit::DeleteLine(i) => {
            let lines: Vec<&str> = text.lines().collect();
            let k = i % lines.len();
            lines
                .iter()
                .enumerate()
                .filter(|(j, _)| *j != k)
                .map(|(_, l)| *l)
                .collect::<Vec<_>>()
                .join("\n")
        }
        Edit::SwapNumbers(a, b) => {
            let n = numbers(text);
            if n.len() < 2 {
                return text.to_string();
            }
            let (mut x, mut y) = (n[a % n.len()], n[b % n.len()]);
            if x.0 > y.0 {
                std::mem::swap(&mut x, &mut y);
            }
            if x == y {
                return text.to_string();
            }
            format!(
                "{}{}{}{}{}",
                &text[..x.0],
                &text[y.0..y.1],
                &text[x.1..y.0],
                &text[x.0..x.1],
                &text[y.1..]
            )
        }
        Edit::ReplaceString(a, v) => {
            let n = strings(text);
            if n.is_empty() {
                return text.to_string();
            }
            let x = n[a % n.len()];
            format!("{}{}{}", &text[..x.0], v, &text[x.1..])
        }
        Edit::SwapStrings(a, b) => {
            let n = strings(text);
            if n.len() < 2 {
                return text.to_string();
            }
            let (mut x, mut y) = (n[a % n.len()], n[b % n.len()]);
            if x.0 > y.0 {
                std::mem::swap(&mut x, &mut y);
            }
            if x == y {
                return text.to_string();
            }
            format!(
                "{}{}{}{}{}",
                &text[..x.0],
                &text[y.0..y.1],
                &text[x.1..y.0],
                &text[x.0..x.1],
                &text[y.1..]
            )
        }
        Edit::ReplaceNumber(a, v) => {
            let n = numbers(text);
            if n.is_empty() {
                return text.to_string();
            }
            let x = n[a % n.len()];
            format!("{}{}{}", &text[..x.0], v, &text[x.1..])
        }
    }
}

/// The steel ring with a measured B-H table instead of its preset, so that the fuzz also
/// reaches the reader of `bh` points (no case in meshes/ has one).
fn ring_with_table() -> String {
    format!(
        "{}\n[[material]]\nname = \"ring_steel\"\nbh = [[100, 0.8], [300, 1.3], [1000, 1.55], \
         [5000, 1.75], [20000, 1.95]]\nstacking_factor = 0.97\n",
        CASES[4].replace("material = \"steel-c10\"", "material = \"ring_steel\"")
    )
}

/// Seed `which`: a case of meshes/, or (past them) the ring with a measured table.
fn seed(which: usize) -> String {
    CASES
        .get(which)
        .map_or_else(ring_with_table, |c| c.to_string())
}

proptest! {
    #![proptest_config(ProptestConfig {
        cases: 400,
        rng_seed: proptest::test_runner::RngSeed::Fixed(3),
        ..ProptestConfig::default()
    })]
    /// Reading never panics and every reading error gives its line and column; a case that
    /// reads builds its model on its mesh (when the mesh is small: at most 20 000 triangles),
    /// or fails with a typed error.
    #[test]
    fn mutated_cases_never_panic(which in 0usize..8, edits in prop::collection::vec(edit(), 1..4)) {
        // Two draws in eight go to the ring with a measured B-H table.
        let mut text = seed(which);
        for e in &edits {
            text = apply(&text, e);
        }
        let case = match Case::from_toml_str(&text) {
            Ok(case) => case,
            Err(e) => {
                // The reader's promise: every error carries the file's line and column.
                let msg = e.to_string();
                prop_assert!(msg.contains("(line ") && msg.contains(", column "), "{}", msg);
                return Ok(());
            }
        };
        let Ok(mut geometry) = case.geometry() else { return Ok(()) };
        // Keep meshing cheap: a mutated size may ask for millions of triangles.
        geometry.settings.max_triangles = geometry.settings.max_triangles.min(20_000);
        let Ok((mesh, _)) = case.mesh_with_report(&geometry) else { return Ok(()) };
        let _ = coercive::solve::model_from_case(&case, mesh);
    }
}

#[test]
fn the_table_seed_reads_with_its_table() {
    let case = Case::from_toml_str(&ring_with_table()).unwrap();
    assert_eq!(case.region_material("ring"), Some("ring_steel"));
    assert!(case.material("ring_steel").is_ok());
}

#[test]
fn the_edits_change_the_text() {
    let text = CASES[4];
    assert!(numbers(text).len() > 10);
    assert_ne!(apply(text, &Edit::SwapNumbers(0, 3)), text);
    assert_ne!(apply(text, &Edit::ReplaceNumber(2, "nan")), text);
    assert!(apply(text, &Edit::DeleteLine(5)).lines().count() < text.lines().count());
    let s = strings(text);
    assert!(s.len() > 5);
    // Strings are found without their quotes, and none inside a comment.
    assert!(s.iter().all(|&(a, b)| !text[a..b].contains('"')));
    assert_ne!(apply(text, &Edit::ReplaceString(1, "nowhere")), text);
    assert_ne!(apply(text, &Edit::SwapStrings(0, 2)), text);
}
