//! Numbers beyond the exact range (about 9.2e18) are located errors, never
//! wrapped numbers. Each case runs the real binary; a panic (exit 101) fails
//! in `support`. source: common practice (an i64 holds at most 2^63 − 1 =
//! 9223372036854775807, so two counts of 2^62 add up to one more than it).

use crate::support::expect;

const HALF: &str = "4611686018427387904"; // 2^62
const WRAPPED: &str = "-9223372036854775808"; // 2^63 wrapped to i64::MIN

fn no_wrapped_numbers(text: &str) {
    assert!(!text.contains(WRAPPED), "a wrapped number: {text}");
    assert!(!text.contains("up to −1"), "a wrapped sum: {text}");
    assert!(!text.contains("up to -1"), "a wrapped sum: {text}");
}

#[test]
fn site_counts_that_overflow_in_a_file() {
    let text = format!(
        "host Fe3O4 sites Fe:A +3 x{HALF}, Fe:B +3 x{HALF}, O -2 x4\nFe_{{Fe:A}} -> Fe_{{Fe:A}}\n"
    );
    let run = expect(&["check", "--format", "gnu", "-"], Some(text.as_bytes()), 1);
    no_wrapped_numbers(&run.stdout);
    // Line 1, column 18: the first Fe site declaration.
    let first = run.stdout.lines().next().unwrap_or_default();
    assert!(
        first.starts_with("<stdin>:1:18: error: the Fe site counts"),
        "{}",
        run.stdout
    );
    assert!(first.contains("[H201]"), "{first}");
    assert!(
        first.contains(&format!("{HALF} + {HALF}")),
        "the numbers are named: {first}"
    );
    assert!(first.contains("help:"), "a way forward: {first}");
}

#[test]
fn site_counts_that_overflow_on_the_command_line() {
    let host = format!("Fe3O4 sites Fe:A +3 x{HALF}, Fe:B +3 x{HALF}, O -2 x4");
    // A --host value that is not a usable host is a usage error (exit 2),
    // as for any other bad host.
    let run = expect(
        &["check", "--host", &host, "-r", "Fe_{Fe:A} -> Fe_{Fe:A}"],
        None,
        2,
    );
    no_wrapped_numbers(&run.stderr);
    no_wrapped_numbers(&run.stdout);
    assert!(run.stderr.contains("error[H201]"), "{}", run.stderr);
    assert!(run.stderr.contains(" --> --host:1:13"), "{}", run.stderr);
}

#[test]
fn associate_parts_that_overflow() {
    // Declared charge: the associate itself is pointed at (column 8).
    let text = format!(
        "host ZrO2\nO_O -> ({HALF}V_O.. {HALF}V_O..)'' + 1/2 O2(g)\nO_O -> ({HALF}V_O.. {HALF}V_O..) + 1/2 O2(g)\n"
    );
    let run = expect(&["check", "--format", "gnu", "-"], Some(text.as_bytes()), 1);
    no_wrapped_numbers(&run.stdout);
    let lines: Vec<&str> = run.stdout.lines().collect();
    assert!(
        lines.iter().any(|l| l.starts_with(
            "<stdin>:2:8: error: the charges of this associate's parts add up to more than"
        ) && l.contains("[P107]")),
        "{}",
        run.stdout
    );
    // No declared charge: the sums of the reaction leave the range at the associate.
    assert!(
        lines.iter().any(|l| l.starts_with(
            "<stdin>:3:8: error: the sums of this reaction grew beyond the exact range"
        ) && l.contains("[P107]")),
        "{}",
        run.stdout
    );
    // No balance verdict is drawn from sums that are not exact.
    assert!(!run.stdout.contains("B302"), "{}", run.stdout);
}

#[test]
fn no_repeat_found_in_a_wrapped_sum() {
    // Line 3's net electrons (−10^19) would wrap to line 2's +8446744073709551616.
    // The error points at the second `e'` term (column 26), where the sum leaves the range.
    let e = "5000000000000000000";
    let text = format!(
        "host ZrO2\nnil -> 8446744073709551616 e' + 8446744073709551616 h.\n{e} e' + {e} e' + {e} h. + {e} h. -> nil\n"
    );
    let run = expect(&["check", "--format", "gnu", "-"], Some(text.as_bytes()), 1);
    assert!(!run.stdout.contains("L502"), "{}", run.stdout);
    assert!(
        run.stdout.lines().any(|l| l
            .starts_with("<stdin>:3:26: error: the sums of this reaction grew")
            && l.contains("[P107]")),
        "{}",
        run.stdout
    );
}

#[test]
fn large_but_exact_coefficients_still_pass() {
    // 2^62 − 1 electrons and holes: every sum fits, so the reaction balances.
    let big = "4611686018427387903";
    let text = format!("host ZrO2\nnil -> {big} e' + {big} h.\n");
    let run = expect(&["check", "--format", "gnu", "-"], Some(text.as_bytes()), 0);
    no_wrapped_numbers(&run.stdout);
}
