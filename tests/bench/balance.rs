//! Throughput of the balancer and of `dope`, printed as rates.
//!
//! Run with `cargo bench --bench balance`. Targets: at least 100,000
//! balanced reactions per second; `dope` for 50 dopants in 10 hosts in
//! under a second. Wall-clock numbers on a shared machine are noisy; the
//! best of several rounds is reported.

use lacuna::balance::{Options, Status, balance};
use lacuna::dope::{DopeOptions, mechanisms, parse_dopant};
use lacuna::elements;
use lacuna::host::Host;
use lacuna::native::native_reactions;
use lacuna::notation::parse_reaction;
use std::hint::black_box;
use std::time::{Duration, Instant};

/// Typical reactions, species only: the balancer finds every coefficient.
const REACTIONS: &[(&str, &str)] = &[
    ("ZrO2", "Y2O3 -> Y_Zr' + O_O + V_O.."),
    ("ZrO2", "CaO -> Ca_Zr'' + O_O + V_O.."),
    ("TiO2", "Nb2O5 -> Nb_Ti. + O_O + e' + O2(g)"),
    ("TiO2", "Nb2O5 -> Nb_Ti. + V_Ti'''' + O_O"),
    (
        "BaTiO3",
        "La2O3 + TiO2 -> La_Ba. + Ti_Ti + O_O + e' + O2(g)",
    ),
    ("MgO", "Al2O3 -> Al_Mg. + V_Mg'' + O_O"),
    ("NiO", "Li2O + O2(g) -> Li_Ni' + O_O + h."),
    ("CeO2", "O_O -> V_O.. + e' + O2(g)"),
    ("BaZrO3", "H2O(g) + V_O.. + O_O -> OH_O."),
    ("KCl", "CaCl2 -> (Ca_K. V_K')x + Cl_Cl"),
];

const HOSTS: &[&str] = &[
    "ZrO2", "CeO2", "TiO2", "MgO", "NiO", "Al2O3", "BaTiO3", "SrTiO3", "MgAl2O4", "KCl",
];

fn best_of<T>(rounds: usize, mut f: impl FnMut() -> T) -> (Duration, T) {
    let mut best = Duration::MAX;
    let mut last = None;
    for _ in 0..rounds {
        let start = Instant::now();
        let value = f();
        best = best.min(start.elapsed());
        last = Some(value);
    }
    (best, last.expect("at least one round"))
}

fn main() {
    let parsed: Vec<(Host, lacuna::notation::Reaction)> = REACTIONS
        .iter()
        .map(|(h, r)| {
            let host = Host::from_spec(h).expect("host");
            let (reaction, _) = parse_reaction(r, 0..r.len());
            (host, reaction.expect("reaction"))
        })
        .collect();

    // 1. Balancing throughput.
    let per_round = 20_000;
    let (time, unique) = best_of(5, || {
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
    let (time, count) = best_of(3, || {
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

    // 3. The native catalogue of the ten hosts.
    let (time, count) = best_of(5, || {
        hosts
            .iter()
            .map(|h| native_reactions(h).len())
            .sum::<usize>()
    });
    println!(
        "native: 10 hosts in {:.2} ms, {count} reactions",
        time.as_secs_f64() * 1e3
    );
}
