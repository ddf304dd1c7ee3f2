//! Every `kvr` example in grammar/model.md reads as a model and solves, and
//! every example file in examples/ runs through `law` and `brouwer`.

use assert_cmd::Command;
use lacuna::model::{Model, Overrides, read};
use lacuna::solve::equilibrium::{log_grid, po2_sweep};

fn kvr_blocks(markdown: &str) -> Vec<String> {
    let mut blocks = Vec::new();
    let mut current: Option<String> = None;
    for line in markdown.lines() {
        match (&mut current, line.trim_start()) {
            (None, l) if l.starts_with("```kvr") => current = Some(String::new()),
            (Some(block), l) if l.starts_with("```") => {
                blocks.push(std::mem::take(block));
                current = None;
            }
            (Some(block), _) => {
                block.push_str(line);
                block.push('\n');
            }
            _ => {}
        }
    }
    blocks
}

#[test]
fn every_grammar_example_builds_and_solves() {
    let text = std::fs::read_to_string("grammar/model.md").expect("grammar/model.md");
    let blocks = kvr_blocks(&text);
    assert!(
        blocks.len() >= 4,
        "expected the model examples, found {}",
        blocks.len()
    );
    for block in blocks {
        let doc = read("grammar/model.md", &block, None);
        let model = Model::build(&doc, Overrides::default())
            .unwrap_or_else(|e| panic!("example does not build:\n{block}\n{e:#?}"));
        let t = model
            .temperature
            .expect("every example gives a temperature");
        let points = po2_sweep(
            &model,
            t,
            &log_grid(model.po2_range.0, model.po2_range.1, 8),
        )
        .expect("K known at the example's temperature");
        assert!(points.iter().all(|p| p.converged), "{block}");
    }
}

#[test]
fn every_example_file_runs() {
    let mut found = 0;
    for entry in std::fs::read_dir("examples").expect("examples/") {
        let path = entry.expect("entry").path();
        if path.extension().and_then(|e| e.to_str()) != Some("kvr") {
            continue;
        }
        // Only the model files; the notebook of slips is `check`'s demo.
        let text = std::fs::read_to_string(&path).expect("readable");
        if !text.lines().any(|l| l.starts_with("temperature ")) {
            continue;
        }
        found += 1;
        Command::cargo_bin("lacuna")
            .expect("binary")
            .args(["law", "--color", "never"])
            .arg(&path)
            .assert()
            .success();
        for format in ["table", "csv", "json", "svg"] {
            Command::cargo_bin("lacuna")
                .expect("binary")
                .args(["brouwer", "--color", "never", "--format", format])
                .arg(&path)
                .assert()
                .success();
        }
    }
    assert!(found > 0, "no example models in examples/");
}
