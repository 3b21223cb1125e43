//! The documentation is tested: every ```toml block of docs/*.md is read by the case reader.
//! A block with `unit = ...` is a complete case: it must mesh and solve, and its result is
//! checked (a pinned number, and the physics where the page states it). Other blocks are
//! fragments: each top-level table or array entry is read inside a minimal wrapper case
//! (`unit = "mm"`), where the only accepted errors are names the fragment refers to but does
//! not define (points, curves, regions of the drawing around it): an unknown key, a wrong
//! type, two material laws or a bad value fails the test.

use std::f64::consts::PI;
use std::path::Path;

use coercive::case::{Case, CaseError};
use coercive::fem::BhCurve;
use coercive::post::FieldProbe;

/// The ```toml blocks of a markdown text, with the line each starts on.
fn toml_blocks(text: &str) -> Vec<(usize, String)> {
    let mut blocks = Vec::new();
    let mut current: Option<(usize, String)> = None;
    for (i, line) in text.lines().enumerate() {
        match &mut current {
            None if line.trim_start().starts_with("```toml") => {
                current = Some((i + 1, String::new()))
            }
            Some((start, body)) if line.trim_start().starts_with("```") => {
                blocks.push((*start, std::mem::take(body)));
                current = None;
            }
            Some((_, body)) => {
                body.push_str(line);
                body.push('\n');
            }
            None => {}
        }
    }
    blocks
}

/// Splits a fragment at its table headers (`[x]` or `[[x]]`), keeping each header's body.
fn entries(fragment: &str) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    for line in fragment.lines() {
        if line.trim_start().starts_with('[') || out.is_empty() {
            out.push(String::new());
        }
        if let Some(last) = out.last_mut() {
            last.push_str(line);
            last.push('\n');
        }
    }
    out
}

/// An error that only says the fragment refers to a name defined elsewhere in a drawing.
fn is_missing_context(e: &CaseError) -> bool {
    match e {
        CaseError::UnknownName { .. } => true,
        CaseError::Entry { what, .. } => {
            what.starts_with("unknown region") || what.starts_with("unknown curve")
        }
        _ => false,
    }
}

fn doc_pages() -> Vec<(String, String)> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("docs");
    let mut pages: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "md"))
        .map(|p| {
            let text = std::fs::read_to_string(&p).unwrap();
            (p.display().to_string(), text)
        })
        .collect();
    pages.sort();
    pages
}

#[test]
fn every_toml_fragment_in_the_docs_reads() {
    let mut fragments = 0;
    for (page, text) in doc_pages() {
        for (line, block) in toml_blocks(&text) {
            if block.lines().any(|l| l.trim_start().starts_with("unit =")) {
                continue; // complete cases: see below
            }
            for entry in entries(&block) {
                let case = format!("unit = \"mm\"\n{entry}");
                match Case::from_toml_str(&case) {
                    Ok(_) => {}
                    Err(e) if is_missing_context(&e) => {}
                    Err(e) => panic!("{page}, block at line {line}: {e}\n{entry}"),
                }
                fragments += 1;
            }
        }
    }
    assert!(fragments >= 10, "only {fragments} fragments found");
}

#[test]
fn every_complete_case_in_the_docs_solves() {
    let mut cases = 0;
    for (page, text) in doc_pages() {
        for (line, block) in toml_blocks(&text) {
            if !block.lines().any(|l| l.trim_start().starts_with("unit =")) {
                continue;
            }
            let case = Case::from_toml_str(&block)
                .unwrap_or_else(|e| panic!("{page}, block at line {line}: {e}"));
            let geometry = case.geometry().unwrap();
            let (mesh, _) = case.mesh_with_report(&geometry).unwrap();
            let model = coercive::solve::model_from_case(&case, mesh).unwrap();
            let (solution, summary) = coercive::solve::solve_and_summarise(&model)
                .unwrap_or_else(|e| panic!("{page}, block at line {line}: {e}"));
            cases += 1;
            match case.title() {
                Some("Round conductor in a steel ring") => {
                    check_ring(&case, &solution, summary.newton_iterations, summary.energy)
                }
                other => panic!("{page}, block at line {line}: no check for case {other:?}"),
            }
        }
    }
    assert!(cases >= 1);
}

/// The ring of docs/case-format.md: Ampere's law gives H = I / (2 pi r) in the ring for any
/// B-H curve (check-values item 4's argument), so the flux per metre is the integral of the
/// table's B(H) over the ring, evaluated here by Simpson's rule.
fn check_ring(case: &Case, solution: &coercive::fem::Solution, iterations: usize, energy: f64) {
    let current = case.windings()[0].current_a;
    let curve = BhCurve::from_points(&[(100.0, 0.8), (300.0, 1.3), (1000.0, 1.55)]).unwrap();
    let (a, b) = (0.010, 0.020);
    let n = 2000;
    let f = |r: f64| curve.b_of_h(current / (2.0 * PI * r));
    let step = (b - a) / n as f64;
    let reference = (0..=n)
        .map(|i| {
            let w = if i == 0 || i == n {
                1.0
            } else if i % 2 == 1 {
                4.0
            } else {
                2.0
            };
            w * f(a + i as f64 * step)
        })
        .sum::<f64>()
        * step
        / 3.0;
    let probe = FieldProbe::new(solution);
    let flux = probe.potential([a, 0.0]).unwrap() - probe.potential([b, 0.0]).unwrap();
    eprintln!(
        "docs ring: flux {flux:.6e} Wb/m (Ampere's law {reference:.6e}), energy {energy:.6e} \
         J/m, {iterations} Newton iterations"
    );
    assert!(
        (flux - reference).abs() < 2e-3 * reference,
        "flux {flux} Wb/m against {reference} Wb/m"
    );
    // The ring works beyond the table's last point (H = 4 to 8 kA/m against 1 kA/m), across
    // the slope jump to vacuum there: measured 14 iterations, more than the 7-9 of smooth
    // tables (tests/nonlinear_ring.rs).
    assert!(iterations <= 16, "{iterations} Newton iterations");
    // Pinned: the stored energy of this deterministic mesh and solve (J/m), with the degree-4
    // rule of nonlinear P2 and the isotropic size field (the ring works across the slope jump
    // at the table's end, where the rules differ by 1.3e-4; the flux check above is the
    // physics, this pin only catches unannounced changes).
    assert!(
        (energy - PINNED_ENERGY_J_PER_M).abs() < 1e-6 * PINNED_ENERGY_J_PER_M,
        "energy {energy} J/m"
    );
}

const PINNED_ENERGY_J_PER_M: f64 = 2.974397e-1;

/// Every Rust block in README.md is the body of an example (compiled by `cargo test`) between
/// its README markers; the quick start is also run here.
#[test]
fn readme_rust_blocks_are_examples_and_the_quickstart_runs() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let readme = std::fs::read_to_string(root.join("README.md")).unwrap();
    let mut bodies = Vec::new();
    for entry in std::fs::read_dir(root.join("examples")).unwrap() {
        let source = std::fs::read_to_string(entry.unwrap().path()).unwrap();
        if let (Some(begin), Some(end)) =
            (source.find("// README-BEGIN"), source.find("// README-END"))
        {
            let body: Vec<String> = source[begin..end]
                .lines()
                .skip(1)
                .map(|l| l.strip_prefix("    ").unwrap_or(l).trim_end().to_string())
                .collect();
            bodies.push(body.join("\n"));
        }
    }
    let mut blocks = 0;
    let mut inside: Option<String> = None;
    for line in readme.lines() {
        match &mut inside {
            None if line.trim_start().starts_with("```rust") => inside = Some(String::new()),
            Some(body) if line.trim_start().starts_with("```") => {
                let block = body.trim_end().to_string();
                assert!(
                    bodies
                        .iter()
                        .any(|b| b.trim_end().contains(&block) || block.contains(b.trim_end())),
                    "README.md Rust block is not an example's README-BEGIN/END body:\n{block}"
                );
                blocks += 1;
                inside = None;
            }
            Some(body) => {
                body.push_str(line);
                body.push('\n');
            }
            None => {}
        }
    }
    assert!(blocks >= 1);
    quickstart::main().expect("the quick start runs");
}

#[allow(dead_code)]
#[path = "../examples/quickstart.rs"]
mod quickstart;
