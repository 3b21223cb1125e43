//! The `coercive` binary, run as a user would.

use std::path::PathBuf;
use std::process::Command;

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_coercive"))
}

fn repo(path: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join(path)
}

#[test]
fn mesh_prints_a_json_report_and_writes_the_drawing() {
    let svg = std::env::temp_dir().join(format!("coercive-cli-{}.svg", std::process::id()));
    let out = bin()
        .args(["mesh", "--json", "--svg"])
        .arg(&svg)
        .arg(repo("meshes/steel_ring_conductor.toml"))
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let triangles = report["triangles"].as_u64().unwrap();
    assert!(report["nodes"].as_u64().unwrap() > 100);
    // Quality promise of the mesher: at least the requested 28 degrees (the geometry has no
    // input angle below it: circles only).
    assert!(report["min_angle_deg"].as_f64().unwrap() >= 28.0 - 1e-9);
    assert!(report["max_angle_deg"].as_f64().unwrap() < 180.0);
    let counts = report["region_triangles"].as_object().unwrap();
    let names: Vec<&str> = counts.keys().map(String::as_str).collect();
    for name in ["conductor", "inner_air", "ring", "air"] {
        assert!(names.contains(&name), "{names:?}");
    }
    assert_eq!(report["units"]["area"], "m^2");
    let sum: u64 = counts.values().map(|v| v.as_u64().unwrap()).sum();
    assert_eq!(sum, triangles);
    // The ring's area is pi (b^2 - a^2) = pi (20^2 - 10^2) mm^2 within the chord error
    // (geometry of shared/check-values.md item 4).
    let ring = report["regions"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["name"] == "ring")
        .unwrap();
    let exact = std::f64::consts::PI * (0.02f64.powi(2) - 0.01f64.powi(2));
    assert!((ring["area"].as_f64().unwrap() - exact).abs() < 1e-3 * exact);
    let drawing = std::fs::read_to_string(&svg).unwrap();
    assert!(drawing.starts_with("<svg") && drawing.contains(">ring</text>"));
    std::fs::remove_file(svg).ok();
}

#[test]
fn mesh_prints_a_human_report_with_units() {
    let out = bin()
        .arg("mesh")
        .arg(repo("meshes/steel_ring_conductor.toml"))
        .output()
        .unwrap();
    assert!(out.status.success());
    let text = String::from_utf8(out.stdout).unwrap();
    assert!(text.contains(" triangles"), "{text}");
    assert!(text.contains(" deg"), "{text}");
    assert!(text.contains(" m^2"), "{text}");
}

#[test]
fn bad_files_fail_with_a_message_and_position() {
    // Missing file.
    let out = bin()
        .args(["mesh", "/nonexistent/case.toml"])
        .output()
        .unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("cannot read case file"), "{err}");

    // An unknown key: the message names it with line and column.
    let dir = std::env::temp_dir();
    let path = dir.join(format!("coercive-cli-bad-{}.toml", std::process::id()));
    std::fs::write(&path, "unit = \"mm\"\n[mesh]\nmax_sise = 2\n").unwrap();
    let out = bin().arg("mesh").arg(&path).output().unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("max_sise") && err.contains("line 3, column 1"),
        "{err}"
    );

    // A geometry the mesher refuses: an open outline.
    std::fs::write(
        &path,
        "unit = \"mm\"\n[geometry]\npolylines = [{ points = [[0, 0], [1, 0], [1, 1]] }]\n[regions.a]\nat = [0.7, 0.2]\n",
    )
    .unwrap();
    let out = bin().arg("mesh").arg(&path).output().unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("region \"a\""), "{err}");
    std::fs::remove_file(path).ok();
}
