//! `check` over a folder of 10,000 files of 100 reactions each, through the
//! real binary (parallel across cores). Run with `cargo bench --bench folder`.
//! Floor (issue: reaction files in CI): under 2 s on a two-core machine.

use std::io::Write;
use std::time::Instant;

const REACTIONS: &[&str] = &[
    "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
    "O_O -> V_O.. + 2e' + 1/2 O2(g)",
    "nil -> V_Zr'''' + 2V_O..",
    "CaO -> Ca_Zr'' + O_O + V_O..",
    "nil -> e' + h.",
    "Zr_Zr -> Zr_i.... + V_Zr''''",
    "O_O -> O_i'' + V_O..",
    "Sc2O3 -> 2Sc_Zr' + 3O_O + V_O..",
];

fn main() -> std::io::Result<()> {
    let files: usize = std::env::var("LACUNA_BENCH_FILES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(10_000);
    let dir = std::env::temp_dir().join(format!("lacuna-folder-bench-{}", std::process::id()));
    for f in 0..files {
        let sub = dir.join(format!("group{:02}", f % 50));
        std::fs::create_dir_all(&sub)?;
        let mut out = std::io::BufWriter::new(std::fs::File::create(
            sub.join(format!("notebook{f:05}.kvr")),
        )?);
        writeln!(out, "host ZrO2")?;
        for r in 0..100 {
            // Distinct labels; the same few reactions repeat, so the repeat
            // rule is switched off below to time the checks, not the warnings.
            writeln!(out, "r{r}: {}", REACTIONS[r % REACTIONS.len()])?;
        }
    }
    let start = Instant::now();
    let output = std::process::Command::new(env!("CARGO_BIN_EXE_lacuna"))
        .args([
            "check",
            "--quiet",
            "--allow",
            "repeated-reaction",
            dir.to_str().unwrap_or("."),
        ])
        .output()?;
    let elapsed = start.elapsed();
    std::fs::remove_dir_all(&dir)?;
    println!(
        "folder: {} ({} files x 100 reactions) in {:.2} s (floor 2 s)",
        String::from_utf8_lossy(&output.stdout).trim(),
        files,
        elapsed.as_secs_f64()
    );
    Ok(())
}
