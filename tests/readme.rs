//! README.md shows the quick-start program verbatim, and its commands are the ones CI runs.

use std::path::Path;

fn read(rel: &str) -> String {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join(rel);
    std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The lines of `examples/quickstart.rs` between the README markers, de-indented by 4.
fn quickstart_body() -> Vec<String> {
    let source = read("examples/quickstart.rs");
    let begin = source.find("// README-BEGIN").expect("README-BEGIN marker");
    let end = source.find("// README-END").expect("README-END marker");
    source[begin..end]
        .lines()
        .skip(1)
        .map(|l| l.strip_prefix("    ").unwrap_or(l).trim_end().to_string())
        .collect()
}

#[test]
fn readme_shows_the_quickstart_example_verbatim() {
    let readme = read("README.md");
    let body = quickstart_body().join("\n");
    assert!(
        readme.contains(&body),
        "README.md's Rust example differs from examples/quickstart.rs; paste:\n{body}"
    );
}

#[test]
fn ci_runs_the_test_command_written_in_readme() {
    let readme = read("README.md");
    let ci = read(".ci/run");
    let command = "cargo test --workspace --release";
    assert!(readme.contains(command), "README.md must state `{command}`");
    assert!(
        ci.lines().any(|l| l.trim() == command),
        ".ci/run must run `{command}`"
    );
}
