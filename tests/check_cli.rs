//! `lacuna check` end to end: exit codes, every format, stdin, several errors.

use crate::support::{expect, lacuna, repo};
use serde_json::Value;

#[test]
fn the_issue_example_explains_the_vacancy() {
    let run = expect(
        &[
            "check",
            "--host",
            "ZrO2",
            "--reaction",
            "Y2O3 -> 2Y_Zr' + 3O_O + V_O.",
        ],
        None,
        1,
    );
    let expected = "\
error[B302]: charge does not balance: left 0, right −1
 --> <inline>:1:25
  |
1 | Y2O3 -> 2Y_Zr' + 3O_O + V_O.
  |                         ^^^^ an oxygen vacancy with all its electrons released is V_O••
  = help: with V_O•• the charges balance
  balance            left    right
  mass Y                2        2  ✓
  mass O                3        3  ✓
  charge                0       −1  ✗
  sites                             ✓  net Zr +2, O +4; host Zr : O = 1 : 2

1 reaction in 1 source: 0 pass, 1 fail (1 error)
";
    assert_eq!(run.stdout, expected);
    assert_eq!(run.stderr, "");
}

#[test]
fn exit_codes() {
    expect(
        &[
            "check",
            "--host",
            "ZrO2",
            "-r",
            "Y2O3 -> 2Y_Zr' + 3O_O + V_O..",
        ],
        None,
        0,
    );
    expect(
        &["check", "--host", "ZrO2", "-r", "Y2O3 -> 2Y_Zr' + 3O_O"],
        None,
        1,
    );
    expect(&["check"], None, 2);
    expect(&["check", "--host", "Qq2", "-r", "nil -> e' + h."], None, 2);
    expect(&["check", "--format", "xml", "-r", "x"], None, 2);
    let run = expect(&["check", "/no/such/file.kvr"], None, 2);
    assert!(
        run.stderr.contains("cannot read /no/such/file.kvr"),
        "{}",
        run.stderr
    );
}

#[test]
fn stdin_and_several_errors_in_one_file() {
    let text =
        "host ZrO2\nY2O3 -> 2Y_Zr' + 3O_O + V_O..\nO_O -> V_O.' + 2e'\nQq -> x\nnil -> e' + h.\n";
    let run = expect(&["check", "-", "--format", "gnu"], Some(text.as_bytes()), 1);
    let lines: Vec<&str> = run.stdout.lines().collect();
    assert_eq!(lines.len(), 3, "{}", run.stdout);
    assert!(
        lines[0].starts_with(
            "<stdin>:3:11: error: positive and negative marks mixed in one charge [P106]"
        ),
        "{}",
        lines[0]
    );
    assert!(
        lines[1].starts_with("<stdin>:4:1: error: `Qq` is not an element symbol [P102]"),
        "{}",
        lines[1]
    );
    assert!(
        lines[2].starts_with("<stdin>:4:7: error: `x` is not a species, compound or `nil` [P101]"),
        "{}",
        lines[2]
    );
}

#[test]
fn json_keeps_its_contract() {
    let text = "host ZrO2\nY2O3 -> 2Y_Zr' + 3O_O + V_O.\nO_O -> V_O.' + 2e'\n";
    let run = expect(
        &["check", "-", "--format", "json"],
        Some(text.as_bytes()),
        1,
    );
    let json: Value = serde_json::from_str(&run.stdout).expect("valid JSON");
    let reactions = json["reactions"].as_array().expect("reactions array");
    assert_eq!(reactions.len(), 2);
    let first = &reactions[0];
    assert_eq!(first["source"], "<stdin>");
    assert_eq!(first["line"], 2);
    assert_eq!(first["text"], "Y2O3 -> 2Y_Zr' + 3O_O + V_O.");
    assert_eq!(first["ok"], false);
    assert_eq!(
        first["balance"],
        serde_json::json!({"mass": true, "charge": false, "site": true})
    );
    let d = &first["diagnostics"][0];
    assert_eq!(d["severity"], "error");
    assert_eq!(d["code"], "B302");
    assert_eq!(d["line"], 2);
    assert_eq!(d["column"], 25);
    assert!(
        d["message"]
            .as_str()
            .is_some_and(|m| m.contains("left 0, right −1"))
    );
    // A reaction that did not parse has no balance.
    assert_eq!(reactions[1]["balance"], Value::Null);
    assert_eq!(json["summary"]["reactions"], 2);
    assert_eq!(json["summary"]["failed"], 2);
}

#[test]
fn sarif_has_the_required_fields() {
    let run = expect(
        &["check", "--format", "sarif", &repo("examples/notebook.kvr")],
        None,
        1,
    );
    let sarif: Value = serde_json::from_str(&run.stdout).expect("valid JSON");
    assert_eq!(sarif["version"], "2.1.0");
    assert!(
        sarif["$schema"]
            .as_str()
            .is_some_and(|s| s.contains("sarif"))
    );
    let run0 = &sarif["runs"][0];
    assert_eq!(run0["tool"]["driver"]["name"], "lacuna");
    assert_eq!(run0["columnKind"], "unicodeCodePoints");
    let rules = run0["tool"]["driver"]["rules"].as_array().expect("rules");
    assert!(
        rules
            .iter()
            .any(|r| r["id"] == "B302" && r["fullDescription"]["text"].is_string())
    );
    let results = run0["results"].as_array().expect("results");
    assert!(!results.is_empty());
    for r in results {
        assert!(
            r["ruleId"].is_string() && r["level"].is_string() && r["message"]["text"].is_string()
        );
        let region = &r["locations"][0]["physicalLocation"]["region"];
        assert!(region["startLine"].as_u64().is_some_and(|l| l > 0));
        assert!(region["startColumn"].as_u64().is_some_and(|c| c > 0));
        let rule_index = r["ruleIndex"].as_u64().expect("ruleIndex") as usize;
        assert_eq!(rules[rule_index]["id"], r["ruleId"]);
    }
}

#[test]
fn invalid_utf8_is_reported_and_the_rest_is_checked() {
    let mut bytes = b"host ZrO2\nO_O -> V_O.. + 2e' + 1/2 O2(g)\n".to_vec();
    bytes.extend_from_slice(b"Y2O3 -> 2Y_Zr' \xff+ 3O_O + V_O..\n");
    bytes.extend_from_slice(b"nil -> e' + h.\n");
    let run = expect(&["check", "-", "--format", "gnu"], Some(&bytes), 1);
    assert!(
        run.stdout
            .contains("<stdin>:3:16: error: line 3 is not valid UTF-8"),
        "{}",
        run.stdout
    );
    let json = expect(&["check", "-", "--format", "json"], Some(&bytes), 1);
    let value: Value = serde_json::from_str(&json.stdout).expect("valid JSON");
    assert_eq!(value["summary"]["reactions"], 2);
}

#[test]
fn reactions_before_any_host_say_so() {
    let run = expect(
        &["check", "-"],
        Some(b"O_O -> V_O.. + 2e' + 1/2 O2(g)\n"),
        1,
    );
    assert!(
        run.stdout.contains("error[H203]: no host declared"),
        "{}",
        run.stdout
    );
    let run = expect(
        &["check", "-"],
        Some(b"host Fe3O4\nO_O -> V_O.. + 2e' + 1/2 O2(g)\n"),
        1,
    );
    assert!(run.stdout.contains("error[H202]"), "{}", run.stdout);
    assert!(
        run.stdout
            .contains("the host declaration on line 1 has errors"),
        "{}",
        run.stdout
    );
}

#[test]
fn colour_is_off_without_a_terminal_and_on_when_asked() {
    let args = [
        "check",
        "--host",
        "ZrO2",
        "-r",
        "Y2O3 -> 2Y_Zr' + 3O_O + V_O.",
    ];
    assert!(!lacuna(&args, None).stdout.contains('\u{1b}'));
    let mut always = args.to_vec();
    always.extend(["--color", "always"]);
    assert!(lacuna(&always, None).stdout.contains('\u{1b}'));
}

#[test]
fn quiet_and_verbose() {
    let file = repo("examples/notebook.kvr");
    let quiet = expect(&["check", "-q", &file], None, 1);
    assert_eq!(quiet.stdout.lines().count(), 1, "{}", quiet.stdout);
    let verbose = expect(&["check", "-v", &file], None, 1);
    assert!(verbose.stdout.contains("ok "), "{}", verbose.stdout);
}

#[test]
fn latex_pasted_from_a_manuscript_is_checked_with_its_own_columns() {
    // source: IUPAC Red Book 2005, IR-11.4 notation, typeset as manuscripts do (common practice).
    let text = r"\mathrm{Y_2O_3} \xrightarrow{\mathrm{ZrO_2}} 2\,\mathrm{Y}_{\mathrm{Zr}}^{\prime} + 3\,\mathrm{O}_{\mathrm{O}}^{\times} + V_{\mathrm{O}}^{\bullet}";
    let run = expect(
        &["check", "--host", "ZrO2", "--format", "gnu", "-r", text],
        None,
        1,
    );
    let column = text.find("V_{").expect("vacancy") + 1;
    assert!(
        run.stdout.starts_with(&format!(
            "<inline>:1:{column}: error: charge does not balance"
        )),
        "{}",
        run.stdout
    );
    let fixed = text.replace(r"^{\bullet}", r"^{\bullet\bullet}");
    expect(&["check", "--host", "ZrO2", "-r", &fixed], None, 0);
    let run = expect(
        &[
            "check",
            "--host",
            "ZrO2",
            "--format",
            "gnu",
            "-r",
            r"\mathrm{O}_{\mathrm{O}} \rightarrow \frob{V}",
        ],
        None,
        1,
    );
    assert!(run.stdout.contains("[T801]"), "{}", run.stdout);
}
