//! `coercive solve CASE.toml --json` with a `[sweep]` section: a magnet moved towards a steel
//! armature, the force on the armature by three methods, and bad sweep input.

use std::path::{Path, PathBuf};
use std::process::Command;

/// A planar magnet (20 x 5 mm, along +y, linear NdFeB-like) in the rigid group `holder`, under
/// a linear steel armature (40 x 5 mm) drawn 1 mm above it, in a 200 mm box with the potential
/// fixed on its edge. `sweep` is appended as the `[sweep]` section.
fn write_case(dir: &Path, file: &str, sweep: &str) -> PathBuf {
    let text = format!(
        r#"title = "magnet and armature"
unit = "mm"
formulation = "planar"
depth = 10.0
element_order = 2

[mesh]
max_size = 20.0
growth = 0.4
elements_across_gap = 2
min_angle = 25.0

[[geometry.rectangles]]
min = [-100, -100]
max = [100, 100]
name = "outer"

[[geometry.rectangles]]
min = [-10, -5]
max = [10, 0]
name = "magnet_edge"

[[geometry.rectangles]]
min = [-20, 1]
max = [20, 6]
name = "armature_edge"

[regions.air]
at = [0, -50]
material = "air"

[regions.magnet]
at = [0, -2.5]
max_size = 2.0
material = "block"

[regions.armature]
at = [0, 3.5]
max_size = 2.0
material = "soft"

[geometry.rigid_groups]
holder = ["magnet"]

[[material]]
name = "block"
remanence = 1.2
recoil_permeability = 1.05
direction_deg = 90

[[material]]
name = "soft"
relative_permeability = 1000

[[boundary]]
kind = "fixed"
curve = "outer"

[sweep]
{sweep}
"#
    );
    let path = dir.join(file);
    std::fs::write(&path, text).unwrap();
    path
}

fn temp_dir() -> PathBuf {
    let dir = std::env::temp_dir().join(format!("coercive-cli-sweep-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

#[test]
fn sweep_reports_agreeing_forces_that_grow_as_the_gap_closes() {
    let dir = temp_dir();
    let case = write_case(
        &dir,
        "good.toml",
        "group = \"holder\"\ndirection = [0, 2]\ngaps = [2.0, 1.0, 0.5]\ndrawn_gap = 1.0\n\
         body = [\"armature\"]",
    );
    let out = Command::new(env!("CARGO_BIN_EXE_coercive"))
        .args(["solve", "--json"])
        .arg(&case)
        .output()
        .unwrap();
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    let v: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert!(v["unknowns"].as_u64().unwrap() > 100);
    let sweep = &v["sweep"];
    assert_eq!(sweep["parameter"], "gap");
    assert_eq!(sweep["direction"][1].as_f64().unwrap(), 1.0, "normalised");
    assert!(v["cautions"].as_str().unwrap().contains("Pinch hazard"));
    let rows = sweep["rows"].as_array().unwrap();
    assert_eq!(rows.len(), 3);
    let f = |r: &serde_json::Value, k: &str| r[k].as_f64().unwrap();
    let mut last = 0.0;
    for (r, gap_m, offset_m) in rows
        .iter()
        .zip([2e-3, 1e-3, 0.5e-3])
        .zip([-1e-3, 0.0, 0.5e-3])
        .map(|((r, g), o)| (r, g, o))
    {
        assert!((f(r, "value_m") - gap_m).abs() < 1e-12);
        assert!((f(r, "offset_m") - offset_m).abs() < 1e-12);
        let (e, s, c) = (f(r, "eggshell_n"), f(r, "stress_n"), f(r, "coenergy_n"));
        // The armature is attracted towards the magnet, against the motion (+y): negative.
        // The eggshell (virtual work, Coulomb 1983), the Maxwell stress and the co-energy
        // difference are three routes to the same force (Henrotte et al. 2004): they must
        // agree within a few percent on this coarse P2 mesh (3 % here).
        assert!(e < 0.0 && s < 0.0 && c < 0.0, "{r}");
        for x in [s, c] {
            assert!((x / e - 1.0).abs() < 0.03, "{r}");
        }
        assert!(f(r, "spread") < 0.03, "{r}");
        let per_m = r["per_metre_n_per_m"][0].as_f64().unwrap();
        assert!(
            (per_m * 0.010 - e).abs() < 1e-9 * e.abs(),
            "N/m for a 10 mm depth"
        );
        // Attraction of steel by a magnet grows as the gap closes (common practice: the
        // holding force falls monotonically with the air gap).
        assert!(
            e.abs() > last * 1.05,
            "force {e} N at {gap_m} m, previous {last} N"
        );
        last = e.abs();
    }
}

#[test]
fn sweep_errors_name_the_bad_item_and_its_line() {
    let dir = temp_dir();
    for (file, sweep, expect) in [
        (
            "group.toml",
            "group = \"holdr\"\ndirection = [0, 1]\noffsets = [0]\nbody = [\"armature\"]",
            "unknown rigid group `holdr`",
        ),
        (
            "body.toml",
            "group = \"holder\"\ndirection = [0, 1]\noffsets = [0]\nbody = [\"armatur\"]",
            "unknown region `armatur`",
        ),
        (
            "direction.toml",
            "group = \"holder\"\ndirection = [0, 0]\noffsets = [0]\nbody = [\"armature\"]",
            "non-zero",
        ),
        (
            "both.toml",
            "group = \"holder\"\ndirection = [0, 1]\noffsets = [0]\ngaps = [1]\n\
             drawn_gap = 1\nbody = [\"armature\"]",
            "not both",
        ),
        (
            "drawn.toml",
            "group = \"holder\"\ndirection = [0, 1]\ngaps = [1]\nbody = [\"armature\"]",
            "drawn_gap",
        ),
    ] {
        let case = write_case(&dir, file, sweep);
        let out = Command::new(env!("CARGO_BIN_EXE_coercive"))
            .args(["solve"])
            .arg(&case)
            .output()
            .unwrap();
        assert!(!out.status.success(), "{file}");
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(err.contains(expect), "{file}: {err}");
        assert!(err.contains("line "), "{file}: {err}");
        assert!(!err.contains("panicked"), "{file}: {err}");
    }
}
