//! The `[rotation]` section of a case file: read and checked with the rest of the case (errors
//! name the item with line and column), and run by `coercive solve` on the full machine.

use std::path::PathBuf;
use std::process::Command;

use coercive::case::{Case, CaseError};

fn srm_text() -> String {
    std::fs::read_to_string(
        PathBuf::from(env!("CARGO_MANIFEST_DIR"))
            .join("meshes")
            .join("srm_full.toml"),
    )
    .unwrap()
}

/// srm_full.toml with its `[rotation]` replaced by `section`.
fn with_rotation(section: &str) -> Result<Case, CaseError> {
    let text = srm_text();
    let head = &text[..text.find("[rotation]").unwrap()];
    Case::from_toml_str(&format!("{head}{section}"))
}

const GOOD: &str = r#"[rotation]
group = "rotor"
centre = [0, 0]
body = ["rotor"]
airgap = "airgap"
sectors = 1
from_deg = 0
to_deg = 45
step_deg = 2.5
phase = "phase_a"
currents = [-6, -3, 3, 6]
"#;

#[test]
fn a_rotation_section_reads_in_si_units() {
    let case = with_rotation(GOOD).unwrap();
    let r = case.rotation().unwrap();
    assert_eq!(r.group, "rotor");
    assert_eq!(r.angles_rad.len(), 19);
    assert!((r.angles_rad[18] - 45f64.to_radians()).abs() < 1e-15);
    assert_eq!(r.phase.as_deref(), Some("phase_a"));
    assert_eq!(r.currents_a, vec![-6.0, -3.0, 3.0, 6.0]);
    assert_eq!(r.airgap.as_deref(), Some("airgap"));
    assert_eq!(r.centre_m, [0.0, 0.0]);
    // The case file in meshes/ carries a plain rotation (no phase).
    let shipped = Case::from_toml_str(&srm_text()).unwrap();
    assert!(shipped.rotation().unwrap().phase.is_none());
}

#[test]
fn bad_rotation_sections_are_named_with_their_position() {
    for (from, to, what) in [
        ("group = \"rotor\"", "group = \"stator\"", "rigid group"),
        ("body = [\"rotor\"]", "body = [\"rotr\"]", "rotr"),
        ("airgap = \"airgap\"", "airgap = \"gap\"", "gap"),
        ("phase = \"phase_a\"", "phase = \"phase_d\"", "phase_d"),
        ("sectors = 1", "sectors = 0", "sectors"),
        ("to_deg = 45", "to_deg = -5", "to_deg"),
        ("step_deg = 2.5", "step_deg = 0", "step_deg"),
        ("from_deg = 0", "from_deg = 400", "within"),
        ("currents = [-6, -3, 3, 6]", "currents = [3, 3]", "distinct"),
        // A twelfth of the machine repeats every 30 degrees: 0 to 45 is outside the period.
        ("sectors = 1", "sectors = 12", "period"),
        (
            "step_deg = 2.5",
            "step_deg = 2.5\nstep = 1",
            "unknown field",
        ),
    ] {
        let text = GOOD.replace(from, to);
        let e = with_rotation(&text).unwrap_err().to_string();
        assert!(e.contains(what), "{to}: {e}");
        assert!(e.contains("line "), "{to}: {e}");
    }
    // Currents without a phase.
    let e = with_rotation(&GOOD.replace("phase = \"phase_a\"\n", ""))
        .unwrap_err()
        .to_string();
    assert!(e.contains("`currents` go with a `phase`"), "{e}");
}

#[test]
fn coercive_solve_turns_the_rotor_of_the_full_machine() {
    let out = Command::new(env!("CARGO_BIN_EXE_coercive"))
        .args(["solve", "--json"])
        .arg(PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("meshes/srm_full.toml"))
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    let points = v["rotation"]["points"].as_array().unwrap();
    assert_eq!(points.len(), 5);
    for p in points {
        let (egg, ark) = (
            p["eggshell_nm"].as_f64().unwrap(),
            p["arkkio_nm"].as_f64().unwrap(),
        );
        let psi: Vec<&str> = p["flux_linkage_wb"]
            .as_array()
            .unwrap()
            .iter()
            .map(|w| w[0].as_str().unwrap())
            .collect();
        assert_eq!(psi, ["phase_a", "phase_b", "phase_c"]);
        eprintln!(
            "{:.1} deg: eggshell {egg:.5} N m, Arkkio {ark:.5} N m",
            p["angle_rad"].as_f64().unwrap().to_degrees()
        );
        // Measured: within 0.3 % of each other (or 2 mN m near zero torque).
        assert!((egg - ark).abs() < 5e-3 * egg.abs().max(0.4), "{egg} {ark}");
    }
}

#[test]
fn coercive_solve_out_writes_the_maps_curves_and_flux_maps() {
    // A small map (3 angles x 3 currents, a coarser mesh than the case's) run from the
    // command line with --out: the files a designer opens.
    let text = srm_text()
        .replace("elements_across_gap = 1 ", "elements_across_gap = 0.5 ")
        .replace("max_size = 3.0", "max_size = 4.0")
        .replace("current = 5.0", "current = 0.0");
    let head = &text[..text.find("[rotation]").unwrap()];
    let section = GOOD
        .replace("step_deg = 2.5", "step_deg = 22.5")
        .replace("currents = [-6, -3, 3, 6]", "currents = [-3, 3]");
    let dir = std::env::temp_dir().join(format!("coercive-rotation-out-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let case = dir.join("map.toml");
    std::fs::write(&case, format!("{head}{section}")).unwrap();
    let out_dir = dir.join("out");
    let out = Command::new(env!("CARGO_BIN_EXE_coercive"))
        .args(["solve"])
        .arg(&case)
        .arg("--out")
        .arg(&out_dir)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let stdout = String::from_utf8_lossy(&out.stdout);
    assert!(stdout.contains("reciprocity"), "{stdout}");
    for file in [
        "rotation.json",
        "rotation.csv",
        "psi_i.svg",
        "torque_theta.svg",
        "psi_map.svg",
        "torque_map.svg",
        "flux_first_angle.svg",
        "flux_last_angle.svg",
    ] {
        let body =
            std::fs::read_to_string(out_dir.join(file)).unwrap_or_else(|e| panic!("{file}: {e}"));
        if file.ends_with(".svg") {
            assert!(
                body.starts_with("<svg") && body.trim_end().ends_with("</svg>"),
                "{file}"
            );
        }
        if file.ends_with("_map.svg") {
            assert!(body.contains("class=\"colour-bar\""), "{file}");
            assert!(body.contains("data-band=\"0\""), "{file}");
        }
    }
    let csv = std::fs::read_to_string(out_dir.join("rotation.csv")).unwrap();
    assert_eq!(csv.lines().count(), 1 + 3 * 3);
    std::fs::remove_dir_all(&dir).unwrap();
}
