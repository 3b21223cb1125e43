//! `coercive solve CASE.toml [--json]` on the steel-ring case with its solver sections.

use std::process::Command;

fn ring_case(dir: &std::path::Path, boundary_curve: &str) -> std::path::PathBuf {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes/steel_ring_conductor.toml"
    ))
    .unwrap()
    .replace("material = \"steel-c10\"", "material = \"ring_steel\"");
    let path = dir.join(format!("ring_{boundary_curve}.toml"));
    std::fs::write(
        &path,
        format!(
            "{text}\n[[material]]\nname = \"ring_steel\"\nsaturating = {{ js = 1.8, h0 = 200 }}\n\n\
             [[winding]]\nname = \"bar\"\nturns = 1\ncurrent = 1000\npositive = [\"conductor\"]\n\n\
             [[boundary]]\nkind = \"fixed\"\ncurve = \"{boundary_curve}\"\n"
        ),
    )
    .unwrap();
    path
}

#[test]
fn solve_prints_a_json_summary_and_names_bad_curves() {
    let dir = std::env::temp_dir().join(format!("coercive-cli-solve-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_coercive"))
        .args(["solve", "--json"])
        .arg(ring_case(&dir, "outer"))
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["unknowns"].as_u64().unwrap() > 1000);
    assert!(v["newton_iterations"].as_u64().unwrap() >= 2);
    assert_eq!(v["energy_unit"], "J/m");
    // Energy + co-energy of the whole model = I x (flux linkage of the conductor), which
    // exceeds the ring's I x flux = 17.806 J/m (shared/check-values.md item 4, computed):
    // a loose physical sanity bound on the printed numbers.
    let total = v["energy"].as_f64().unwrap() + v["coenergy"].as_f64().unwrap();
    assert!(total > 17.8 && total < 20.0, "{total}");

    let out = Command::new(env!("CARGO_BIN_EXE_coercive"))
        .arg("solve")
        .arg(ring_case(&dir, "rim"))
        .output()
        .unwrap();
    assert!(!out.status.success());
    assert!(String::from_utf8_lossy(&out.stderr).contains("`rim`"));
    let _ = std::fs::remove_dir_all(&dir);
}
