//! Throughput of the balancer and of `dope`, printed as rates.
//!
//! Run with `cargo bench --bench balance`. Targets: at least 100,000
//! balanced reactions per second; `dope` for 50 dopants in 10 hosts in
//! under a second. Wall-clock numbers on a shared machine are noisy; the
//! median of several rounds is reported. Lines starting with `bench:` are
//! read by `tests/peers/compare.sh`.

use lacuna::balance::{Options, Status, balance};
use lacuna::base::elements;
use lacuna::generate::dope::{DopeOptions, mechanisms, parse_dopant};
use lacuna::generate::native::native_reactions;
use lacuna::host::Host;
use lacuna::notation::parse_reaction;
use std::hint::black_box;
use std::time::{Duration, Instant};

/// Typical reactions, species only: the balancer finds every coefficient.
/// The same file is balanced by the sympy peer (`tests/peers/balance_sympy.py`).
const REACTIONS: &str = include_str!("../peers/balance.kvr");

/// (host, reaction) pairs of a reaction file: `host` lines set the host of
/// the reactions below them; comments and blank lines are skipped.
fn reactions(text: &str) -> Vec<(&str, &str)> {
    let mut host = "";
    let mut out = Vec::new();
    for line in text.lines().map(str::trim) {
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        match line.strip_prefix("host ") {
            Some(h) => host = h.trim(),
            None => out.push((host, line)),
        }
    }
    out
}

const HOSTS: &[&str] = &[
    "ZrO2", "CeO2", "TiO2", "MgO", "NiO", "Al2O3", "BaTiO3", "SrTiO3", "MgAl2O4", "KCl",
];

/// The median time of `rounds` runs of `f`, and its last value.
fn median_of<T>(rounds: usize, mut f: impl FnMut() -> T) -> (Duration, T) {
    let mut times = Vec::with_capacity(rounds);
    let mut last = None;
    for _ in 0..rounds {
        let start = Instant::now();
        let value = f();
        times.push(start.elapsed());
        last = Some(value);
    }
    times.sort();
    (times[times.len() / 2], last.expect("at least one round"))
}

fn main() {
    let parsed: Vec<(Host, lacuna::notation::Reaction)> = reactions(REACTIONS)
        .into_iter()
        .map(|(h, r)| {
            let host = Host::from_spec(h).expect("host");
            let (reaction, _) = parse_reaction(r, 0..r.len());
            (host, reaction.expect("reaction"))
        })
        .collect();

    // 1. Balancing throughput.
    let per_round = 20_000;
    let (time, unique) = median_of(7, || {
        let mut unique = 0usize;
        for i in 0..per_round {
            let (host, reaction) = &parsed[i % parsed.len()];
            let outcome = balance(black_box(reaction), Some(host), Options::default());
            unique += usize::from(outcome.status == Status::Unique);
        }
        unique
    });
    assert_eq!(
        unique, per_round,
        "every benchmark reaction balances uniquely"
    );
    let rate = per_round as f64 / time.as_secs_f64();
    println!(
        "balance: {per_round} reactions in {:.1} ms = {:.0} balanced reactions/s (target >= 100000) {}",
        time.as_secs_f64() * 1e3,
        rate,
        if rate >= 100_000.0 { "ok" } else { "SLOW" }
    );
    println!(
        "bench: balance.ns_per_reaction = {:.1}",
        time.as_secs_f64() * 1e9 / per_round as f64
    );

    // 2. dope for 50 dopants x 10 hosts.
    let hosts: Vec<Host> = HOSTS
        .iter()
        .map(|h| Host::from_spec(h).expect("host"))
        .collect();
    let dopants: Vec<String> = elements::all()
        .iter()
        .filter(|e| e.electronegativity < 2.2 && e.symbol != "H")
        .filter_map(|e| {
            e.common_states
                .iter()
                .find(|s| **s > 0)
                .map(|s| format!("{}+{s}", e.symbol))
        })
        .take(50)
        .collect();
    assert_eq!(dopants.len(), 50);
    let (time, count) = median_of(3, || {
        let mut count = 0usize;
        for host in &hosts {
            for dopant in &dopants {
                if let Ok(d) = parse_dopant(dopant, host) {
                    if let Ok(report) = mechanisms(host, &d, &DopeOptions::default()) {
                        count += report.mechanisms.len();
                    }
                }
            }
        }
        count
    });
    println!(
        "dope: 50 dopants x 10 hosts in {:.1} ms, {count} mechanisms (target < 1000 ms) {}",
        time.as_secs_f64() * 1e3,
        if time.as_secs_f64() < 1.0 {
            "ok"
        } else {
            "SLOW"
        }
    );
    println!("bench: dope.ms_500_pairs = {:.2}", time.as_secs_f64() * 1e3);

    // 3. The native catalogue of the ten hosts.
    let (time, count) = median_of(5, || {
        hosts
            .iter()
            .map(|h| native_reactions(h).len())
            .sum::<usize>()
    });
    println!(
        "native: 10 hosts in {:.2} ms, {count} reactions",
        time.as_secs_f64() * 1e3
    );
    println!(
        "bench: native.ms_10_hosts = {:.3}",
        time.as_secs_f64() * 1e3
    );
}
