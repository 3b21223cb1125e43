//! `coercive solve CASE.toml --out DIR` runs a case's `[switching]` section and
//! writes its files; a coarse version of `meshes/switchable_pad.toml` keeps it short.

use std::process::Command;

fn coarse_pad(dir: &std::path::Path) -> std::path::PathBuf {
    let text = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes/switchable_pad.toml"
    ))
    .unwrap()
    .replace("element_order = 2", "element_order = 1")
    .replace("max_size = 1.5", "max_size = 4.0")
    .replace("max_size = 2.0", "max_size = 4.0")
    .replace(
        "gaps = [0.05, 0.1, 0.2, 0.3, 0.5, 0.75, 1.0, 1.25, 1.5, 2.0, 2.5, 3.0]",
        "gaps = [0.05, 3.0]",
    )
    .replace("amplitude_tolerance = 0.01", "amplitude_tolerance = 0.1")
    .replace("partial_amplitudes = 8", "partial_amplitudes = 2");
    // The plain sweep of the case is not what this test is about.
    let start = text.find("[sweep]").unwrap();
    let end = start + text[start..].find("\n\n").unwrap();
    let text = format!("{}{}", &text[..start], &text[end..]);
    let path = dir.join("pad.toml");
    std::fs::write(&path, text).unwrap();
    path
}

#[test]
fn solve_runs_the_switching_section_and_writes_its_files() {
    let dir = std::env::temp_dir().join(format!("coercive-cli-switching-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let case = coarse_pad(&dir);
    let out_dir = dir.join("out");
    let out = Command::new(env!("CARGO_BIN_EXE_coercive"))
        .args(["solve", "--out"])
        .arg(&out_dir)
        .arg(&case)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    // Text mode prints the report with its cautions and the eddy-current note.
    let text = String::from_utf8_lossy(&out.stdout);
    assert!(text.contains("Safety (switchable magnets)"));
    assert!(text.contains("capacitor"));
    assert!(text.contains("skin depth"));
    // The same report as JSON in the output folder.
    let sw: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out_dir.join("switching.json")).unwrap())
            .unwrap();
    let off = sw["on_to_off"]["ampere_turns"].as_f64().unwrap();
    let on = sw["off_to_on"]["ampere_turns"].as_f64().unwrap();
    assert!(off < 0.0 && on > 0.0, "{off} {on}");
    let force_on = sw["force_on"][0]["eggshell_n"].as_f64().unwrap();
    let force_off = sw["force_off"][0]["eggshell_n"].as_f64().unwrap();
    // The sweep reports the force on the plate along +y (the pad closes the gap upwards):
    // attraction is negative there, and the holding force its opposite.
    assert!(-force_on > 10.0 * force_off.abs(), "{force_on} {force_off}");
    for file in [
        "switching.json",
        "switching_force.csv",
        "switching_partial.csv",
        "switching_force.svg",
        "switching_partial.svg",
        "switching_flux_on.svg",
        "switching_flux_off.svg",
        "switching_loop_switched.svg",
        "switching_loop_guarded.svg",
    ] {
        let text =
            std::fs::read_to_string(out_dir.join(file)).unwrap_or_else(|e| panic!("{file}: {e}"));
        assert!(text.len() > 100, "{file} is nearly empty");
        if file.ends_with(".svg") {
            assert!(text.trim_end().ends_with("</svg>"), "{file}");
        }
    }
    let csv = std::fs::read_to_string(out_dir.join("switching_force.csv")).unwrap();
    assert_eq!(csv.lines().count(), 3, "{csv}");
    assert!(csv.starts_with("gap (mm),ON holding force (N)"));
    std::fs::remove_dir_all(&dir).ok();
}

#[test]
fn a_reversed_off_sign_is_an_error_that_names_the_right_one() {
    let dir = std::env::temp_dir().join(format!("coercive-cli-offsign-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let case = coarse_pad(&dir);
    let text = std::fs::read_to_string(&case)
        .unwrap()
        .replace("off_current_sign = -1", "off_current_sign = 1");
    std::fs::write(&case, text).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_coercive"))
        .arg("solve")
        .arg(&case)
        .output()
        .unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("off_current_sign") && err.contains("the OFF sign is -1"),
        "{err}"
    );
    std::fs::remove_dir_all(&dir).ok();
}
