//! Switching the switchable magnet pad OFF and ON with a coil pulse: the main job.
//!
//! Reads `meshes/switchable_pad.toml` (a planar section, 50 mm deep: two steel poles, a
//! sintered NdFeB N42 block and a cast AlNiCo 5 block, both hysteretic and magnetised along
//! +x, a 100-turn coil around the AlNiCo, a steel plate) and runs its `[switching]` section:
//! the smallest coil pulses that turn the pad OFF and ON, what the recommended pulses leave,
//! the holding force versus gap ON and OFF, and partial switching. Writes the tables and
//! charts into the output directory (first argument, default `./coercive-out`).
//!
//! Run: `cargo run --release --example switching [-- OUTPUT_DIR]`.

use std::path::PathBuf;
use std::time::Instant;

use coercive::case::Case;
use coercive::switching::{holding_force_n, run_case, write_outputs};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let out: PathBuf = std::env::args_os()
        .nth(1)
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from("coercive-out"));
    let case = Case::from_file(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/meshes/switchable_pad.toml"
    ))?;
    let started = Instant::now();
    let report = run_case(&case)?;
    let seconds = started.elapsed().as_secs_f64();
    println!("{report}");
    let on = holding_force_n(&report.force_on[0]);
    let off = holding_force_n(&report.force_off[0]);
    println!(
        "\nAt the smallest gap the pad holds {on:.0} N ON and {off:.1} N OFF (ratio {:.0}); \
         study in {seconds:.1} s.",
        on / off
    );
    let files = write_outputs(&report, &out, case.title().unwrap_or("switching"))?;
    println!("Wrote {} files to {}", files.len(), out.display());
    Ok(())
}
