//! Throughput and memory of `check` on a generated 1,000,000-line reaction
//! file, with human output, checked as `lacuna check FILE` checks it (lines
//! prepared on every core). Run with `cargo bench --bench check`.
//!
//! Floors (issue: core): at least 1,000,000 reactions per second on one core,
//! and peak memory independent of file length (under 64 MB for the million
//! lines). This prints what it measured; it asserts nothing about time.

use lacuna::file::runner::Runner;

use lacuna::check::rules::{RuleLevel, RuleLevels};
use lacuna::report::{Palette, human::HumanSink};
use std::fs::File;
use std::io::{BufRead, BufReader, BufWriter, Write};
use std::time::Instant;

/// The allocator of the `lacuna` binary, so that the figures are the CLI's.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

/// Reactions of the generated file: mostly balanced, one in eight with a slip.
const LINES: &[&str] = &[
    "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
    "O_O -> V_O.. + 2e' + 1/2 O2(g)",
    "nil -> V_Zr'''' + 2V_O..",
    "CaO -> Ca_Zr'' + O_O + V_O..",
    "nil -> e' + h.",
    "Zr_Zr -> Zr_i.... + V_Zr''''",
    "O_O -> O_i'' + V_O..",
    "Y2O3 -> 2Y_Zr' + 3O_O + V_O.",
];

fn peak_rss_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

fn generate(path: &std::path::Path, lines: usize) -> std::io::Result<()> {
    let mut out = BufWriter::new(File::create(path)?);
    writeln!(out, "host ZrO2")?;
    for i in 0..lines {
        writeln!(out, "r{i}: {}", LINES[i % LINES.len()])?;
    }
    out.flush()
}

fn main() -> std::io::Result<()> {
    let lines = std::env::var("LACUNA_BENCH_LINES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(1_000_000usize);
    let dir = std::env::temp_dir().join(format!("lacuna-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir)?;
    let path = dir.join("million.kvr");
    generate(&path, lines)?;
    let size = std::fs::metadata(&path)?.len();

    // The physical floor: reading the lines and nothing else.
    let start = Instant::now();
    let mut count = 0usize;
    let mut reader = BufReader::with_capacity(1 << 16, File::open(&path)?);
    let mut buffer = Vec::new();
    while reader.read_until(b'\n', &mut buffer)? > 0 {
        count += 1;
        buffer.clear();
    }
    let scan = start.elapsed();

    let before = peak_rss_kib();
    let start = Instant::now();
    let mut sink = HumanSink::new(std::io::sink(), Palette::PLAIN);
    // The generated file repeats eight reactions, so the repeated-reaction
    // rule would flag nearly every line; it still runs, its reports are dropped.
    let mut levels = RuleLevels::default();
    levels
        .set("repeated-reaction", RuleLevel::Allow)
        .map_err(std::io::Error::other)?;
    let mut checker = Runner::new(None, &mut sink).with_levels(levels);
    // As `lacuna check FILE` does: the lines are prepared on every core.
    checker.check_reader_parallel(
        "million.kvr",
        BufReader::with_capacity(1 << 16, File::open(&path)?),
    )?;
    let summary = checker.finish()?;
    let elapsed = start.elapsed();
    let after = peak_rss_kib();
    std::fs::remove_dir_all(&dir)?;

    let rate = summary.reactions as f64 / elapsed.as_secs_f64();
    println!(
        "check: {} reactions ({} lines, {:.1} MB) in {:.3} s",
        summary.reactions,
        count,
        size as f64 / 1e6,
        elapsed.as_secs_f64()
    );
    println!(
        "check: {rate:.0} reactions/s (floor 1,000,000), {} failed as generated",
        summary.failed
    );
    println!(
        "line scan alone: {:.3} s; check / scan = {:.1}",
        scan.as_secs_f64(),
        elapsed.as_secs_f64() / scan.as_secs_f64()
    );
    println!(
        "bench: check.ns_per_reaction = {:.1}",
        elapsed.as_secs_f64() * 1e9 / summary.reactions.max(1) as f64
    );
    match (before, after) {
        (Some(b), Some(a)) => println!(
            "peak resident memory: {:.1} MB before the check, {:.1} MB after (floor < 64 MB)",
            b as f64 / 1024.0,
            a as f64 / 1024.0
        ),
        _ => println!("peak resident memory: not available on this platform"),
    }
    Ok(())
}
